"""Preparation sheets: what to weigh, which stock solutions to make, and in which order to add them.

For a recipe and a batch volume the sheet gives the mass of every component in the form on the
shelf (hydrate-aware: switching a hydrate keeps the moles), rounded for a laboratory balance, and
flags masses too small to weigh. With stocks, components are grouped by common practice (macro
salts, calcium, micro salts, iron chelate, vitamins, one stock per growth regulator), calcium is kept
apart from sulfate and phosphate, and each stock's concentration factor is the largest that keeps
every salt below a fraction of its solubility and the calcium ion pairs below their solubility
products. Everything here is plain data; the exports format it.

Exactness: every mass is carried unrounded; rounding happens only in :func:`format_mass`, so that
Σ over stocks (stock concentration × volume per batch) + direct weighings = the plan's mass per batch.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.recipe import Line, Recipe
from mediaplan.medium.units import parse_volume

#: masses below this are flagged "weigh via stock" [g] (common practice: an analytical balance
#: reading 0.1 mg weighs 10 mg to about 1 %)
WEIGH_VIA_STOCK_G = 0.010
#: the finest mass a sheet shows [g] (0.1 mg)
BALANCE_RESOLUTION_G = 1e-4
#: a stock may hold at most this fraction of each salt's solubility (margin for cold storage and
#: common-ion effects; common practice)
SOLUBILITY_MARGIN = 0.70
#: a growth-regulator stock holds at most this much [g per L of stock] (1 mg/mL; common practice)
PGR_STOCK_MAX_G_PER_L = 1.0
#: smallest volume of stock to pipette into one batch [mL] (common practice)
MIN_PIPETTE_ML = 0.1
#: standard stock volumes [mL]; the smallest that lasts about ten batches is chosen
STOCK_VOLUMES_ML = (100.0, 250.0, 500.0, 1000.0)

#: heat-labile components: filter-sterilise and add to the autoclaved medium cooled to about 50 °C
#: (common practice)
HEAT_LABILE = {
    "gibberellic_acid": "loses much of its activity when autoclaved",
    "trans_zeatin": "is partly degraded when autoclaved",
    "iaa": "is partly destroyed by autoclaving (and by light)",
    "l_glutamine": "breaks down when autoclaved",
}

_CA = "Ca[2+]"
_SULFATE = "SO4[2-]"
_PHOSPHATES = ("H2PO4[-]", "HPO4[2-]", "PO4[3-]")
_WATER_G_PER_MOL = 18.015268

#: stock groups in the order of addition: key -> (label, candidate factors, highest first)
STOCK_GROUPS: dict[str, tuple[str, tuple[float, ...]]] = {
    "macro": ("macro salts", (10.0,)),
    "calcium": ("calcium", (100.0, 10.0)),
    "micro": ("micro salts", (100.0, 10.0)),
    "iron": ("iron chelate", (100.0, 10.0)),
    "vitamins": ("vitamins and organics", (100.0, 10.0)),
    "pgr": ("growth regulator", (1000.0, 100.0, 10.0)),
}


@dataclass(frozen=True)
class SubStock:
    """A dilute stock for a mass too small to weigh: dissolve ``grams`` in ``volume_ml``, pipette ``pipette_ml``."""

    grams: float
    volume_ml: float
    pipette_ml: float

    @property
    def mg_per_ml(self) -> float:
        return self.grams * 1000.0 / self.volume_ml

    def text(self) -> str:
        return (f"dissolve {format_mass(self.grams)} in {self.volume_ml:g} mL ({self.mg_per_ml:g} mg/mL) "
                f"and pipette {self.pipette_ml:.3g} mL")


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
        return self.grams is not None and self.millilitres is None and self.grams < WEIGH_VIA_STOCK_G


@dataclass(frozen=True)
class StockItem(_Named):
    id: str
    name: str
    formula: str | None
    grams_per_litre: float  # in the stock [g/L]
    grams_in_stock: float  # for the stock volume [g]
    solubility_fraction: float | None  # of the substance's solubility at 25 °C, None without data
    substock: SubStock | None = None


@dataclass(frozen=True)
class Stock:
    """A stock solution: ``factor`` × the medium's concentration of each item."""

    key: str
    label: str
    factor: float
    volume_ml: float  # of stock to make
    ml_per_batch: float
    items: tuple[StockItem, ...]
    filter_sterilise: bool = False
    note: str | None = None

    @property
    def max_fraction(self) -> float | None:
        fr = [i.solubility_fraction for i in self.items if i.solubility_fraction is not None]
        return max(fr) if fr else None


@dataclass
class PrepSheet:
    """Everything printed on a preparation sheet (plain data; the exports format it)."""

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
        return {r.id: r.grams for r in self.rows if r.grams is not None and r.millilitres is None}

    def recombined(self) -> dict[str, float]:
        """Σ stocks (stock g/L × mL per batch) + direct weighings, per component [g] (for checks)."""
        out: dict[str, float] = {}
        for s in self.stocks:
            for it in s.items:
                out[it.id] = out.get(it.id, 0.0) + it.grams_per_litre * s.ml_per_batch / 1000.0
        for r in self.rows:
            if r.grams is not None and r.millilitres is None and not r.route.startswith("stock:"):
                out[r.id] = out.get(r.id, 0.0) + r.grams
        return out


# ---- rounding for a balance --------------------------------------------------------------------
def round_mass(grams: float) -> float:
    """Four significant figures, never finer than 0.1 mg [g]."""
    if grams <= 0 or not math.isfinite(grams):
        return 0.0
    r = float(f"{grams:.4g}")
    return round(r / BALANCE_RESOLUTION_G) * BALANCE_RESOLUTION_G if r >= BALANCE_RESOLUTION_G else r


def format_mass(grams: float | None) -> str:
    """A mass for a lab balance: ``1.650 g``, ``440.0 mg``, ``6.2 mg``; below 0.1 mg ``< 0.1 mg``."""
    if grams is None:
        return "—"
    if grams <= 0:
        return "0 g"
    r = round_mass(grams)
    if grams < BALANCE_RESOLUTION_G * 0.95:
        return "< 0.1 mg"
    if r >= 1.0:
        return f"{r:.{max(0, 3 - int(math.floor(math.log10(r))))}f} g"
    mg = r * 1000.0
    decimals = max(0, min(1, 3 - int(math.floor(math.log10(mg)))))
    return f"{mg:.{decimals}f} mg"


def format_volume_ml(ml: float) -> str:
    if ml >= 1000:
        return f"{ml / 1000:.4g} L"
    return f"{ml:.4g} mL"


def substock_for(grams: float) -> SubStock:
    """A dilute stock for ``grams`` too small to weigh: 100 mg or 10 mg made up to 100 mL or 1 L,
    whichever gives a pipetted volume of at least 0.1 mL."""
    for g, vol in ((0.1, 100.0), (0.01, 100.0), (0.01, 1000.0)):
        pip = grams / g * vol
        if pip >= MIN_PIPETTE_ML:
            return SubStock(g, vol, pip)
    return SubStock(0.01, 1000.0, grams / 0.01 * 1000.0)


# ---- masses per batch ----------------------------------------------------------------------------
def _forms(catalog: Catalog, recipe_lines: list[Line], forms: dict[str, str] | None) -> dict[str, Component]:
    """Component id in the recipe -> component on the shelf (same substance, same moles)."""
    out: dict[str, Component] = {}
    ids = {ln.component.id: ln.component for ln in recipe_lines}
    for src, dst in (forms or {}).items():
        a = catalog.resolve(src, field=f"form {src}").component
        b = catalog.resolve(dst, field=f"form {src}={dst}").component
        if a.id not in ids:
            same = [c for c in ids.values() if c.substance and c.substance == a.substance]
            if not same:
                raise AmountError(f"{a.id} is not in this medium", field=f"form {src}",
                                  hint="name a component of the recipe on the left of '='")
            a = same[0]
        if not a.substance or a.substance != b.substance:
            others = [c.id for c in catalog.components.values() if c.substance and c.substance == a.substance
                      and c.id != a.id]
            raise AmountError(f"{b.id} is not a form of {a.substance or a.id}", field=f"form {src}={dst}",
                              hint=("forms on offer: " + ", ".join(others)) if others else "this component has no other form")
        if not a.molar_mass or not b.molar_mass:
            raise AmountError(f"{a.id} or {b.id} has no molar mass", field=f"form {src}={dst}")
        out[a.id] = b
    return out


def _grams_per_litre(lines: list[Line], catalog: Catalog, T: float) -> list[tuple[float | None, float | None]]:
    """Per line: (g per L of medium of the form named, mL per L for liquids given by volume)."""
    need_water = any(ln.amount.kind in ("molal", "mass_per_water") for ln in lines)
    W = None
    if need_water:
        from mediaplan.medium.model import compiled

        model = compiled(catalog, [ln.component for ln in lines], T)
        n, b = model.amounts_to_arrays([ln.amount for ln in lines])
        W = float(model.solve(n[None, :], b[None, :]).water_kg_per_m3[0])  # kg water per m^3 = g per L
    out: list[tuple[float | None, float | None]] = []
    for ln in lines:
        a, c = ln.amount, ln.component
        M = c.molar_mass
        if a.kind == "mass_conc":
            out.append((a.value, None))
        elif a.kind == "vol_frac":
            ml = a.value * 1000.0
            out.append((ml * c.density if c.density else None, ml))
        elif M is None:
            raise MediaplanError(f"{c.id} has no molar mass, so {a.text!r} cannot be weighed",
                                 field=f"components.{c.id}", hint="give it as a mass per litre, e.g. \"8 g/L\"")
        elif a.kind == "molar":
            out.append((a.value / 1000.0 * M, None))
        elif a.kind == "molal":
            out.append((a.value * W / 1000.0 * M, None))
        else:  # mass_per_water
            out.append((a.value * W, None))
    return out


def _handling(c: Component) -> str | None:
    if c.id in HEAT_LABILE:
        return (f"{c.name} {HEAT_LABILE[c.id]}: filter-sterilise (0.22 µm) and add to the autoclaved medium "
                "cooled to about 50 °C")
    if c.group == "gelling":
        return "add last, after the pH is set; heat to dissolve"
    return None


# ---- stock scheme --------------------------------------------------------------------------------
def _stock_key(c: Component, calcium_apart: bool) -> str | None:
    if not c.species or not c.molar_mass:
        return None
    ions = {s for s, _ in c.species}
    if c.group in ("macro", "salt"):
        return "calcium" if calcium_apart and _CA in ions else "macro"
    if c.group == "micro":
        return "micro"
    if c.group == "iron":
        return "iron"
    if c.group in ("vitamin", "amino_acid") or (c.group == "organic" and not c.hazard):
        return None if c.id in HEAT_LABILE else "vitamins"
    if c.group == "growth_regulator":
        return f"pgr:{c.id}"
    return None


def _solubility_fractions(items: list[tuple[Component, float]]) -> dict[str, float | None]:
    """Per component: fraction of its substance's solubility at 25 °C in a stock of these g/L."""
    anh = {c.id: g * (c.anhydrous_molar_mass or 0) / c.molar_mass for c, g in items if c.molar_mass}
    hydrate_water = sum(g * c.hydrate_water * _WATER_G_PER_MOL / c.molar_mass for c, g in items if c.molar_mass)
    # water per litre of stock: displaced by the solutes at about 1 g/mL (a conservative guess) plus
    # the water of crystallisation
    water = max(1000.0 - sum(anh.values()) - hydrate_water, 50.0) + hydrate_water
    by_sub: dict[str, float] = {}
    for c, _ in items:
        if c.substance:
            by_sub[c.substance] = by_sub.get(c.substance, 0.0) + anh.get(c.id, 0.0)
    out: dict[str, float | None] = {}
    for c, _ in items:
        if c.solubility is None or not c.substance:
            out[c.id] = None
        else:
            out[c.id] = (by_sub[c.substance] / water * 100.0) / c.solubility
    return out


def _ion_pair_risk(items: list[tuple[Component, float]]) -> str | None:
    """Calcium sulfate / phosphate saturation in a stock (Davies activities; screening only)."""
    from mediaplan.thermo.ions import parse_species
    from mediaplan.thermo.precipitation import calcium_saturation

    m: dict[str, float] = {}
    for c, g in items:
        if not c.molar_mass:
            continue
        mol = g / c.molar_mass  # mol per L of stock, taken as per kg water (screen)
        for sp, nu in c.species:
            m[sp] = m.get(sp, 0.0) + nu * mol
    if m.get(_CA, 0) <= 0:
        return None
    ionic = 0.5 * sum(v * parse_species(s).charge ** 2 for s, v in m.items() if "[" in s)
    for _an, label, ratio in calcium_saturation(m, min(ionic, 0.5)):
        if ratio > SOLUBILITY_MARGIN:
            return f"{label} would precipitate (ion activity product {ratio:.2g} × its solubility product)"
    return None


def _check_stock(items: list[tuple[Component, float]], factor: float) -> list[str]:
    """Problems of a stock at ``factor`` (empty when it is safe)."""
    conc = [(c, g * factor) for c, g in items]
    problems = []
    for c, g in conc:
        if c.group == "growth_regulator" and g > PGR_STOCK_MAX_G_PER_L * 1.000001:
            problems.append(f"{c.display} at {g:.3g} g/L is above the usual {PGR_STOCK_MAX_G_PER_L:g} mg/mL "
                            "for a growth-regulator stock")
    for cid, fr in _solubility_fractions(conc).items():
        if fr is not None and fr > SOLUBILITY_MARGIN:
            c = next(c for c, _ in conc if c.id == cid)
            problems.append(f"{c.display} would be at {100 * fr:.0f} % of its solubility "
                            f"(limit {100 * SOLUBILITY_MARGIN:.0f} %)")
    risk = _ion_pair_risk(conc)
    if risk:
        problems.append(risk)
    return problems


def _stock_volume(ml_per_batch: float) -> float:
    for v in STOCK_VOLUMES_ML:
        if v >= 10 * ml_per_batch:
            return v
    return max(STOCK_VOLUMES_ML[-1], ml_per_batch)


def _group_of(key: str) -> str:
    return "pgr" if key.startswith("pgr:") else key


_PGR_SOLVENT = {  # common practice
    "auxin": "dissolve in a few drops of 1 M KOH or NaOH (or ethanol), then make up with water",
    "cytokinin": "dissolve in a few drops of 1 M KOH or NaOH (or 1 M HCl), then make up with water",
}
_CYTOKININS = {"bap", "kinetin", "trans_zeatin", "isopentenyladenine", "thidiazuron"}


def build_stocks(rows: list[Weighing], components: dict[str, Component], batch_ml: float,
                 factors: dict[str, float] | None = None, stock_volume_ml: float | None = None
                 ) -> tuple[list[Stock], list[Weighing], list[str]]:
    """Group rows into stocks; returns (stocks, rows with their routes, notes)."""
    factors = dict(factors or {})
    notes: list[str] = []
    ions_by_key: dict[str, set[str]] = {}
    members: dict[str, list[Weighing]] = {}
    pre = {r.id: _stock_key(components[r.id], calcium_apart=False) if r.grams is not None and r.millilitres is None
           else None for r in rows}
    for r in rows:
        k = pre[r.id]
        if k:
            ions_by_key.setdefault(k, set()).update(s for s, _ in components[r.id].species)
    macro_ions = ions_by_key.get("macro", set())
    calcium_apart = _CA in macro_ions and (_SULFATE in macro_ions or any(p in macro_ions for p in _PHOSPHATES))
    for r in rows:
        k = _stock_key(components[r.id], calcium_apart) if pre[r.id] else None
        if k:
            members.setdefault(k, []).append(r)
    unknown = [k for k in factors if k not in members and f"pgr:{k}" not in members]
    if unknown:
        raise AmountError(f"no stock named {unknown[0]!r} in this scheme", field="stock_factor",
                          hint="stocks here: " + ", ".join(k.removeprefix("pgr:") for k in members))
    stocks: list[Stock] = []
    routed: dict[str, str] = {}
    order = list(STOCK_GROUPS)
    for key in sorted(members, key=lambda k: (order.index(_group_of(k)), k)):
        label, candidates = STOCK_GROUPS[_group_of(key)]
        rs = members[key]
        items = [(components[r.id], r.grams / (batch_ml / 1000.0)) for r in rs]  # g per L of medium
        if key.startswith("pgr:"):
            label = f"{rs[0].name}"
        user = factors.get(key, factors.get(key.removeprefix("pgr:")))
        if user is not None:
            if not math.isfinite(user) or user < 1:
                raise AmountError(f"stock factor {user:g} for {label} must be 1 or more", field="stock_factor")
            problems = _check_stock(items, user)
            if problems:
                raise AmountError(f"stock '{label}' at {user:g}×: {problems[0]}", field=f"stock_factor {key}",
                                  hint="choose a smaller factor, or leave it to mediaplan")
            factor = user
        else:
            ok = [f for f in candidates if batch_ml / f >= MIN_PIPETTE_ML and not _check_stock(items, f)]
            if not ok:
                for r in rs:
                    routed[r.id] = "weigh"
                why = _check_stock(items, candidates[-1])
                notes.append(f"{label}: no safe stock even at {candidates[-1]:g}× ({why[0] if why else 'batch too small'}); "
                             "weighed directly")
                continue
            factor = ok[0]
        ml_batch = batch_ml / factor
        vol = stock_volume_ml or _stock_volume(ml_batch)
        fractions = _solubility_fractions([(c, g * factor) for c, g in items])
        sitems = []
        for c, g in items:
            g_stock = g * factor * vol / 1000.0
            sitems.append(StockItem(c.id, c.name, c.formula, g * factor, g_stock, fractions[c.id],
                                    substock_for(g_stock) if g_stock < WEIGH_VIA_STOCK_G else None))
        note = None
        filt = False
        if key.startswith("pgr:"):
            cid = key.removeprefix("pgr:")
            note = _PGR_SOLVENT["cytokinin" if cid in _CYTOKININS else "auxin"]
            if cid in HEAT_LABILE:
                filt = True
                note += "; filter-sterilise, add after autoclaving"
        elif key == "vitamins":
            note = "some protocols filter-sterilise this stock and add it after autoclaving"
        elif key == "iron":
            note = "store dark and cold; iron chelates break down in light"
        if ml_batch < MIN_PIPETTE_ML:
            note = (note + "; " if note else "") + "pipetted volume under 0.1 mL: make a larger batch"
        stocks.append(Stock(key, label, factor, vol, ml_batch, tuple(sitems), filt, note))
        for r in rs:
            routed[r.id] = f"stock:{key}"
    out_rows = [r if r.id not in routed else _replace_route(r, routed[r.id]) for r in rows]
    return stocks, out_rows, notes


def _replace_route(r: Weighing, route: str) -> Weighing:
    from dataclasses import replace

    return replace(r, route=route, substock=r.substock if route == "weigh" else None)


# ---- the sheet -------------------------------------------------------------------------------------
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
    vol_text = volume or recipe.volume
    batch_m3 = parse_volume(vol_text, field="batch_volume")
    batch_l = batch_m3 * 1000.0
    stock_ml = parse_volume(stock_volume, field="stock_volume") * 1e6 if stock_volume else None
    lines = recipe.lines(catalog)
    if not lines:
        raise MediaplanError("the recipe has no components", hint="add components or a base medium first")
    shelf = _forms(catalog, lines, forms)
    per_litre = _grams_per_litre(lines, catalog, recipe.temperature_k)
    rows: list[Weighing] = []
    components: dict[str, Component] = {}
    for ln, (gpl, mlpl) in zip(lines, per_litre, strict=True):
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
        handling = _handling(c)
        route = "late" if c.id in HEAT_LABILE else "weigh"
        rows.append(Weighing(c.id, c.name, c.formula, c.group, ln.amount.text, grams, ml, route, form_note,
                             None, handling, c.hazard, ln.confidence))
    rows = [_with_substock(r) for r in rows]
    stock_list: list[Stock] = []
    notes: list[str] = []
    if stocks:
        stock_list, rows, notes = build_stocks(rows, components, batch_l * 1000.0, factors, stock_ml)
    elif factors:
        raise AmountError("a stock factor needs a stock scheme", field="stock_factor", hint="ask for stock solutions too")
    medium = catalog.medium(recipe.base) if recipe.base else None
    ph_text = ph or (medium.ph if medium and medium.ph else "5.7–5.8")
    return PrepSheet(
        title=title or "Medium", volume_l=batch_l, temperature_c=recipe.temperature_k - 273.15,
        base=recipe.base, strength=recipe.strength, rows=rows, stocks=stock_list,
        steps=_steps(rows, stock_list, batch_l, ph_text), ph=ph_text, sterilisation=_sterilisation(rows, stock_list),
        cautions=_cautions(rows), notes=notes,
    )


def _with_substock(r: Weighing) -> Weighing:
    from dataclasses import replace

    return replace(r, substock=substock_for(r.grams)) if r.small else r


def _steps(rows: list[Weighing], stocks: list[Stock], batch_l: float, ph: str) -> list[str]:
    """Order of addition (common practice)."""
    vol = format_volume_ml(batch_l * 1000.0)
    start = format_volume_ml(batch_l * 1000.0 * 0.7)
    steps = [f"Put about {start} of purified water (70 % of {vol}) in a vessel with a stirrer."]
    by_key = {s.key: s for s in stocks}
    for key, text in (("macro", "Add the macro-salt stock"),
                      ("calcium", "Add the calcium stock only after the macro salts are diluted and dissolved"),
                      ("micro", "Add the micro-salt stock"),
                      ("iron", "Add the iron-chelate stock"),
                      ("vitamins", "Add the vitamin stock")):
        if key in by_key:
            s = by_key[key]
            steps.append(f"{text}: {format_volume_ml(s.ml_per_batch)} ({s.factor:g}×).")
    direct = [r for r in rows if r.route == "weigh" and r.group not in ("gelling", "ph")]
    salts = [r for r in direct if r.group in ("macro", "salt", "micro", "iron")]
    salts.sort(key=lambda r: "Ca" in (r.formula or "") and r.group in ("macro", "salt"))  # calcium last
    if salts:
        steps.append("Weigh and dissolve the salts one at a time, each fully before the next: " +
                     ", ".join(_weigh_text(r) for r in salts) + "." +
                     (" Add calcium salts last, into the diluted solution." if any(
                         "Ca" in (r.formula or "") for r in salts) and len(salts) > 1 else ""))
    others = [r for r in direct if r not in salts and r.group != "growth_regulator"]
    if others:
        steps.append("Add and dissolve: " + ", ".join(_weigh_text(r) for r in others) + ".")
    pgr = [s for s in stocks if s.key.startswith("pgr:") and not s.filter_sterilise]
    pgr_direct = [r for r in direct if r.group == "growth_regulator"]
    if pgr or pgr_direct:
        steps.append("Add the growth regulators: " + ", ".join(
            [f"{s.label} stock {format_volume_ml(s.ml_per_batch)}" for s in pgr] +
            [_weigh_text(r) for r in pgr_direct]) + ".")
    steps.append(f"Make up to about 90 % of {vol} and adjust the pH to {ph} with 0.1–1 M KOH or NaOH, or HCl, "
                 "stirring and adding dropwise.")
    steps.append(f"Make up to {vol} with purified water.")
    gels = [r for r in rows if r.group == "gelling"]
    if gels:
        steps.append("Add the gelling agent last: " + ", ".join(_weigh_text(r) for r in gels) +
                     "; heat while stirring until it has dissolved (the solution turns clear), then dispense.")
    late = [r for r in rows if r.route == "late"] + [s for s in stocks if s.filter_sterilise]
    steps.append("Autoclave (121 °C; the time depends on the volume per vessel: follow your autoclave's "
                 "validated cycle).")
    if late:
        steps.append("Let the medium cool to about 50 °C, then add the filter-sterilised (0.22 µm) solutions: " +
                     ", ".join(_weigh_text(r) if isinstance(r, Weighing) else
                               f"{r.label} stock {format_volume_ml(r.ml_per_batch)}" for r in late) +
                     "; swirl to mix before the gel sets.")
    return steps


def _weigh_text(r: Weighing) -> str:
    if r.millilitres is not None:
        return f"{r.display} {format_volume_ml(r.millilitres)}"
    if r.substock is not None:
        return f"{r.display} {format_mass(r.grams)} (via stock: {r.substock.text()})"
    return f"{r.display} {format_mass(r.grams)}"


def _sterilisation(rows: list[Weighing], stocks: list[Stock]) -> list[str]:
    out = ["Autoclave at 121 °C; the time needed grows with the volume in each vessel (common practice)."]
    for r in rows:
        if r.route == "late" or r.id in HEAT_LABILE:
            out.append(f"{r.display}: {HEAT_LABILE[r.id]}; filter-sterilise (0.22 µm) and add after autoclaving, "
                       "to medium cooled to about 50 °C.")
    if any(s.key == "vitamins" for s in stocks) or any(r.group == "vitamin" for r in rows):
        out.append("Vitamins: some protocols filter-sterilise them and add them after autoclaving.")
    if any(r.group == "carbon" for r in rows):
        out.append("Autoclaving hydrolyses part of the sucrose (about 5–20 %; more at low pH or with activated "
                   "charcoal), which raises the osmolality slightly (Hagen et al. 1991; Druart & De Wulf 1993).")
    out.append("The pH usually falls somewhat during autoclaving; set it before, and check a sample after.")
    return out


#: general cautions printed on every sheet (common practice)
AUTOCLAVE_CAUTION = ("Autoclave: liquids come out superheated and can boil over violently when moved or opened; "
                     "wait until pressure and temperature have fallen, never autoclave tightly sealed vessels, "
                     "and wear heat-resistant gloves and face protection.")
LOCAL_RULES = ("Always follow your institution's safety rules, the suppliers' safety data sheets and licensed "
               "practice; these notes do not replace them.")


def _cautions(rows: list[Weighing]) -> list[dict]:
    out = [{"component": r.id, "name": r.display, "caution": r.hazard} for r in rows if r.hazard]
    out.append({"component": None, "name": "autoclave", "caution": AUTOCLAVE_CAUTION})
    out.append({"component": None, "name": "pH reagents",
                "caution": "KOH, NaOH and HCl solutions are corrosive: gloves and eye protection."})
    out.append({"component": None, "name": "general", "caution": LOCAL_RULES})
    return out


def ph_osmotic_note(base_mmol_per_l: float = 0.5) -> str:
    """The small osmolal effect of pH adjustment (at most 2 osmol per mol of KOH or NaOH)."""
    return (f"pH adjustment adds little: a typical {base_mmol_per_l:g} mM KOH adds about "
            f"{2 * base_mmol_per_l:.1g} mOsm/kg (K⁺ and OH⁻, before the OH⁻ is neutralised; common practice).")


def gel_note() -> str:
    return ("Gelling agents add no osmolality; the matric potential of normal gels is about 0 (each +0.1 % "
            "agar-type gel lowers it by only about 1e-4 MPa; Spomer & Smith 1996, In Vitro Cell Dev Biol–Plant "
            "32:210).")


def parse_pairs(items: list[str] | None, what: str) -> dict[str, str]:
    """``KEY=VALUE`` command-line items -> dict (one clear error for a malformed item)."""
    out: dict[str, str] = {}
    for item in items or []:
        key, eq, val = item.partition("=")
        if not eq or not key.strip() or not val.strip():
            raise AmountError(f"'{item}' is not KEY=VALUE", field=what, hint="write e.g. macro=10")
        out[key.strip()] = val.strip()
    return out


def parse_factors(items: list[str] | None) -> dict[str, float]:
    out = {}
    for key, val in parse_pairs(items, "stock_factor").items():
        try:
            f = float(val.rstrip("xX×"))
        except ValueError:
            raise AmountError(f"stock factor {val!r} is not a number", field=f"stock_factor {key}",
                              hint="write e.g. micro=100") from None
        out[key] = f
    return out


def sheet_to_dict(sheet: PrepSheet) -> dict:
    """Plain JSON-ready data of a sheet (rounded masses beside the exact ones)."""
    from dataclasses import asdict

    d = asdict(sheet)
    for r, row in zip(sheet.rows, d["rows"], strict=True):
        row["weigh"] = format_mass(r.grams) if r.millilitres is None else format_volume_ml(r.millilitres)
        row["weigh_via_stock"] = r.small
    return d
