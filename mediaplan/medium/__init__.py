"""The medium: units at the edge, the catalog as the engine sees it, recipes, the compiled model and the
evaluation of one recipe (osmolality, water activity, potentials, freezing point, tonicity, warnings).

No files, no environment, no user interface: everything it needs is passed in.
"""
