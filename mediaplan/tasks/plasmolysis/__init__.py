"""Incipient plasmolysis: design a graded osmoticum series, then fit the counts.

Modules: :mod:`.design` (levels evenly spaced in water potential, by weight or from a stock),
:mod:`.counts` (observed counts and their checks), :mod:`.glm` (binomial GLM by IRLS) and :mod:`.fit`
(the incipient-plasmolysis point with its Fieller interval). Counts files (CSV) are read by
:mod:`mediaplan.files.counts`.
"""

from mediaplan.tasks.plasmolysis.counts import POTENTIAL_COLUMN, Counts, check_counts, counts_from_series
from mediaplan.tasks.plasmolysis.design import (
    SeriesDesign,
    SeriesLevel,
    StockInfo,
    describe_background,
    design_series,
    potential_of_amounts,
    potentials_around,
    potentials_between,
)
from mediaplan.tasks.plasmolysis.fit import PlasmolysisFit, fieller_interval, fit_counts
from mediaplan.tasks.plasmolysis.glm import LINKS, GLMResult, fit_glm, inverse_link, link_fn, separation

__all__ = [
    "LINKS", "POTENTIAL_COLUMN", "Counts", "GLMResult", "PlasmolysisFit", "SeriesDesign", "SeriesLevel", "StockInfo",
    "check_counts", "counts_from_series", "describe_background", "design_series", "fieller_interval", "fit_counts",
    "fit_glm", "inverse_link", "link_fn", "potential_of_amounts", "potentials_around", "potentials_between",
    "separation",
]
