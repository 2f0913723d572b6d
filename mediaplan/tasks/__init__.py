"""What users ask of a medium: reach a target (``solve``), project it through autoclaving and culture
(``projection``), compare it with the cells (``cells``), design and fit a plasmolysis series
(``plasmolysis``) and weigh it out (``prep``). Pure functions over the medium layer; no files, no UI.
"""
