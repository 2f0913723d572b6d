"""Preparation sheets: what to weigh, which stock solutions to make, and in which order to add them.

For a recipe and a batch volume the sheet gives the mass of every component in the form on the
shelf (hydrate-aware: switching a hydrate keeps the moles), rounded for a laboratory balance, and
flags masses too small to weigh. With stocks, components are grouped by common practice (macro
salts, calcium, micro salts, iron chelate, vitamins, one stock per growth regulator), calcium is kept
apart from sulfate and phosphate, and each stock's concentration factor is the largest that keeps
every salt below a fraction of its solubility and the calcium ion pairs below their solubility
products. Everything here is plain data; the views format it.

One module per job:

- :mod:`.balance`: rounding for a balance, dilute sub-stocks for masses too small to weigh
- :mod:`.items`: the mass of each component per batch in the form on the shelf
- :mod:`.stocks`: the stock scheme (grouping, solubility and precipitation checks, factors)
- :mod:`.steps`: the order of addition, sterilisation and cautions
- :mod:`.sheet`: :class:`PrepSheet` and :func:`build_sheet`
- :mod:`.options`: ``KEY=VALUE`` options (forms, stock factors)

Exactness: every mass is carried unrounded; rounding happens only in :func:`format_mass`, so that
Σ over stocks (stock concentration × volume per batch) + direct weighings = the plan's mass per batch.
"""

from mediaplan.tasks.prep.balance import (
    BALANCE_RESOLUTION_G,
    MIN_PIPETTE_ML,
    WEIGH_VIA_STOCK_G,
    SubStock,
    format_mass,
    format_volume_ml,
    round_mass,
    substock_for,
)
from mediaplan.tasks.prep.items import HEAT_LABILE, Weighing, grams_per_litre, shelf_forms, weighings
from mediaplan.tasks.prep.options import parse_factors, parse_pairs
from mediaplan.tasks.prep.sheet import PrepSheet, build_sheet, sheet_to_dict
from mediaplan.tasks.prep.steps import (
    AUTOCLAVE_CAUTION,
    LOCAL_RULES,
    gel_note,
    ph_osmotic_note,
    preparation_steps,
)
from mediaplan.tasks.prep.stocks import (
    PGR_STOCK_MAX_G_PER_L,
    SOLUBILITY_MARGIN,
    STOCK_GROUPS,
    STOCK_VOLUMES_ML,
    Stock,
    StockItem,
    _check_stock,
    build_stocks,
    check_stock,
    solubility_fractions,
)

__all__ = [
    "AUTOCLAVE_CAUTION", "BALANCE_RESOLUTION_G", "HEAT_LABILE", "LOCAL_RULES", "MIN_PIPETTE_ML",
    "PGR_STOCK_MAX_G_PER_L", "SOLUBILITY_MARGIN", "STOCK_GROUPS", "STOCK_VOLUMES_ML", "WEIGH_VIA_STOCK_G",
    "PrepSheet", "Stock", "StockItem", "SubStock", "Weighing", "_check_stock", "build_sheet", "build_stocks",
    "check_stock", "format_mass", "format_volume_ml", "gel_note", "grams_per_litre", "parse_factors",
    "parse_pairs", "ph_osmotic_note", "preparation_steps", "round_mass", "shelf_forms", "sheet_to_dict",
    "solubility_fractions", "substock_for", "weighings",
]
