"""mediaplan: water relations of plant culture media.

Layers (data flows one way): plan file -> Recipe -> evaluate() -> Evaluation -> views.
``mediaplan.thermo`` is the pure computation core (numpy only, SI units, no I/O).

The Python API (:mod:`mediaplan.api`) is reachable from here; its names are looked up on first use, so
``import mediaplan`` stays cheap (the command line imports it for ``__version__``)::

    import mediaplan as mp

    ev = mp.evaluate(mp.Recipe(base="ms1962").with_amount("sucrose", "30 g/L"))
    ev.osmotic_potential_mpa
"""

__version__ = "0.1.0"

# the same list as mediaplan.api.__all__ (tests/test_api.py checks it)
__all__ = [
    "Catalog", "Evaluation", "MediaplanError", "Plan", "PlasmolysisFit", "PrepSheet", "Recipe", "SeriesDesign",
    "Solution", "budget", "check_reading", "design_series", "evaluate", "fit_counts", "load_catalog", "load_plan",
    "prep_sheet", "solve_target", "sweep",
]


def __getattr__(name: str):
    """Resolve an API name on first use (PEP 562); any other name is a plain AttributeError, so that
    ``from mediaplan import cli`` still finds the subpackage."""
    if name in __all__:
        import importlib

        value = getattr(importlib.import_module("mediaplan.api"), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'mediaplan' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
