"""Incipient plasmolysis: design a graded osmoticum series, then fit the counts.

Design
    Levels evenly spaced in water potential (not in concentration). For each level the osmoticum
    amount that brings the background (water, a buffer or a medium) to that potential is found with
    the full non-ideal model (:class:`~mediaplan.model.MediumModel`, ZSR mixing) and ``brentq``.
    Preparation is given by weight (osmoticum per litre of finished solution, everything made up
    to volume) and, when a stock is named, as volumes of stock and diluent. The stock is the
    osmoticum dissolved in the background; the diluent is the background. The mixture's composition
    per kg of water follows from the water content per litre of stock and diluent (the model's
    solution density), not from C1V1 = C2V2; the mixing ratio is solved (brentq) so that the mixture
    has the level's water potential, which in water means the level's osmoticum molality exactly.
    The two volumes are then scaled so that the mixture's own volume is the batch volume.

Fit
    Counts (plasmolysed of total, per level, replicates allowed) are fitted by a binomial GLM in
    water potential with a logit or probit link, by iteratively reweighted least squares (Fisher
    scoring). The water potential at which half the cells are plasmolysed, psi50 = -b0/b1, gets a
    Fieller (1954) confidence interval. When Pearson's chi-square shows overdispersion (p < 0.05)
    the covariance is multiplied by the heterogeneity factor chi2/df and the t quantile on df
    replaces the normal one (Finney 1971). At psi50 turgor is taken as zero, so the cells' osmotic
    potential equals the solution's water potential; its osmolality follows from
    :mod:`mediaplan.thermo.potential` at the series temperature.

References
----------
Fieller EC (1954) Some problems in interval estimation. J R Stat Soc B 16:175-185.
Finney DJ (1971) Probit Analysis, 3rd ed. Cambridge University Press (heterogeneity factor, ch. 4).
McCullagh P, Nelder JA (1989) Generalized Linear Models, 2nd ed. Chapman & Hall (IRLS, ch. 2, 4).
Albert A, Anderson JA (1984) Biometrika 71:1-10 (existence of the logistic MLE; separation).
"""

from __future__ import annotations

import csv
import math
import re
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field
from pathlib import Path

import numpy as np

from mediaplan.catalog import Catalog, Component, get_catalog
from mediaplan.errors import AmountError, FitError, InfeasibleError, MediaplanError
from mediaplan.evaluate import finite  # no NaN or infinity in any output (shared rule)
from mediaplan.model import compiled
from mediaplan.recipe import Recipe
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0
from mediaplan.units import Amount, parse_amount

#: grid used to bracket each level before brentq refines it (one batched model call)
_GRID = 48
#: solution volume that solutes may occupy before the model refuses (model.solve stops at 95 %)
_MAX_SOLUTE_VOLUME = 0.9
#: relative tolerance of brentq on the amount [-]
_XTOL = 1e-10

LINKS = ("logit", "probit")


# =============================================================================================
# Design
# =============================================================================================

def potentials_between(start: float, stop: float, steps: int) -> np.ndarray:
    """``steps`` water potentials [Pa] evenly spaced from ``start`` to ``stop`` (both included)."""
    _check_steps(steps)
    if start == stop:
        raise AmountError("the first and last level are the same potential", field="--to",
                          hint="give two different potentials, e.g. --from \"-0.2 MPa\" --to \"-1.6 MPa\"")
    return np.linspace(start, stop, steps)


def potentials_around(centre: float, step: float, steps: int) -> np.ndarray:
    """``steps`` water potentials [Pa] centred on ``centre`` and ``step`` [Pa] apart, least negative first."""
    _check_steps(steps)
    step = abs(step)
    if step == 0:
        raise AmountError("the step between levels is zero", field="--step", hint='e.g. --step "0.1 MPa"')
    psi = centre + step * (np.arange(steps) - (steps - 1) / 2.0)[::-1]
    if psi[0] >= 0:
        raise AmountError(f"the series around {centre / 1e6:g} MPa with steps of {step / 1e6:g} MPa reaches "
                          f"{psi[0] / 1e6:+.3g} MPa, which no solution has", field="--step",
                          hint="use a smaller step, fewer levels or a more negative centre")
    return psi


def _check_steps(steps: int) -> None:
    if not isinstance(steps, int) or steps < 2:
        raise AmountError(f"a series needs at least 2 levels (got {steps})", field="--steps",
                          hint="the fit needs 3 or more levels; 6-10 is usual")
    if steps > 60:
        raise AmountError(f"{steps} levels is more than anyone counts", field="--steps", hint="use 60 or fewer")


@dataclass
class SeriesLevel:
    """One solution of the series (units in the field names)."""

    level: int
    water_potential_mpa: float
    osmolality_mosmol_per_kg: float
    water_activity: float
    molality_mol_per_kg: float  # osmoticum per kg water
    molarity_mmol_per_l: float  # osmoticum per litre of solution
    grams_per_litre: float  # osmoticum, in the form as sold, per litre of solution
    grams: float  # osmoticum to weigh for the batch volume
    density_kg_per_l: float
    water_kg_per_l: float
    stock_ml: float | None = None
    diluent_ml: float | None = None

    @property
    def amount(self) -> Amount:
        """The osmoticum as a recipe amount (g/L of solution, 7 significant digits)."""
        return Amount(self.grams_per_litre, "mass_conc", f"{self.grams_per_litre:.7g} g/L")


@dataclass
class StockInfo:
    """The stock solution: osmoticum dissolved in the background (units in the field names)."""

    amount: str
    molality_mol_per_kg: float
    grams_per_litre: float
    water_potential_mpa: float
    density_kg_per_l: float
    water_kg_per_l: float
    total_ml: float  # stock needed for the whole series
    diluent_total_ml: float


@dataclass
class SeriesDesign:
    """A plasmolysis series: background, osmoticum, levels and how to make them."""

    osmoticum: str
    osmoticum_name: str
    temperature_c: float
    volume_ml: float
    background: str
    background_potential_mpa: float
    spacing: str
    levels: list[SeriesLevel]
    stock: StockInfo | None = None
    warnings: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        d = asdict(self)
        return finite(d)

    def plan_table(self) -> dict:
        """The ``[series]`` table of a plan file: the design plus empty counts per level."""
        t: dict = {"osmoticum": self.osmoticum, "spacing": self.spacing, "volume": f"{self.volume_ml:g} mL",
                   "temperature": f"{self.temperature_c:g} degC",
                   "background_potential_mpa": round(self.background_potential_mpa, 6)}
        if self.stock is not None:
            t["stock"] = self.stock.amount
        rows = []
        for lv in self.levels:
            row = {"level": lv.level, "water_potential_mpa": round(lv.water_potential_mpa, 6),
                   "osmolality_mosmol_per_kg": round(lv.osmolality_mosmol_per_kg, 3),
                   "molality_mol_per_kg": _sig(lv.molality_mol_per_kg, 7),
                   "grams_per_litre": _sig(lv.grams_per_litre, 7), "grams": _sig(lv.grams, 5)}
            if lv.stock_ml is not None:
                row["stock_ml"] = round(lv.stock_ml, 3)
                row["diluent_ml"] = round(lv.diluent_ml, 3)
            row["plasmolysed"] = []
            row["total"] = []
            rows.append(row)
        t["levels"] = rows
        return t


def _sig(x: float, digits: int) -> float:
    return float(f"{x:.{digits}g}")


class _Mixer:
    """The background plus one osmoticum, compiled once; osmolality for batches of osmoticum amounts."""

    def __init__(self, background: Recipe, osmoticum: Component, catalog: Catalog) -> None:
        lines = background.lines(catalog)
        #: amount of the same substance already in the background (the levels add to it), or None
        self.already = next((ln.amount.text for ln in lines if ln.component.id == osmoticum.id or (
            osmoticum.substance and ln.component.substance == osmoticum.substance)), None)
        if not osmoticum.species or not osmoticum.molar_mass:
            raise MediaplanError(f"{osmoticum.id} dissolves into nothing the model counts", field="--with",
                                 hint="choose a solute such as mannitol, sorbitol, sucrose or KNO3")
        self.T = background.temperature_k
        self.model = compiled(catalog, [ln.component for ln in lines] + [osmoticum], self.T)
        n, b = self.model.amounts_to_arrays([ln.amount for ln in lines] + [Amount(0.0, "molar", "0 mM")])
        self.n0, self.b0 = n, b
        self.k = len(lines)
        self.osmoticum = osmoticum
        v = self.model.v[self.k]
        free = 1.0 - float(n @ self.model.v)
        self.n_max = max(free - (1 - _MAX_SOLUTE_VOLUME), 0.0) / v if v > 0 else 2e4  # mol/m^3

    def state(self, n_x: np.ndarray):
        n_x = np.atleast_1d(np.asarray(n_x, dtype=float))
        n = np.tile(self.n0, (n_x.size, 1))
        b = np.tile(self.b0, (n_x.size, 1))
        n[:, self.k] = n_x
        return _solve(self.model, n, b)

    def osmolality(self, n_x) -> np.ndarray:
        return self.state(n_x).mix.osmolality

    def water_and_solutes(self, st) -> tuple[np.ndarray, np.ndarray]:
        """kg water per m^3 and kg anhydrous solutes per m^3 of each state in the batch."""
        return st.water_kg_per_m3, st.n_per_m3 @ self.model.M_anh


def _solve(model, n: np.ndarray, b: np.ndarray):
    """model.solve, quiet about the 0/0 that the ZSR step meets on a row of pure water (result is exact)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return model.solve(n, b)


def _bracket_and_solve(f_batch, targets: np.ndarray, lo: float, hi: float, what: str) -> np.ndarray:
    """x in [lo, hi] with f(x) = target for each target; f increasing.

    One batched call on a grid brackets every target; a second batched call evaluates the linear
    interpolation of each bracket, which tightens it; ``brentq`` then refines each root. Values already
    computed are served from a cache, so brentq's first two calls cost nothing (a model call costs the
    same for one row as for fifty).
    """
    from scipy.optimize import brentq

    grid = lo + (hi - lo) * np.linspace(0.0, 1.0, _GRID) ** 1.5
    vals = f_batch(grid)
    ok = np.isfinite(vals)
    grid, vals = grid[ok], vals[ok]
    j = np.searchsorted(vals, targets)
    if np.any(j >= len(vals)) or np.any(np.diff(vals) <= 0):
        i = int(np.argmax(j >= len(vals))) if np.any(j >= len(vals)) else 0
        raise InfeasibleError(f"{what} {i + 1} cannot be reached: the model does not go that far",
                              hint="choose a less negative level")
    j = np.maximum(j, 1)
    a, c = grid[j - 1], grid[j]
    fa, fc = vals[j - 1], vals[j]
    guess = a + (targets - fa) * (c - a) / (fc - fa)
    fg = f_batch(guess)
    cache: dict[float, float] = {}
    out = np.empty(targets.size)
    for i, t in enumerate(targets):
        if fg[i] == t:
            out[i] = guess[i]
            continue
        lo_i, hi_i = (guess[i], c[i]) if fg[i] < t else (a[i], guess[i])
        flo, fhi = (fg[i], fc[i]) if fg[i] < t else (fa[i], fg[i])
        cache.clear()
        cache.update({lo_i: flo - t, hi_i: fhi - t})

        def f(x, t=t):
            if x not in cache:
                cache[x] = float(f_batch(np.array([x]))[0]) - t
            return cache[x]

        out[i] = brentq(f, lo_i, hi_i, xtol=_XTOL * max(abs(hi_i), 1e-9), rtol=4 * np.finfo(float).eps,
                        maxiter=200)
    return out


def design_series(background: Recipe, osmoticum: str, potentials_pa: Sequence[float], *,
                  catalog: Catalog | None = None, stock: str | None = None, spacing: str = "") -> SeriesDesign:
    """Design a plasmolysis series.

    Parameters
    ----------
    background : the solvent: its volume is the batch volume of each level, its temperature the series
        temperature; an empty recipe is water
    osmoticum : catalog id, formula or name of the osmoticum
    potentials_pa : water potential of each level [Pa] (negative)
    stock : amount of osmoticum in a stock made up in the background (``"1 mol/kg"``, ``"200 g/L"``),
        or None for preparation by weight only
    spacing : description of how the potentials were chosen (kept in the plan file)

    Raises
    ------
    InfeasibleError when a level is less negative than the background or beyond what dissolves.
    """
    catalog = catalog or get_catalog()
    comp = catalog.resolve(osmoticum, field="--with").component
    mixer = _Mixer(background, comp, catalog)
    T = mixer.T
    psi = np.asarray(potentials_pa, dtype=float)
    y_target = potential.osmolality_from_potential(psi, T)
    y_bg = float(mixer.osmolality(np.array([0.0]))[0])
    psi_bg = float(potential.potential_from_osmolality(y_bg, T))
    above = np.nonzero(y_target <= y_bg)[0]
    if above.size:
        i = int(above[0])
        raise InfeasibleError(f"level {i + 1} ({psi[i] / 1e6:.4g} MPa) is not more negative than the background "
                              f"itself ({psi_bg / 1e6:.4g} MPa)", field="--from",
                              hint="start the series below the background's potential, or dilute the background")
    hi = _upper_bound(mixer, float(y_target.max()), psi, T, comp)
    n_x = _bracket_and_solve(mixer.osmolality, y_target, 0.0, hi, "level")
    st = mixer.state(n_x)
    W, solutes = mixer.water_and_solutes(st)
    M = mixer.model.M[mixer.k]
    vol_l = background.volume_m3 * 1000.0
    levels = []
    for i in range(psi.size):
        y = float(st.mix.osmolality[i])
        gpl = float(n_x[i] * M)
        levels.append(SeriesLevel(
            level=i + 1, water_potential_mpa=float(potential.potential_from_osmolality(y, T)) / 1e6,
            osmolality_mosmol_per_kg=y * 1000.0, water_activity=float(potential.water_activity(y)),
            molality_mol_per_kg=float(st.molality[i, mixer.k]), molarity_mmol_per_l=float(n_x[i]),
            grams_per_litre=gpl, grams=gpl * vol_l, density_kg_per_l=float(W[i] + solutes[i]) / 1000.0,
            water_kg_per_l=float(W[i]) / 1000.0))
    design = SeriesDesign(osmoticum=comp.id, osmoticum_name=comp.name, temperature_c=T - T0,
                          volume_ml=round(vol_l * 1000.0, 9), background=describe_background(background),
                          background_potential_mpa=psi_bg / 1e6 + 0.0, spacing=spacing, levels=levels)
    if stock is not None:
        _add_stock(design, mixer, stock, y_target, vol_l)
    design.warnings = _design_warnings(design, comp, mixer)
    return design


def _upper_bound(mixer: _Mixer, y_max: float, psi: np.ndarray, T: float, comp: Component) -> float:
    """An amount [mol/m^3] beyond the most concentrated level (the model must reach it)."""
    hi = min(2.5 * y_max * 1000.0 + 10.0, mixer.n_max)
    while True:
        y_hi = float(mixer.osmolality(np.array([hi]))[0])
        if math.isfinite(y_hi) and y_hi > y_max:
            return hi
        if hi >= mixer.n_max:
            raise InfeasibleError(f"{comp.id} cannot bring the background down to {psi.min() / 1e6:.4g} MPa: "
                                  "the solution would be mostly solute", field="--to",
                                  hint="choose a less negative last level or another osmoticum")
        hi = min(hi * 2.0, mixer.n_max)


def _add_stock(design: SeriesDesign, mixer: _Mixer, stock_text: str, y_target: np.ndarray, vol_l: float) -> None:
    """Volumes of stock and diluent per level, from the water content of each (not C1V1 = C2V2)."""
    amt = parse_amount(stock_text, field="--stock")
    model, k = mixer.model, mixer.k
    n_s, b_s = model.amounts_to_arrays([Amount(0.0, "molar", "0 mM")] * k + [amt])
    n_stock, b_stock = mixer.n0.copy(), mixer.b0.copy()
    n_stock[k], b_stock[k] = n_s[k], b_s[k]
    st_s = _solve(model, n_stock[None, :], b_stock[None, :])
    st_d = _solve(model, mixer.n0[None, :], mixer.b0[None, :])
    y_s = float(st_s.mix.osmolality[0])
    if not math.isfinite(y_s) or y_s < float(y_target.max()) * (1 - 1e-9):
        psi_s = float(potential.potential_from_osmolality(y_s, mixer.T)) / 1e6
        raise InfeasibleError(f"the stock ({stock_text}, {psi_s:.4g} MPa) is weaker than the last level "
                              f"({design.levels[-1].water_potential_mpa:.4g} MPa)", field="--stock",
                              hint="make the stock more concentrated than the most negative level")
    W_s, sol_s = (float(a[0]) for a in mixer.water_and_solutes(st_s))
    W_d = float(st_d.water_kg_per_m3[0])
    # mol of every component per m^3 of stock and of diluent
    c_s, c_d = st_s.n_per_m3[0], st_d.n_per_m3[0]

    def mix_state(f: np.ndarray):
        """Mixture of volume fraction f of stock (before mixing), as amounts per kg water."""
        f = np.atleast_1d(f)[:, None]
        water = f * W_s + (1 - f) * W_d
        b = (f * c_s + (1 - f) * c_d) / water
        return _solve(model, np.zeros_like(b), b), water[:, 0]

    fr = _bracket_and_solve(lambda f: mix_state(f)[0].mix.osmolality, y_target, 0.0, 1.0, "level")
    st_m, water = mix_state(fr)
    # the mixture's own volume per m^3 of (stock + diluent) volumes: water / (water per m^3 of mixture)
    shrink = water / st_m.water_kg_per_m3
    total_ml = vol_l * 1000.0
    for i, lv in enumerate(design.levels):
        scale = total_ml / shrink[i]
        lv.stock_ml = float(fr[i] * scale)
        lv.diluent_ml = float((1 - fr[i]) * scale)
    design.stock = StockInfo(
        amount=amt.text, molality_mol_per_kg=float(st_s.molality[0, k]), grams_per_litre=float(c_s[k] * model.M[k]),
        water_potential_mpa=float(potential.potential_from_osmolality(y_s, mixer.T)) / 1e6,
        density_kg_per_l=(W_s + sol_s) / 1000.0, water_kg_per_l=W_s / 1000.0,
        total_ml=float(sum(lv.stock_ml for lv in design.levels)),
        diluent_total_ml=float(sum(lv.diluent_ml for lv in design.levels)))


def _design_warnings(design: SeriesDesign, comp: Component, mixer: _Mixer) -> list[str]:
    out = []
    if comp.reflection_coefficient is not None and comp.reflection_coefficient < 0.9:
        out.append(f"{comp.id} enters cells (reflection coefficient {comp.reflection_coefficient:g}): the cells "
                   "recover from plasmolysis and the 50 % point drifts; count quickly or use mannitol or sorbitol")
    elif comp.reflection_coefficient is None and any(":" not in sp and "[" in sp for sp, _ in comp.species):
        out.append(f"{comp.id} is an electrolyte whose ions may enter the cells: plasmolysis can reverse with time")
    if comp.solubility and comp.anhydrous_molar_mass:
        m_sat = comp.solubility * 10.0 / comp.anhydrous_molar_mass
        top = max(lv.molality_mol_per_kg for lv in design.levels)
        if top > m_sat:
            out.append(f"the most concentrated level ({top:.3g} mol/kg) is above the solubility of {comp.id} "
                       f"({m_sat:.3g} mol/kg at 25 °C): it will not dissolve")
        elif top > 0.8 * m_sat:
            out.append(f"the most concentrated level is at {100 * top / m_sat:.0f} % of the solubility of {comp.id}: "
                       "it may crystallise in the cold")
        if design.stock is not None and design.stock.molality_mol_per_kg > m_sat:
            out.append(f"the stock ({design.stock.molality_mol_per_kg:.3g} mol/kg) is above the solubility of "
                       f"{comp.id} ({m_sat:.3g} mol/kg at 25 °C): it will not dissolve")
        elif design.stock is not None and design.stock.molality_mol_per_kg > 0.8 * m_sat:
            out.append(f"the stock is at {100 * design.stock.molality_mol_per_kg / m_sat:.0f} % of the solubility of "
                       f"{comp.id}: keep it warm and check for crystals before use")
    model = mixer.model
    for j, kk in enumerate(model.neutral_idx):
        p = model.neutral_params[j]
        top = max(lv.molality_mol_per_kg for lv in design.levels) if model.species[kk] in dict(comp.species) else 0
        if top > p.m_max:
            out.append(f"{model.species[kk]} above {p.m_max:g} mol/kg is beyond its model's range: extrapolated")
    if model.species and comp.species and all(sp in model.ideal_neutral for sp, _ in comp.species):
        out.append(f"no published model for {comp.id}: treated as an ideal solution")
    if mixer.already is not None:
        out.append(f"the background already holds {comp.id} ({mixer.already}): the amounts shown are added on top "
                   "of it")
    if len(design.levels) < 5:
        out.append("fewer than 5 levels: the fit will have few degrees of freedom (6-10 levels are usual)")
    return out


def describe_background(recipe: Recipe) -> str:
    """A short description of the solvent (``water``, ``ms1962 x0.5 + MES 0.5 g/L``)."""
    parts = []
    if recipe.base:
        parts.append(recipe.base + (f" x{recipe.strength:g}" if recipe.strength != 1 else ""))
    parts += [f"{cid} {a.text}" for cid, a in recipe.amounts if not a.is_zero]
    return " + ".join(parts) if parts else "water"


def potential_of_amounts(background: Recipe, osmoticum: str, amounts: Sequence[Amount], *,
                         catalog: Catalog | None = None) -> np.ndarray:
    """Water potential [Pa] of the background with each amount of the osmoticum (one batched model call)."""
    catalog = catalog or get_catalog()
    comp = catalog.resolve(osmoticum, field="--with").component
    mixer = _Mixer(background, comp, catalog)
    n = np.tile(mixer.n0, (len(amounts), 1))
    b = np.tile(mixer.b0, (len(amounts), 1))
    for i, a in enumerate(amounts):
        ni, bi = mixer.model.amounts_to_arrays([Amount(0.0, "molar", "0 mM")] * mixer.k + [a])
        n[i, mixer.k], b[i, mixer.k] = ni[mixer.k], bi[mixer.k]
    y = _solve(mixer.model, n, b).mix.osmolality
    return potential.potential_from_osmolality(y, mixer.T)


# =============================================================================================
# Counts
# =============================================================================================

@dataclass
class Counts:
    """Observed counts, one row per counted sample (replicates are separate rows)."""

    water_potential_mpa: np.ndarray
    plasmolysed: np.ndarray
    total: np.ndarray
    source: str
    temperature_k: float | None = None
    notes: list[str] = field(default_factory=list)

    @property
    def n_levels(self) -> int:
        return int(np.unique(self.water_potential_mpa).size)


POTENTIAL_COLUMN = "water_potential_mpa"
_SUFFIX_UNITS = {"_mol_per_kg": "mol/kg", "_mmol_per_kg": "mmol/kg", "_mol_per_l": "mol/L", "_mmol_per_l": "mmol/L",
                 "_g_per_l": "g/L", "_mg_per_l": "mg/L", "_mm": "mM", "_m": "M"}
_PAREN = re.compile(r"^\s*(?P<name>.*?)\s*[\(\[](?P<unit>[^\)\]]+)[\)\]]\s*$")


@dataclass
class _LevelColumn:
    index: int
    header: str
    kind: str  # "potential" | "osmolality" | "amount"
    unit: str
    osmoticum: str | None = None


def _classify_column(header: str, idx: int, catalog: Catalog | None) -> _LevelColumn | None:
    """Recognise a level column: potential, osmolality or an osmoticum amount, with its unit."""
    h = header.strip()
    low = h.lower()
    if low == POTENTIAL_COLUMN:
        return _LevelColumn(idx, h, "potential", "MPa")
    if low == "osmolality_mosmol_per_kg":
        return _LevelColumn(idx, h, "osmolality", "mOsm/kg")
    m = _PAREN.match(h)
    if m:
        name, unit = m.group("name"), m.group("unit").strip()
        from mediaplan.units import ureg

        try:
            dim = ureg.parse_units(unit.replace("mOsm", "mosmol").replace("Osm", "osmol")).dimensionality
        except Exception:  # noqa: BLE001 - an unreadable unit means: not a level column
            dim = None
        if dim == ureg.parse_units("Pa").dimensionality:
            return _LevelColumn(idx, h, "potential", unit)
        if dim == ureg.parse_units("osmol/kg").dimensionality:
            return _LevelColumn(idx, h, "osmolality", unit)
        try:
            parse_amount(f"1 {unit}")
        except AmountError:
            return None
        return _LevelColumn(idx, h, "amount", unit, _osmoticum_of(name, catalog))
    for suffix, unit in _SUFFIX_UNITS.items():
        if low.endswith(suffix) and len(low) > len(suffix):
            return _LevelColumn(idx, h, "amount", unit, _osmoticum_of(h[: -len(suffix)], catalog))
    return None


def _osmoticum_of(name: str, catalog: Catalog | None) -> str | None:
    if catalog is None or not name or name.lower() in ("concentration", "conc", "amount", "level"):
        return None
    try:
        return catalog.resolve(name).component.id
    except MediaplanError:
        return None


def read_counts_csv(path: str | Path, *, osmoticum: str | None = None, background: Recipe | None = None,
                    catalog: Catalog | None = None) -> Counts:
    """Read counts from a CSV file.

    The header needs ``plasmolysed`` and ``total`` and a level column: ``water_potential_mpa`` (used
    as is), ``osmolality_mosmol_per_kg``, a potential with its unit (``psi (bar)``), or an osmoticum
    amount (``mannitol_mol_per_kg``, ``concentration (mM)``): amounts are converted to water potential
    with the model, in ``background`` (water if None). Lines starting with ``#`` and blank lines are
    skipped; a level whose two count cells are both empty (not counted yet) is skipped too.
    """
    p = Path(path)
    file = str(p)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise FitError("no such counts file", file=file, hint="check the path") from None
    except UnicodeDecodeError:
        raise FitError("not UTF-8 text", file=file, hint="save the counts as CSV (UTF-8)") from None
    except OSError as exc:
        raise FitError(f"cannot read ({exc.strerror})", file=file) from None
    except ValueError:
        raise FitError("not a usable file name", file=repr(file), hint="check the path") from None
    rows: list[tuple[int, list[str]]] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        if not raw.strip() or raw.lstrip().startswith("#"):
            continue
        rows.append((lineno, next(csv.reader([raw]))))
    if not rows:
        raise FitError("the file holds no header and no counts", file=file,
                       hint=f"first line: {POTENTIAL_COLUMN},plasmolysed,total")
    head_line, header = rows[0]
    names = [h.strip().lower() for h in header]
    missing = [c for c in ("plasmolysed", "total") if c not in names]
    if missing:
        raise FitError(f"missing column{'s' if len(missing) > 1 else ''} {', '.join(missing)} (found: "
                       f"{', '.join(h.strip() for h in header)})", file=file, line=head_line,
                       hint=f"the header must be {POTENTIAL_COLUMN},plasmolysed,total")
    i_pl, i_tot = names.index("plasmolysed"), names.index("total")
    cols = [c for c in (_classify_column(h, i, catalog or _lazy_catalog(header)) for i, h in enumerate(header))
            if c is not None]
    if not cols:
        raise FitError(f"no level column (found: {', '.join(h.strip() for h in header)})", file=file,
                       line=head_line, hint=f"name the level column {POTENTIAL_COLUMN} (or e.g. mannitol_mol_per_kg)")
    col = next((c for c in cols if c.kind == "potential"), None) or \
        next((c for c in cols if c.kind == "osmolality"), None) or cols[0]
    xs: list[float] = []
    ys: list[int] = []
    ns: list[int] = []
    lines: list[int] = []
    notes: list[str] = []
    skipped = 0
    for lineno, cells in rows[1:]:
        if len(cells) != len(header):
            raise FitError(f"{len(cells)} cells where the header has {len(header)}", file=file, line=lineno,
                           hint="one value per column, separated by commas")
        if not cells[i_pl].strip() and not cells[i_tot].strip():
            skipped += 1
            continue
        x = _number(cells[col.index], file, lineno, col.header)
        y = _count(cells[i_pl], file, lineno, header[i_pl].strip())
        n = _count(cells[i_tot], file, lineno, header[i_tot].strip())
        if n == 0:
            raise FitError("total is 0: no cells counted", file=file, line=lineno, field=header[i_tot].strip(),
                           hint="count at least one cell, or leave both count cells empty to skip the level")
        if y > n:
            raise FitError(f"plasmolysed ({y}) is more than total ({n})", file=file, line=lineno,
                           field=header[i_pl].strip(), hint="total counts every cell seen, plasmolysed or not")
        xs.append(x)
        ys.append(y)
        ns.append(n)
        lines.append(lineno)
    if skipped:
        notes.append(f"{skipped} level(s) without counts skipped")
    x = np.array(xs, dtype=float)
    if col.kind == "potential":
        from mediaplan.units import Q_

        factor = float(Q_(1.0, col.unit).to("MPa").magnitude)
        x = x * factor
        if np.any(x > 0):
            bad = lines[int(np.argmax(x > 0))]
            raise FitError("a water potential is positive", file=file, line=bad, field=col.header,
                           hint="potentials of solutions are negative (e.g. -0.8)")
        if col.unit != "MPa":
            notes.append(f"levels read from '{col.header}' and converted to MPa")
    else:
        T = background.temperature_k if background is not None else 298.15
        if col.kind == "osmolality":
            from mediaplan.units import Q_

            osm = x * float(Q_(1.0, col.unit.replace("mOsm", "mosmol").replace("Osm", "osmol")).to("osmol/kg")
                            .magnitude)
            x = potential.potential_from_osmolality(osm, T) / 1e6
            notes.append(f"levels read from '{col.header}' and converted to water potential at {T - T0:g} °C")
        else:
            osmo = osmoticum or col.osmoticum
            if osmo is None:
                raise FitError(f"column '{col.header}' gives amounts but not of what", file=file, line=head_line,
                               field=col.header, hint="name the osmoticum with --with (e.g. --with mannitol)")
            amounts = []
            for v, ln in zip(x, lines, strict=True):
                try:
                    amounts.append(parse_amount(f"{float(v)!r} {col.unit}", field=col.header))
                except AmountError as exc:
                    raise exc.located(file=file, line=ln) from None
            bg = background or Recipe()
            x = potential_of_amounts(bg, osmo, amounts, catalog=catalog) / 1e6
            notes.append(f"levels read from '{col.header}' ({osmo} in {describe_background(bg)}) and converted to "
                         f"water potential with the non-ideal model at {bg.temperature_k - T0:g} °C")
    counts = Counts(x, np.array(ys, dtype=float), np.array(ns, dtype=float), file,
                    background.temperature_k if background is not None else None, notes)
    _check_counts(counts, file)
    return counts


def _lazy_catalog(header: Sequence[str]) -> Catalog | None:
    """The catalog only when a column might name an osmoticum (keeps plain CSV reading cheap)."""
    if any(h.strip().lower() == POTENTIAL_COLUMN for h in header):
        return None
    return get_catalog()


def _number(cell: str, file: str, line: int, column: str) -> float:
    try:
        v = float(cell.strip())
    except ValueError:
        raise FitError(f"'{cell.strip()}' is not a number", file=file, line=line, field=column,
                       hint="write a plain number in this column") from None
    if not math.isfinite(v):
        raise FitError(f"'{cell.strip()}' is not a finite number", file=file, line=line, field=column)
    return v


def _count(cell: str, file: str, line: int, column: str) -> int:
    s = cell.strip()
    if not s:
        raise FitError("empty count", file=file, line=line, field=column,
                       hint="fill in both counts, or leave both empty to skip the level")
    v = _number(s, file, line, column)
    if v < 0 or v != int(v):
        raise FitError(f"'{s}' is not a whole number of cells", file=file, line=line, field=column,
                       hint="counts are whole numbers, 0 or more")
    return int(v)


def counts_from_series(series: dict, *, file: str | None = None, temperature_k: float | None = None) -> Counts:
    """Counts from a plan's ``[series]`` table (``plasmolysed``/``total`` lists per level)."""
    levels = series.get("levels")
    if not isinstance(levels, list) or not levels:
        raise FitError("the [series] table has no levels", file=file, field="series.levels",
                       hint="design a series first: mediaplan series ... --write PLAN.toml")
    xs, ys, ns = [], [], []
    skipped = 0
    for i, lv in enumerate(levels, start=1):
        where = f"series.levels[{i}]"
        if not isinstance(lv, dict):
            raise FitError("a level must be a table", file=file, field=where)
        x = lv.get(POTENTIAL_COLUMN)
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x) or x > 0:
            raise FitError(f"{POTENTIAL_COLUMN} must be a negative number", file=file,
                           field=f"{where}.{POTENTIAL_COLUMN}")
        pl, tot = lv.get("plasmolysed", []), lv.get("total", [])
        pl = pl if isinstance(pl, list) else [pl]
        tot = tot if isinstance(tot, list) else [tot]
        if len(pl) != len(tot):
            raise FitError(f"{len(pl)} plasmolysed counts but {len(tot)} totals", file=file, field=where,
                           hint="one plasmolysed count and one total per replicate")
        if not pl:
            skipped += 1
        for r, (y, n) in enumerate(zip(pl, tot, strict=True), start=1):
            for name, v in (("plasmolysed", y), ("total", n)):
                if isinstance(v, bool) or not isinstance(v, (int, float)) or v < 0 or v != int(v):
                    raise FitError(f"{name} {v!r} is not a whole number of cells", file=file,
                                   field=f"{where}.{name}[{r}]", hint="counts are whole numbers, 0 or more")
            if n == 0:
                raise FitError("total is 0: no cells counted", file=file, field=f"{where}.total[{r}]")
            if y > n:
                raise FitError(f"plasmolysed ({y}) is more than total ({n})", file=file,
                               field=f"{where}.plasmolysed[{r}]")
            xs.append(float(x))
            ys.append(float(y))
            ns.append(float(n))
    notes = [f"{skipped} level(s) without counts skipped"] if skipped else []
    counts = Counts(np.array(xs), np.array(ys), np.array(ns), file or "plan", temperature_k, notes)
    _check_counts(counts, file)
    return counts


def _check_counts(c: Counts, file: str | None) -> None:
    if c.n_levels < 3:
        raise FitError(f"{c.n_levels} counted level{'s' if c.n_levels != 1 else ''}: a fit needs at least 3",
                       file=file, hint="count cells at 3 or more levels (6-10 is usual)")


# =============================================================================================
# Binomial GLM by IRLS
# =============================================================================================

@dataclass
class GLMResult:
    """Maximum-likelihood fit of p = F(b0 + b1 x) to binomial counts."""

    link: str
    coef: np.ndarray  # [b0, b1] (b1 per MPa)
    cov: np.ndarray  # unscaled covariance (inverse Fisher information)
    mu: np.ndarray  # fitted proportions
    deviance: float
    pearson_chi2: float
    df: int
    iterations: int
    converged: bool


def inverse_link(eta, link: str):
    """p [-] from the linear predictor."""
    eta = np.asarray(eta, dtype=float)
    if link == "logit":
        return 0.5 * (1.0 + np.tanh(0.5 * eta))  # = 1/(1+exp(-eta)), without overflow
    from scipy.stats import norm

    return norm.cdf(eta)


def link_fn(p, link: str):
    """The linear predictor from p [-]."""
    p = np.asarray(p, dtype=float)
    if link == "logit":
        return np.log(p / (1 - p))
    from scipy.stats import norm

    return norm.ppf(p)


def _mu_and_derivative(eta: np.ndarray, link: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """mu, 1 - mu (computed without cancellation) and dmu/deta."""
    if link == "logit":
        mu = inverse_link(eta, link)
        q = inverse_link(-eta, link)
        return mu, q, mu * q
    from scipy.stats import norm

    return norm.cdf(eta), norm.sf(eta), norm.pdf(eta)


def _check_link(link: str) -> None:
    if link not in LINKS:
        raise FitError(f"unknown link {link!r}", field="--link", hint="use logit or probit")


def fit_glm(x, y, n, link: str = "logit", *, max_iter: int = 100, tol: float = 1e-13) -> GLMResult:
    """Binomial GLM with an intercept and a slope in x, by IRLS (Fisher scoring).

    Parameters
    ----------
    x : level of each row [MPa]; y : plasmolysed cells; n : cells counted
    link : ``logit`` or ``probit``

    Notes
    -----
    Starts from mu = (y + 1/2)/(n + 1) and iterates the weighted least-squares step with weights
    n (dmu/deta)^2 / (mu (1 - mu)) and working response eta + (y/n - mu)/(dmu/deta) until the
    deviance changes by less than ``tol`` relative (McCullagh & Nelder 1989, sect. 2.5).
    """
    _check_link(link)
    x, y, n = (np.asarray(a, dtype=float) for a in (x, y, n))
    X = np.column_stack([np.ones_like(x), x])
    mu = (y + 0.5) / (n + 1.0)
    eta = link_fn(mu, link)
    dev_old = math.inf
    coef = np.zeros(2)
    converged = False
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 - the count is reported
        mu, q, d = _mu_and_derivative(eta, link)
        var = np.maximum(mu * q, 1e-300)
        w = n * d * d / var
        z = eta + (y / n - mu) / np.where(d > 0, d, 1e-300)
        XtW = X.T * w
        coef = np.linalg.solve(XtW @ X, XtW @ z)
        eta = X @ coef
        dev = _deviance(y, n, inverse_link(eta, link), _mu_and_derivative(eta, link)[1])
        if abs(dev - dev_old) <= tol * (abs(dev) + 0.1):
            converged = True
            break
        dev_old = dev
    mu, q, d = _mu_and_derivative(eta, link)
    w = n * d * d / np.maximum(mu * q, 1e-300)
    cov = np.linalg.inv((X.T * w) @ X)
    pearson = float(np.sum((y - n * mu) ** 2 / np.maximum(n * mu * q, 1e-300)))
    return GLMResult(link, coef, cov, mu, _deviance(y, n, mu, q), pearson, int(x.size - 2), it, converged)


def _deviance(y: np.ndarray, n: np.ndarray, mu: np.ndarray, q: np.ndarray) -> float:
    """Binomial deviance 2 Σ [y ln(y/(n mu)) + (n - y) ln((n - y)/(n (1 - mu)))], 0 ln 0 = 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        a = np.where(y > 0, y * np.log(y / (n * mu)), 0.0)
        b = np.where(n - y > 0, (n - y) * np.log((n - y) / (n * q)), 0.0)
    return float(2.0 * np.sum(a + b))


def separation(x, y, n) -> tuple[str, float, float] | None:
    """Complete or quasi-complete separation: the MLE does not exist (Albert & Anderson 1984).

    Returns (kind, a, b) with a potential range [MPa] that the message needs, or None when the counts
    overlap (some plasmolysed cells at a level less negative than some turgid cells, and vice versa).
    kind is ``none`` (no cell plasmolysed; a, b = most and least negative level), ``all`` (every cell
    plasmolysed; same a, b), ``separated`` (plasmolysed only at a and below, turgid only at b and
    above) or ``reversed`` (the opposite order).
    """
    x, y, n = (np.asarray(a, dtype=float) for a in (x, y, n))
    s = x[y > 0]  # levels with plasmolysed cells
    f = x[y < n]  # levels with turgid cells
    if s.size == 0:
        return ("none", float(x.min()), float(x.max()))
    if f.size == 0:
        return ("all", float(x.min()), float(x.max()))
    if s.max() <= f.min():
        return ("separated", float(s.max()), float(f.min()))
    if s.min() >= f.max():
        return ("reversed", float(f.max()), float(s.min()))
    return None


# =============================================================================================
# Incipient plasmolysis point
# =============================================================================================

@dataclass
class PlasmolysisFit:
    """The fitted curve and the incipient plasmolysis point (units in the field names)."""

    link: str
    water_potential_50_mpa: float
    ci95_mpa: list[float] | None
    ci_method: str
    osmolality_50_mosmol_per_kg: float
    osmolality_ci95_mosmol_per_kg: list[float] | None
    osmotic_potential_mpa: float  # of the cell sap: equal to the solution's water potential at 50 %
    temperature_c: float
    intercept: float
    slope_per_mpa: float
    covariance: list[list[float]]  # of (intercept, slope), scaled by the dispersion when widened
    deviance: float
    pearson_chi2: float
    df: int
    deviance_p: float
    pearson_p: float
    heterogeneity: float  # Pearson chi2 / df
    overdispersed: bool
    widened: bool
    n_levels: int
    n_rows: int
    cells: int
    iterations: int
    source: str
    rows: list[dict]
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def coef(self) -> np.ndarray:
        return np.array([self.intercept, self.slope_per_mpa])

    def to_dict(self) -> dict:
        return finite(asdict(self))

    def cells_table(self, date: str) -> dict:
        """The ``[cells]`` table of a plan: the fitted reference for tonicity."""
        t = {"potential": f"{self.water_potential_50_mpa:.4g} MPa",
             "osmolality": f"{self.osmolality_50_mosmol_per_kg:.4g} mOsm/kg",
             "source": f"incipient plasmolysis fit, {date}, {self.link}, {self.n_levels} levels"}
        if self.ci95_mpa is not None:
            t["ci95"] = f"{self.ci95_mpa[0]:.4g} to {self.ci95_mpa[1]:.4g} MPa ({self.ci_method})"
        return t


def fieller_interval(b0: float, b1: float, V: np.ndarray, q: float) -> tuple[float, float] | None:
    """Fieller (1954) interval of theta = -b0/b1 at critical value q; None when it is unbounded.

    The set of theta with (b0 + theta b1)^2 <= q^2 (V00 + 2 theta V01 + theta^2 V11); bounded when
    g = q^2 V11 / b1^2 < 1 (the slope differs significantly from zero).
    """
    a = b1 * b1 - q * q * V[1, 1]
    if a <= 0:
        return None
    bh = b0 * b1 - q * q * V[0, 1]
    c = b0 * b0 - q * q * V[0, 0]
    disc = bh * bh - a * c
    if disc < 0:
        return None
    r = math.sqrt(disc)
    return (float((-bh - r) / a), float((-bh + r) / a))


def fit_counts(counts: Counts, link: str = "logit", *, temperature_k: float | None = None,
               alpha: float = 0.05) -> PlasmolysisFit:
    """Fit counts and find the incipient plasmolysis point with its interval.

    Parameters
    ----------
    counts : observed counts in water potential [MPa]
    link : ``logit`` or ``probit``
    temperature_k : series temperature [K] for potential -> osmolality (default: the counts', else 25 °C)
    alpha : 1 - confidence level of the interval

    Raises
    ------
    FitError on separation (every level all-or-nothing on either side of a point), when no level or
    every level is plasmolysed, or when the fit does not converge.
    """
    from scipy.stats import chi2, norm
    from scipy.stats import t as student_t

    _check_link(link)
    x, y, n = counts.water_potential_mpa, counts.plasmolysed, counts.total
    file = counts.source
    sep = separation(x, y, n)
    if sep is not None:
        raise FitError(_separation_message(sep), file=file,
                       hint="add levels in that range or count more cells per level")
    T = temperature_k or counts.temperature_k or 298.15
    g = fit_glm(x, y, n, link)
    if not g.converged or not np.all(np.isfinite(g.coef)) or g.coef[1] == 0:
        raise FitError(f"the {link} fit did not converge", file=file, hint="check the counts; try the other link")
    b0, b1 = (float(v) for v in g.coef)
    psi50 = -b0 / b1
    warnings: list[str] = []
    if b1 > 0:
        warnings.append("plasmolysis falls as the solution gets more concentrated: check the level column and "
                        "that the counts are not swapped")
    df = g.df
    het = g.pearson_chi2 / df if df > 0 else math.nan
    pearson_p = float(chi2.sf(g.pearson_chi2, df)) if df > 0 else math.nan
    deviance_p = float(chi2.sf(g.deviance, df)) if df > 0 else math.nan
    overdispersed = df > 0 and pearson_p < 0.05 and het > 1
    V = g.cov.copy()
    if overdispersed:
        V *= het
        q = float(student_t.ppf(1 - alpha / 2, df))
        method = f"Fieller, widened by heterogeneity factor {het:.3g} (t on {df} df)"
        warnings.append(f"overdispersed: Pearson chi2 = {g.pearson_chi2:.3g} on {df} df (p = {pearson_p:.2g}); "
                        f"the interval is widened by the heterogeneity factor {het:.3g} — variation between "
                        "pieces or replicates exceeds binomial sampling")
    else:
        q = float(norm.ppf(1 - alpha / 2))
        method = "Fieller"
    ci = fieller_interval(b0, b1, V, q)
    if ci is None:
        warnings.append("the slope is not significantly different from zero: the 95 % interval is unbounded; "
                        "count more cells or widen the series")
    lo_x, hi_x = float(x.min()), float(x.max())
    if not lo_x <= psi50 <= hi_x:
        warnings.append(f"the 50 % point ({psi50:.3g} MPa) lies outside the levels tested ({hi_x:.3g} to "
                        f"{lo_x:.3g} MPa): extrapolated; extend the series")
    osm50 = float(potential.osmolality_from_potential(psi50 * 1e6, T)) * 1000.0
    osm_ci = None
    if ci is not None:
        osm_ci = sorted(float(potential.osmolality_from_potential(v * 1e6, T)) * 1000.0 for v in ci)
    if not -3.5 <= psi50 <= -0.3:
        warnings.append(f"{psi50:.3g} MPa is outside the usual range of cell sap (about -0.6 to -3.0 MPa): "
                        "check the units of the level column")
    rows = [{"water_potential_mpa": float(xi), "plasmolysed": int(yi), "total": int(ni),
             "observed": float(yi / ni), "fitted": float(mi)} for xi, yi, ni, mi in zip(x, y, n, g.mu, strict=True)]
    return PlasmolysisFit(
        link=link, water_potential_50_mpa=psi50, ci95_mpa=[float(v) for v in ci] if ci is not None else None, ci_method=method,
        osmolality_50_mosmol_per_kg=osm50, osmolality_ci95_mosmol_per_kg=osm_ci, osmotic_potential_mpa=psi50,
        temperature_c=T - T0, intercept=b0, slope_per_mpa=b1, covariance=V.tolist(), deviance=g.deviance,
        pearson_chi2=g.pearson_chi2, df=df, deviance_p=deviance_p, pearson_p=pearson_p, heterogeneity=het,
        overdispersed=overdispersed, widened=overdispersed, n_levels=counts.n_levels, n_rows=int(x.size),
        cells=int(n.sum()), iterations=g.iterations, source=file, rows=rows, warnings=warnings,
        notes=list(counts.notes))


def _separation_message(sep: tuple[str, float, float]) -> str:
    kind, a, b = sep
    if kind == "none":
        return (f"no cell is plasmolysed at any level ({b:.4g} to {a:.4g} MPa): the 50 % point is more negative "
                "than the series; extend it to more negative potentials")
    if kind == "all":
        return (f"every cell is plasmolysed at every level ({b:.4g} to {a:.4g} MPa): the 50 % point is less "
                "negative than the series; extend it towards less negative potentials")
    if kind == "separated":
        span = f"at {a:.4g} MPa" if a == b else f"between {b:.4g} and {a:.4g} MPa"
        return (f"complete separation: the counts jump from no plasmolysis to full plasmolysis {span} with no "
                "partial levels on either side; the 50 % point lies there but no slope or interval can be "
                "estimated")
    return (f"the counts run the wrong way: plasmolysis only at {b:.4g} MPa and above, none at {a:.4g} MPa and "
            "below; check the level column and the counts")
