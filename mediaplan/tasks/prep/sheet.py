"""The preparation sheet: everything printed for one batch, as plain data.

:func:`build_sheet` puts together the rows to weigh (:mod:`.items`), the stock scheme
(:mod:`.stocks`) and the order of addition, sterilisation and cautions (:mod:`.steps`). The views
format the sheet; :meth:`PrepSheet.to_dict` is its JSON form.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.evaluate import tidy_volume_l
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import parse_volume
from mediaplan.tasks.prep.items import Weighing, shelf_forms, weighings
from mediaplan.tasks.prep.steps import cautions, preparation_steps, sterilisation
from mediaplan.tasks.prep.stocks import Stock, build_stocks

#: target pH when neither the caller nor the base medium gives one (common practice)
DEFAULT_PH = "5.7–5.8"


@dataclass
class PrepSheet:
    """Everything printed on a preparation sheet (plain data; the views format it).

    volume_l [L] of one batch; temperature_c [°C]; rows: one :class:`Weighing` per component (grams
    [g per batch], unrounded); stocks: the stock scheme (empty without one); steps: the order of
    addition, one sentence each; ph: target pH text; sterilisation and notes: sentences; cautions: a
    list of ``{"component", "name", "caution"}``; provenance: the catalog entries used (set by the caller).
    """

    title: str
    volume_l: float
    temperature_c: float
    base: str | None
    strength: float
    rows: list[Weighing]
    stocks: list[Stock]
    steps: list[str]
    ph: str
    sterilisation: list[str]
    cautions: list[dict]
    notes: list[str] = field(default_factory=list)
    provenance: dict | None = None

    def grams_per_batch(self) -> dict[str, float]:
        """The plan's mass per batch of each weighed component [g] (unrounded)."""
        return {r.id: r.grams for r in self.rows if r.weighed}

    def recombined(self) -> dict[str, float]:
        """Σ stocks (stock g/L × mL per batch) + direct weighings, per component [g] (for checks)."""
        out: dict[str, float] = {}
        for s in self.stocks:
            for it in s.items:
                out[it.id] = out.get(it.id, 0.0) + it.grams_per_litre * s.ml_per_batch / 1000.0
        for r in self.rows:
            if r.weighed and not r.route.startswith("stock:"):
                out[r.id] = out.get(r.id, 0.0) + r.grams
        return out

    def to_dict(self) -> dict:
        """The sheet as JSON-ready data (the ``mediaplan prep --json`` contract).

        Keys are the fields above, in that order, with units in their names or stated here:
        ``volume_l`` [L], ``temperature_c`` [°C]; each row has ``grams`` [g per batch, unrounded],
        ``millilitres`` [mL per batch] or null, ``route``, ``substock`` ({``grams``, ``volume_ml``,
        ``pipette_ml``} or null), then ``weigh`` (the rounded reading, e.g. ``"440.0 mg"``) and
        ``weigh_via_stock``; each stock has ``factor``, ``volume_ml`` [mL to make], ``ml_per_batch``
        [mL], ``items`` with ``grams_per_litre`` [g per L of stock], ``grams_in_stock`` [g] and
        ``solubility_fraction``. A non-finite number becomes null.
        """
        d = asdict(self)
        d["volume_l"] = tidy_volume_l(self.volume_l)
        d["rows"] = [r.to_dict() for r in self.rows]
        return _json_safe(d)


def _json_safe(x):
    """``x`` with every non-finite float replaced by None (JSON has no NaN or infinity)."""
    if isinstance(x, float):
        return x if math.isfinite(x) else None
    if isinstance(x, dict):
        return {k: _json_safe(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_json_safe(v) for v in x]
    return x


def sheet_to_dict(sheet: PrepSheet) -> dict:
    """Plain JSON-ready data of a sheet (rounded masses beside the exact ones): ``sheet.to_dict()``."""
    return sheet.to_dict()


def build_sheet(recipe: Recipe, catalog: Catalog, *, volume: str | None = None, stocks: bool = False,
                forms: dict[str, str] | None = None, factors: dict[str, float] | None = None,
                stock_volume: str | None = None, title: str | None = None, ph: str | None = None) -> PrepSheet:
    """The preparation sheet of ``recipe`` for a batch of ``volume`` (default: the recipe's volume).

    Parameters
    ----------
    volume : batch volume text, e.g. ``"2 L"``
    stocks : group components into stock solutions
    forms : component id -> id of the form on the shelf (same substance; moles kept)
    factors : stock key (macro, calcium, micro, iron, vitamins, or a growth regulator id) -> factor
    stock_volume : volume of each stock to make (default: about ten batches' worth, 100 mL to 1 L)
    ph : target pH text (default: the base medium's, else 5.7–5.8)
    """
    batch_l = parse_volume(volume or recipe.volume, field="batch_volume") * 1000.0
    stock_ml = parse_volume(stock_volume, field="stock_volume") * 1e6 if stock_volume else None
    lines = recipe.lines(catalog)
    if not lines:
        raise MediaplanError("the recipe has no components", hint="add components or a base medium first")
    shelf = shelf_forms(catalog, lines, forms)
    rows, components = weighings(lines, catalog, batch_l, recipe.temperature_k, shelf)
    stock_list: list[Stock] = []
    notes: list[str] = []
    if stocks:
        stock_list, rows, notes = build_stocks(rows, components, batch_l * 1000.0, factors, stock_ml)
    elif factors:
        raise AmountError("a stock factor needs a stock scheme", field="stock_factor", hint="ask for stock solutions too")
    ph_text = ph or _base_ph(recipe, catalog) or DEFAULT_PH
    return PrepSheet(
        title=title or "Medium", volume_l=batch_l, temperature_c=recipe.temperature_k - 273.15,
        base=recipe.base, strength=recipe.strength, rows=rows, stocks=stock_list,
        steps=preparation_steps(rows, stock_list, batch_l, ph_text), ph=ph_text,
        sterilisation=sterilisation(rows, stock_list), cautions=cautions(rows), notes=notes,
    )


def _base_ph(recipe: Recipe, catalog: Catalog) -> str | None:
    """The pH the base medium's publication gives, or None."""
    medium = catalog.medium(recipe.base) if recipe.base else None
    return medium.ph if medium and medium.ph else None
