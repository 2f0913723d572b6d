"""Incipient plasmolysis: design a graded osmoticum series, then fit the counts.

Modules: :mod:`.design` (levels evenly spaced in water potential, by weight or from a stock),
:mod:`.counts` (observed counts and their checks), :mod:`.glm` (binomial GLM by IRLS) and :mod:`.fit`
(the incipient-plasmolysis point with its Fieller interval). Counts files (CSV) are read by
:mod:`mediaplan.files.counts`.
"""

#: where each public name lives; resolved on first use (PEP 562), so that reading a plan's [series] table
#: (counts only) does not import the designer, the GLM and the fit
_HOME = {
    "POTENTIAL_COLUMN": "counts", "Counts": "counts", "check_counts": "counts", "counts_from_series": "counts",
    "SeriesDesign": "design", "SeriesLevel": "design", "StockInfo": "design", "describe_background": "design",
    "design_series": "design", "potential_of_amounts": "design", "potentials_around": "design",
    "potentials_between": "design",
    "PlasmolysisFit": "fit", "fieller_interval": "fit", "fit_counts": "fit",
    "LINKS": "glm", "GLMResult": "glm", "fit_glm": "glm", "inverse_link": "glm", "link_fn": "glm", "separation": "glm",
}

__all__ = [
    "LINKS", "POTENTIAL_COLUMN", "Counts", "GLMResult", "PlasmolysisFit", "SeriesDesign", "SeriesLevel", "StockInfo",
    "check_counts", "counts_from_series", "describe_background", "design_series", "fieller_interval", "fit_counts",
    "fit_glm", "inverse_link", "link_fn", "potential_of_amounts", "potentials_around", "potentials_between",
    "separation",
]


def __getattr__(name: str):
    home = _HOME.get(name)
    if home is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(f"{__name__}.{home}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
