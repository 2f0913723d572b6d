"""The computation core: pure functions on SI floats and numpy arrays.

No file or network I/O, no user interface, no pint. Parameters arrive as plain dataclasses
(:mod:`mediaplan.thermo.params`), built by the catalog layer from the YAML data files.
"""
