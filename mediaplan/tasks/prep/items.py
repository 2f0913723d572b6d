"""What to weigh: the mass of every component per batch, in the form on the shelf.

Switching a hydrate or another form of the same substance keeps the moles. Masses are unrounded
[g per batch]; masses too small to weigh get a dilute sub-stock.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, replace

from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.recipe import Line
from mediaplan.tasks.prep.balance import (
    WEIGH_VIA_STOCK_G,
    SubStock,
    format_mass,
    format_volume_ml,
    substock_for,
)

#: heat-labile components: filter-sterilise and add to the autoclaved medium cooled to about 50 °C
#: (common practice)
HEAT_LABILE = {
    "gibberellic_acid": "loses much of its activity when autoclaved",
    "trans_zeatin": "is partly degraded when autoclaved",
    "iaa": "is partly destroyed by autoclaving (and by light)",
    "l_glutamine": "breaks down when autoclaved",
}


class _Named:
    """Shared by rows and stock items: ``name (formula)``."""

    name: str
    formula: str | None

    @property
    def display(self) -> str:
        return f"{self.name} ({self.formula})" if self.formula else self.name


@dataclass(frozen=True)
class Weighing(_Named):
    """One component of the batch in the form on the shelf.

    grams [g per batch], unrounded; millilitres [mL per batch] for liquids given by volume (else None);
    route: ``weigh`` (directly into the batch), ``late`` (filter-sterilised, after autoclaving) or
    ``stock:KEY`` (through that stock).
    """

    id: str
    name: str
    formula: str | None
    group: str
    amount: str
    grams: float | None
    millilitres: float | None
    route: str
    form_note: str | None = None
    substock: SubStock | None = None
    handling: str | None = None
    hazard: str | None = None
    confidence: str | None = None

    @property
    def small(self) -> bool:
        """True when the mass is below what a balance weighs well (a sub-stock is offered)."""
        return self.grams is not None and self.millilitres is None and self.grams < WEIGH_VIA_STOCK_G

    @property
    def weighed(self) -> bool:
        """True for a mass to weigh (not a liquid measured by volume, not a mass unknown)."""
        return self.grams is not None and self.millilitres is None

    @property
    def weigh(self) -> str:
        """What the balance or the cylinder should read, rounded (``440.0 mg``, ``5 mL``)."""
        return format_mass(self.grams) if self.millilitres is None else format_volume_ml(self.millilitres)

    def with_route(self, route: str) -> Weighing:
        """The same row sent another way; a sub-stock is kept only for a direct weighing."""
        return replace(self, route=route, substock=self.substock if route == "weigh" else None)

    def to_dict(self) -> dict:
        """Every field (``grams`` [g per batch], ``millilitres`` [mL per batch], ``substock`` as a dict),
        then ``weigh`` (the rounded reading) and ``weigh_via_stock`` (True below 10 mg)."""
        d = asdict(self)
        d["weigh"] = self.weigh
        d["weigh_via_stock"] = self.small
        return d


# ---- the form on the shelf ------------------------------------------------------------------------
def shelf_forms(catalog: Catalog, recipe_lines: list[Line], forms: dict[str, str] | None) -> dict[str, Component]:
    """Component id in the recipe -> component on the shelf (same substance, same moles)."""
    ids = {ln.component.id: ln.component for ln in recipe_lines}
    return dict(_one_form(catalog, ids, src, dst) for src, dst in (forms or {}).items())


def _one_form(catalog: Catalog, ids: dict[str, Component], src: str, dst: str) -> tuple[str, Component]:
    """(id in the recipe, form on the shelf) for one ``src=dst`` request, or an error in words."""
    a = catalog.resolve(src, field=f"form {src}").component
    b = catalog.resolve(dst, field=f"form {src}={dst}").component
    if a.id not in ids:
        a = _same_substance_in_recipe(a, ids, src)
    if not a.substance or a.substance != b.substance:
        others = [c.id for c in catalog.components.values() if c.substance and c.substance == a.substance
                  and c.id != a.id]
        raise AmountError(f"{b.id} is not a form of {a.substance or a.id}", field=f"form {src}={dst}",
                          hint=("forms on offer: " + ", ".join(others)) if others else "this component has no other form")
    if not a.molar_mass or not b.molar_mass:
        raise AmountError(f"{a.id} or {b.id} has no molar mass", field=f"form {src}={dst}")
    return a.id, b


def _same_substance_in_recipe(a: Component, ids: dict[str, Component], src: str) -> Component:
    """The recipe's form of ``a``'s substance (``a`` itself is not in the recipe)."""
    same = [c for c in ids.values() if c.substance and c.substance == a.substance]
    if not same:
        raise AmountError(f"{a.id} is not in this medium", field=f"form {src}",
                          hint="name a component of the recipe on the left of '='")
    return same[0]


# ---- amounts per litre ----------------------------------------------------------------------------
def _water_g_per_litre(lines: list[Line], catalog: Catalog, T: float) -> float | None:
    """Water in the medium [g per L], needed only when an amount is given per kg of water; T [K]."""
    if not any(ln.amount.kind in ("molal", "mass_per_water") for ln in lines):
        return None
    from mediaplan.medium.model import compiled

    model = compiled(catalog, [ln.component for ln in lines], T)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    return float(model.solve(n[None, :], b[None, :]).water_kg_per_m3[0])  # kg water per m^3 = g per L


def grams_per_litre(lines: list[Line], catalog: Catalog, T: float) -> list[tuple[float | None, float | None]]:
    """Per line: (g per L of medium of the form named, mL per L for liquids given by volume); T [K]."""
    W = _water_g_per_litre(lines, catalog, T)
    return [_line_per_litre(ln, W) for ln in lines]


def _line_per_litre(ln: Line, W: float | None) -> tuple[float | None, float | None]:
    """(g per L, mL per L) of one line; W [g water per L of medium] when an amount is per kg water."""
    a, c = ln.amount, ln.component
    M = c.molar_mass
    if a.kind == "mass_conc":
        return a.value, None
    if a.kind == "vol_frac":
        ml = a.value * 1000.0
        return (ml * c.density if c.density else None), ml
    if M is None:
        raise MediaplanError(f"{c.id} has no molar mass, so {a.text!r} cannot be weighed",
                             field=f"components.{c.id}", hint="give it as a mass per litre, e.g. \"8 g/L\"")
    if a.kind == "molar":
        return a.value / 1000.0 * M, None
    if a.kind == "molal":
        return a.value * W / 1000.0 * M, None
    return a.value * W, None  # mass_per_water


def handling_note(c: Component) -> str | None:
    """How a component must be handled apart from the rest (heat-labile, gelling), or None."""
    if c.id in HEAT_LABILE:
        return (f"{c.name} {HEAT_LABILE[c.id]}: filter-sterilise (0.22 µm) and add to the autoclaved medium "
                "cooled to about 50 °C")
    if c.group == "gelling":
        return "add last, after the pH is set; heat to dissolve"
    return None


# ---- the rows of the sheet ------------------------------------------------------------------------
def weighings(lines: list[Line], catalog: Catalog, batch_l: float, T: float,
              shelf: dict[str, Component]) -> tuple[list[Weighing], dict[str, Component]]:
    """One row per recipe line for a batch of ``batch_l`` [L] at T [K], in the form on the shelf;
    returns (rows, component on the shelf by id)."""
    rows: list[Weighing] = []
    components: dict[str, Component] = {}
    for ln, (gpl, mlpl) in zip(lines, grams_per_litre(lines, catalog, T), strict=True):
        c = ln.component
        form_note = None
        if c.id in shelf:
            new = shelf[c.id]
            form_note = f"as {new.display} instead of {c.display} (same moles)"
            gpl = gpl / c.molar_mass * new.molar_mass if gpl is not None else None
            c = new
        components[c.id] = c
        grams = gpl * batch_l if gpl is not None else None
        ml = mlpl * batch_l if mlpl is not None else None
        route = "late" if c.id in HEAT_LABILE else "weigh"
        row = Weighing(c.id, c.name, c.formula, c.group, ln.amount.text, grams, ml, route, form_note,
                       None, handling_note(c), c.hazard, ln.confidence)
        rows.append(replace(row, substock=substock_for(row.grams)) if row.small else row)
    return rows, components
