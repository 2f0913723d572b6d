"""The bundled catalog. This file only makes the folder the package data ``mediaplan._catalog`` of an install
(editable or wheel), found with importlib.resources; the catalog itself is the YAML beside it."""
