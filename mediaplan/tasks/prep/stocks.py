"""Stock solutions: which components share a stock, and how concentrated each stock may be.

Components are grouped by common practice (macro salts, calcium, micro salts, iron chelate,
vitamins, one stock per growth regulator); calcium is kept apart from sulfate and phosphate. Each
stock's concentration factor is the largest that keeps every salt below a fraction of its solubility
and the calcium ion pairs below their solubility products.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from mediaplan.medium.catalog import Component
from mediaplan.medium.errors import AmountError
from mediaplan.tasks.prep.balance import MIN_PIPETTE_ML, WEIGH_VIA_STOCK_G, SubStock, substock_for
from mediaplan.tasks.prep.items import HEAT_LABILE, Weighing, _Named

#: a stock may hold at most this fraction of each salt's solubility (margin for cold storage and
#: common-ion effects; common practice)
SOLUBILITY_MARGIN = 0.70
#: a growth-regulator stock holds at most this much [g per L of stock] (1 mg/mL; common practice)
PGR_STOCK_MAX_G_PER_L = 1.0
#: standard stock volumes [mL]; the smallest that lasts about ten batches is chosen
STOCK_VOLUMES_ML = (100.0, 250.0, 500.0, 1000.0)

#: stock groups in the order of addition: key -> (label, candidate factors, highest first)
STOCK_GROUPS: dict[str, tuple[str, tuple[float, ...]]] = {
    "macro": ("macro salts", (10.0,)),
    "calcium": ("calcium", (100.0, 10.0)),
    "micro": ("micro salts", (100.0, 10.0)),
    "iron": ("iron chelate", (100.0, 10.0)),
    "vitamins": ("vitamins and organics", (100.0, 10.0)),
    "pgr": ("growth regulator", (1000.0, 100.0, 10.0)),
}

_CA = "Ca[2+]"
_SULFATE = "SO4[2-]"
_PHOSPHATES = ("H2PO4[-]", "HPO4[2-]", "PO4[3-]")
_WATER_G_PER_MOL = 18.015268
#: a stock is made with at least this much water [g per L of stock] in the solubility screen
_MIN_WATER_G_PER_L = 50.0

_PGR_SOLVENT = {  # common practice
    "auxin": "dissolve in a few drops of 1 M KOH or NaOH (or ethanol), then make up with water",
    "cytokinin": "dissolve in a few drops of 1 M KOH or NaOH (or 1 M HCl), then make up with water",
}
_CYTOKININS = {"bap", "kinetin", "trans_zeatin", "isopentenyladenine", "thidiazuron"}


@dataclass(frozen=True)
class StockItem(_Named):
    """One component of a stock: ``grams_per_litre`` [g per L of stock], ``grams_in_stock`` [g for the
    stock volume], ``solubility_fraction`` of the substance's solubility at 25 °C (None without data)."""

    id: str
    name: str
    formula: str | None
    grams_per_litre: float  # in the stock [g/L]
    grams_in_stock: float  # for the stock volume [g]
    solubility_fraction: float | None  # of the substance's solubility at 25 °C, None without data
    substock: SubStock | None = None

    def to_dict(self) -> dict:
        """Every field, JSON-ready (``substock`` as a dict or None)."""
        return asdict(self)


@dataclass(frozen=True)
class Stock:
    """A stock solution: ``factor`` × the medium's concentration of each item; ``volume_ml`` [mL] to make,
    ``ml_per_batch`` [mL] into one batch."""

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
        """The largest fraction of a solubility reached in this stock (None without data)."""
        fr = [i.solubility_fraction for i in self.items if i.solubility_fraction is not None]
        return max(fr) if fr else None

    def to_dict(self) -> dict:
        """Every field, JSON-ready (``items`` as a list of dicts)."""
        return asdict(self)


# ---- grouping ------------------------------------------------------------------------------------
def stock_key(c: Component, calcium_apart: bool) -> str | None:
    """The stock a component goes into (``macro``, ``calcium``, ``micro``, ``iron``, ``vitamins``,
    ``pgr:ID``), or None when it is weighed directly."""
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


def _group_of(key: str) -> str:
    return "pgr" if key.startswith("pgr:") else key


def calcium_apart(rows: list[Weighing], components: dict[str, Component]) -> bool:
    """True when the macro salts hold calcium together with sulfate or phosphate."""
    macro_ions: set[str] = set()
    for r in rows:
        if r.weighed and stock_key(components[r.id], calcium_apart=False) == "macro":
            macro_ions.update(s for s, _ in components[r.id].species)
    return _CA in macro_ions and (_SULFATE in macro_ions or any(p in macro_ions for p in _PHOSPHATES))


def group_rows(rows: list[Weighing], components: dict[str, Component]) -> dict[str, list[Weighing]]:
    """Stock key -> the rows that go into it, keys in the order their first row comes."""
    apart = calcium_apart(rows, components)
    members: dict[str, list[Weighing]] = {}
    for r in rows:
        if not r.weighed or stock_key(components[r.id], calcium_apart=False) is None:
            continue
        members.setdefault(stock_key(components[r.id], apart), []).append(r)
    return members


def in_order_of_addition(keys) -> list[str]:
    """Stock keys sorted as they go into the medium (the order of STOCK_GROUPS, then by key)."""
    order = list(STOCK_GROUPS)
    return sorted(keys, key=lambda k: (order.index(_group_of(k)), k))


def _check_factor_names(factors: dict[str, float], members: dict[str, list[Weighing]]) -> None:
    """Refuse a factor for a stock this scheme does not have."""
    unknown = [k for k in factors if k not in members and f"pgr:{k}" not in members]
    if unknown:
        raise AmountError(f"no stock named {unknown[0]!r} in this scheme", field="stock_factor",
                          hint="stocks here: " + ", ".join(k.removeprefix("pgr:") for k in members))


# ---- what a stock can hold -----------------------------------------------------------------------
def solubility_fractions(items: list[tuple[Component, float]]) -> dict[str, float | None]:
    """Per component: fraction of its substance's saturation molality at 25 °C in a stock holding
    these [g per L of stock] (None without solubility data)."""
    moles = {c.id: g / c.molar_mass for c, g in items if c.molar_mass}
    anhydrous_g = sum({c.id: g * (c.anhydrous_molar_mass or 0) / c.molar_mass for c, g in items if c.molar_mass}
                      .values())
    hydrate_water = sum(g * c.hydrate_water * _WATER_G_PER_MOL / c.molar_mass for c, g in items if c.molar_mass)
    # water per litre of stock: displaced by the solutes at about 1 g/mL (a conservative guess) plus
    # the water of crystallisation
    water_kg = (max(1000.0 - anhydrous_g - hydrate_water, _MIN_WATER_G_PER_L) + hydrate_water) / 1000.0
    by_substance: dict[str, float] = {}
    for c, _ in items:
        if c.substance:
            by_substance[c.substance] = by_substance.get(c.substance, 0.0) + moles.get(c.id, 0.0)
    out: dict[str, float | None] = {}
    for c, _ in items:
        saturation = c.saturation_molality
        out[c.id] = None if saturation is None or not c.substance else by_substance[c.substance] / water_kg / saturation
    return out


def ion_pair_risk(items: list[tuple[Component, float]]) -> str | None:
    """Calcium sulfate / phosphate saturation in a stock holding these [g per L of stock] (Davies
    activities; screening only); the problem in words, or None."""
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


def check_stock(items: list[tuple[Component, float]], factor: float) -> list[str]:
    """Problems of a stock at ``factor`` × these [g per L of medium] (empty when it is safe)."""
    conc = [(c, g * factor) for c, g in items]
    problems = []
    for c, g in conc:
        if c.group == "growth_regulator" and g > PGR_STOCK_MAX_G_PER_L * 1.000001:
            problems.append(f"{c.display} at {g:.3g} g/L is above the usual {PGR_STOCK_MAX_G_PER_L:g} mg/mL "
                            "for a growth-regulator stock")
    for cid, fr in solubility_fractions(conc).items():
        if fr is not None and fr > SOLUBILITY_MARGIN:
            c = next(c for c, _ in conc if c.id == cid)
            problems.append(f"{c.display} would be at {100 * fr:.0f} % of its solubility "
                            f"(limit {100 * SOLUBILITY_MARGIN:.0f} %)")
    risk = ion_pair_risk(conc)
    if risk:
        problems.append(risk)
    return problems


_check_stock = check_stock  # the name the tests and older callers know


# ---- one stock -----------------------------------------------------------------------------------
def stock_volume_ml(ml_per_batch: float) -> float:
    """The standard stock volume [mL] that lasts about ten batches of ``ml_per_batch`` [mL]."""
    for v in STOCK_VOLUMES_ML:
        if v >= 10 * ml_per_batch:
            return v
    return max(STOCK_VOLUMES_ML[-1], ml_per_batch)


def _user_factor(user: float, label: str, key: str, items: list[tuple[Component, float]]) -> float:
    """A factor the user asked for, refused when it is below 1 or the stock would not stay dissolved."""
    if not math.isfinite(user) or user < 1:
        raise AmountError(f"stock factor {user:g} for {label} must be 1 or more", field="stock_factor")
    problems = check_stock(items, user)
    if problems:
        raise AmountError(f"stock '{label}' at {user:g}×: {problems[0]}", field=f"stock_factor {key}",
                          hint="choose a smaller factor, or leave it to mediaplan")
    return user


def _safe_factor(candidates: tuple[float, ...], items: list[tuple[Component, float]],
                 batch_ml: float) -> float | None:
    """The highest candidate factor that pipettes at least 0.1 mL and stays dissolved, or None."""
    ok = [f for f in candidates if batch_ml / f >= MIN_PIPETTE_ML and not check_stock(items, f)]
    return ok[0] if ok else None


def _no_stock_note(label: str, candidates: tuple[float, ...], items: list[tuple[Component, float]]) -> str:
    why = check_stock(items, candidates[-1])
    return (f"{label}: no safe stock even at {candidates[-1]:g}× ({why[0] if why else 'batch too small'}); "
            "weighed directly")


def _stock_note(key: str, ml_batch: float) -> tuple[str | None, bool]:
    """(note printed beside the stock, whether it is filter-sterilised) for stock ``key``."""
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
    return note, filt


def _make_stock(key: str, label: str, factor: float, items: list[tuple[Component, float]], batch_ml: float,
                volume_ml: float | None) -> Stock:
    """The stock ``key`` at ``factor`` for batches of ``batch_ml`` [mL]; ``volume_ml`` [mL] to make, or
    about ten batches' worth."""
    ml_batch = batch_ml / factor
    vol = volume_ml or stock_volume_ml(ml_batch)
    fractions = solubility_fractions([(c, g * factor) for c, g in items])
    sitems = []
    for c, g in items:
        g_stock = g * factor * vol / 1000.0
        sitems.append(StockItem(c.id, c.name, c.formula, g * factor, g_stock, fractions[c.id],
                                substock_for(g_stock) if g_stock < WEIGH_VIA_STOCK_G else None))
    note, filt = _stock_note(key, ml_batch)
    return Stock(key, label, factor, vol, ml_batch, tuple(sitems), filt, note)


# ---- the scheme ----------------------------------------------------------------------------------
def build_stocks(rows: list[Weighing], components: dict[str, Component], batch_ml: float,
                 factors: dict[str, float] | None = None, stock_volume_ml: float | None = None
                 ) -> tuple[list[Stock], list[Weighing], list[str]]:
    """Group rows into stocks for batches of ``batch_ml`` [mL]; returns (stocks, rows with their routes,
    notes).

    factors : stock key (or growth-regulator id) -> factor asked for; refused when unsafe
    stock_volume_ml : volume of every stock to make [mL] (default: about ten batches' worth)
    """
    factors = dict(factors or {})
    members = group_rows(rows, components)
    _check_factor_names(factors, members)
    stocks: list[Stock] = []
    notes: list[str] = []
    routed: dict[str, str] = {}
    for key in in_order_of_addition(members):
        rs = members[key]
        label, candidates = STOCK_GROUPS[_group_of(key)]
        if key.startswith("pgr:"):
            label = f"{rs[0].name}"
        items = [(components[r.id], r.grams / (batch_ml / 1000.0)) for r in rs]  # g per L of medium
        user = factors.get(key, factors.get(key.removeprefix("pgr:")))
        factor = (_user_factor(user, label, key, items) if user is not None
                  else _safe_factor(candidates, items, batch_ml))
        if factor is None:
            routed.update((r.id, "weigh") for r in rs)
            notes.append(_no_stock_note(label, candidates, items))
            continue
        stocks.append(_make_stock(key, label, factor, items, batch_ml, stock_volume_ml))
        routed.update((r.id, f"stock:{key}") for r in rs)
    out_rows = [r if r.id not in routed else r.with_route(routed[r.id]) for r in rows]
    return stocks, out_rows, notes
