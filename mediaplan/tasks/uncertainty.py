"""The uncertainty budget: a 95 % interval around every figure mediaplan states about a medium.

Sources (each one a :class:`Contribution`)
------------------------------------------
1. **Model error per solute class**: the relative standard uncertainty of each class's share of the
   osmolality, from :data:`MODEL_ERROR` (electrolytes by Pitzer, neutral solutes by Norrish, neutral
   solutes without a model of their own, PEG by the Michel equations); solutes of one class act
   together (electrolytes are one Pitzer mixture) or each on its own (every neutral solute and PEG grade
   has its own constant). Pitzer pairs without temperature terms add :data:`NO_TEMPERATURE_TERMS` per
   25 K away from 25 °C (the osmometer figure is computed at 0 °C).
2. **ZSR mixing**: with PEG and other solutes, half the interval reaches the answer of adding the
   groups' own osmolalities (no published check of the ZSR synergy here); without PEG,
   :data:`ZSR_MIXING` of the mixed part of the osmolality.
3. **Preparation**: balance readability (each component weighed, small amounts through a stock) and
   the volumetric tolerance of making up to volume (:class:`Tolerances`, common-practice defaults).
4. **Temperature**: the medium's temperature known to ``temperature_sd_k``.
5. **Confidence C lines** of a base medium (amounts recalled from memory, unverified): each such line's
   amount is uncertain by ``confidence_c_relative``; the lines are named.

Propagation
-----------
Linearised (first order), chosen over sampling because the model is smooth at the scale of these errors
and one solve costs about a millisecond. The derivative of the osmolality with respect to the amount of
every component at once, g = d ln y / d ln(amounts), comes from ONE extra solve of the compiled model
(every amount × (1 + 1e-4)); each component's derivative is then g times its osmolal share (exact for an
ideal medium; the differences in non-ideality among the components are second order for a budget).
Temperature takes one solve at T + 1 K; the PEG mixing term one batched solve of each solute group
alone. Every other figure follows from the osmolality by its exact derivative (water activity,
potential, freezing-point depression, osmometer reading; the 0 °C figures scale with the osmolality at
the freezing point). The sources are combined as independent (root sum of squares). Each interval is the
central value ± 1.96 standard uncertainties (normal; GUM, JCGM 100:2008, 6.3), clipped where a quantity
cannot go (an osmolality below 0, a water activity above 1). About 4 ms for MS with sucrose.

The intervals describe how far the stated figure may be from the medium actually made in a lab that
works to these tolerances; they do not widen for warnings the evaluation already gives (a model used
beyond its range).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.evaluate import Evaluation, evaluate, finite
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.thermo import potential
from mediaplan.thermo.constants import K_F_OSMOMETER, M_WATER, T0

#: two-sided 95 % quantile of the normal distribution
Z95 = 1.959963984540054

#: Model error of each solute class: relative standard uncertainty [-] of the class's share of the
#: osmolality, u = a + b·y, with y the medium's osmolality [osmol/kg].
#: Method: the whole engine (recipe -> evaluate -> freezing-point depression) against the freezing
#: points of binary solutions in the CRC Handbook of Chemistry and Physics, 102nd ed. (2021),
#: "Concentrative properties of aqueous solutions" (tests/data/crc_concentrative_subset.tsv,
#: tests/data/crc_salts_subset.tsv): rows up to 2.5 osmol/kg, the table's 0.005 K rounding allowed for.
#: Neither the Pitzer parameters (fitted to isopiestic osmotic coefficients at 25 °C) nor the Norrish
#: constants (fitted to water activities near 25 °C) were fitted to these freezing points. Observed:
#: NaCl and KCl within 0.6 % up to 1 osmol/kg and 2 % at 3.5 osmol/kg, CaCl2 up to 2.5 % near
#: 1 osmol/kg; sucrose, glucose, fructose and mannitol within 1.3 % below 1.5 osmol/kg, 2-3 % near
#: 2.4 osmol/kg, glycerol 2-3.6 % at 1-1.9 osmol/kg. The rule that sets them: a is judgement (the table
#: cannot set it: its 0.005 K rounding is 1.5-10 % of the dilute rows; a narrowest-interval fit drives a
#: to 0, a 0.2 % interval for media-strength salts, which puts the pyEQL mixture below outside), b is
#: the smallest on a 0.0005 grid such that 1.96 u (plus the rounding) covers at least 95 % of the class's
#: rows: electrolytes 18 of 18 (NaCl, KCl, CaCl2), Norrish 60 of 63 (the misses: three glycerol rows);
#: pooled with maltose 94 of 97, median 95 % half-width 2.5x the median error (a normal error would give
#: 2.9x) (tests/tasks/test_uncertainty.py). Electrolytes' b was 0.005 before this rule (17 of 18 rows).
#: Out of sample (tests/tasks/test_uncertainty_validation.py): the rule re-derived without each solute
#: covers 72 of 81 left-out rows (89 %; CaCl2 2 of 5 from NaCl and KCl alone, glycerol 2 of 8); on
#: published values never used here, 36 of 43 inside (84 %): NaNO3 10/10, KH2PO4 20/20, the pyEQL 1.7.0
#: MS-like mixture and the published -0.21 MPa of MS salts, but KNO3 only 4 of 11 (its model is 2.4-6 %
#: high above 0.4 mol/kg at 0 °C: a gap of that pair's parameters that the class constants cannot cover
#: without widening the other salts' intervals about twofold).
MODEL_ERROR: dict[str, tuple[float, float, str, str]] = {
    "electrolyte": (0.005, 0.0065, "model: electrolytes (Pitzer)",
                    "CRC Handbook freezing points of NaCl, KCl, CaCl2"),
    "norrish": (0.004, 0.006, "model: sugars and polyols (Norrish)",
                "CRC Handbook freezing points of sucrose, glucose, fructose, mannitol, glycerol"),
    # Norrish constant borrowed from another solute (maltose takes sucrose's): the CRC maltose rows
    # differ by up to 2.4 % at 2.3 mol/kg, the other direction from sucrose's (judgement: twice the
    # class's own error)
    "norrish_borrowed": (0.010, 0.010, "model: sugars with a borrowed Norrish constant",
                         "judgement, from the CRC Handbook maltose freezing points"),
    # no published model: Raoult's law (judgement: real sugars depart 5-10 % by 1 osmol/kg)
    "ideal": (0.03, 0.05, "model: solutes without a published model (ideal)", "judgement"),
    # Michel (1983) equations, as published: their fit to the measured PEG potentials is stated
    # within about 5 % (from memory, unverified)
    "peg": (0.03, 0.0, "model: PEG (Michel equations)", "the equations' stated fit, from memory (unverified)"),
}
#: extra relative standard uncertainty [-] of the electrolyte share brought by Pitzer pairs without
#: temperature terms, per 25 K away from 25 °C: KNO3 freezing points are 2.3 % high at 0.1 mol/kg and
#: 6 % at 0.52 mol/kg against the CRC Handbook (102nd ed., 2021), about half of it from the missing terms
#: (project issue notes); 0.03 per 25 K covers that at 95 % together with the class's own error.
NO_TEMPERATURE_TERMS = 0.03
#: ZSR mixing without PEG: relative standard uncertainty [-] of the mixed part of the osmolality,
#: y·(1 − Σ f_g²) (zero for one solute group). Stokes & Robinson (1966, J Phys Chem 70:2126) found the rule
#: within about 1 % for mixtures of non-electrolytes (from memory, unverified).
ZSR_MIXING = 0.01
#: relative step of the finite differences [-]
_H = 1e-4
#: temperature step of the finite difference [K]
_DT = 1.0


@dataclass(frozen=True)
class Interval:
    """A 95 % interval around a central value, in the same unit as the value."""

    value: float
    low: float
    high: float

    @classmethod
    def around(cls, value: float, sd: float, *, lower: float | None = None,
               upper: float | None = None) -> Interval:
        """value ± 1.96 sd, clipped to [lower, upper] where a quantity cannot go."""
        lo, hi = value - Z95 * sd, value + Z95 * sd
        if lower is not None:
            lo = max(lo, lower)
        if upper is not None:
            hi = min(hi, upper)
        return cls(float(value), float(lo), float(hi))

    def half_width(self) -> float:
        """Half the width of the interval [unit of the value]."""
        return (self.high - self.low) / 2.0

    def to_list(self) -> list[float]:
        """[low, high]."""
        return [self.low, self.high]

    def contains(self, x: float) -> bool:
        return self.low <= x <= self.high


@dataclass(frozen=True)
class Contribution:
    """One source's share of the budget: its standard uncertainty of each figure (1 sd, not 95 %).

    source : what it is ("model: electrolytes (Pitzer)", "balance", "volume", "temperature", ...)
    sd_osmolality_mosmol_per_kg : of the osmolality at the recipe's temperature [mOsm/kg]
    note : how it was estimated, and the components it concerns
    sd_potential_mpa : of the osmotic potential [MPa]
    sd_osmometer_mosmol_per_kg : of the freezing-point osmometer reading [mOsm/kg]
    components : ids of the components it concerns (empty: the whole medium)
    """

    source: str
    sd_osmolality_mosmol_per_kg: float
    note: str
    sd_potential_mpa: float = 0.0
    sd_osmometer_mosmol_per_kg: float = 0.0
    components: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"source": self.source, "sd_osmolality_mosmol_per_kg": self.sd_osmolality_mosmol_per_kg,
                "sd_potential_mpa": self.sd_potential_mpa,
                "sd_osmometer_mosmol_per_kg": self.sd_osmometer_mosmol_per_kg,
                "components": list(self.components), "note": self.note}


@dataclass(frozen=True)
class Tolerances:
    """How well a lab makes a medium (common-practice defaults; a lab can set its own).

    balance_readability_g : the balance's readability [g]; one reading step is taken as the standard
        uncertainty of a weighing (tare and gross together) (common practice: a two-decimal balance)
    min_weighing_steps : amounts below this many readability steps are taken as made through a stock
        that is weighed at this many steps [-] (common practice: weigh at least 100 steps)
    volume_relative : tolerance of making up to volume [fraction], read as the half-width of a
        rectangular distribution (JCGM 100:2008, 4.3.7) (common practice: ±1 % for a graduated cylinder)
    temperature_sd_k : standard uncertainty of the medium's temperature [K] (common practice: a culture
        room held to ±1-2 °C)
    confidence_c_relative : standard relative uncertainty of a base line of confidence C [fraction]
        (judgement: an amount recalled from memory may be off by a quarter)
    """

    balance_readability_g: float = 0.01
    min_weighing_steps: float = 100.0
    volume_relative: float = 0.01
    temperature_sd_k: float = 1.0
    confidence_c_relative: float = 0.25

    @classmethod
    def exact(cls) -> Tolerances:
        """No preparation, temperature or recalled-amount error: the model's own error alone."""
        return cls(balance_readability_g=0.0, volume_relative=0.0, temperature_sd_k=0.0,
                   confidence_c_relative=0.0)


@dataclass
class Budget:
    """The 95 % intervals of one medium's figures and the sources behind them (units in the names)."""

    osmolality: Interval  # mOsm/kg at the recipe temperature
    water_activity: Interval
    osmotic_potential: Interval  # MPa
    freezing_point_depression: Interval  # K
    osmometer: Interval  # mOsm/kg, what a freezing-point osmometer reads
    contributions: list[Contribution] = field(default_factory=list)
    tolerances: Tolerances = field(default_factory=Tolerances)

    @property
    def relative_osmolality(self) -> tuple[float, float]:
        """(low/value, high/value) of the osmolality [-]."""
        v = self.osmolality.value
        return (self.osmolality.low / v, self.osmolality.high / v) if v > 0 else (1.0, 1.0)

    def to_dict(self) -> dict:
        """The interval keys of the JSON contract and an ``uncertainty`` breakdown."""
        return finite({
            "osmolality_interval_mosmol_per_kg": self.osmolality.to_list(),
            "water_activity_interval": self.water_activity.to_list(),
            "osmotic_potential_interval_mpa": self.osmotic_potential.to_list(),
            "freezing_point_depression_interval_k": self.freezing_point_depression.to_list(),
            "osmometer_interval_mosmol_per_kg": self.osmometer.to_list(),
            "uncertainty": {
                "level": 0.95,
                "method": "linearised (first order), sources independent (root sum of squares), "
                          "interval = value ± 1.96 sd",
                "sources": [c.to_dict() for c in self.contributions],
                "tolerances": {
                    "balance_readability_g": self.tolerances.balance_readability_g,
                    "min_weighing_steps": self.tolerances.min_weighing_steps,
                    "volume_relative": self.tolerances.volume_relative,
                    "temperature_sd_k": self.tolerances.temperature_sd_k,
                    "confidence_c_relative": self.tolerances.confidence_c_relative,
                },
            },
        })


# ---- the model error table -------------------------------------------------------------------------
def model_error(kind: str, y: float) -> float:
    """Relative standard uncertainty [-] of a class's share of the osmolality, at medium osmolality
    y [osmol/kg] (see :data:`MODEL_ERROR`)."""
    a, b = MODEL_ERROR[kind][:2]
    return a + b * max(float(y), 0.0)


def _neutral_kind(params) -> str:
    if params.model != "norrish":
        return "ideal"
    src = (params.source or "").lower()
    return "norrish_borrowed" if ("borrow" in src or "no published norrish" in src) else "norrish"


def _class_of(model, comp) -> list[tuple[str, str]]:
    """(kind, key) of each solute class one component brings: the electrolytes share one key, each
    neutral species and PEG grade its own."""
    out = []
    for sp, _ in comp.species:
        if sp in model.ion_charges:
            k = ("electrolyte", "electrolytes")
        elif sp in model.neutral_models:
            k = (_neutral_kind(model.neutral_models[sp]), sp)
        else:
            k = ("peg", sp)
        if k not in out:
            out.append(k)
    return out


def _no_temperature_terms(catalog: Catalog, comp, ion_charges: dict) -> bool:
    """Does the component bring an ion pair whose Pitzer parameters have no temperature terms?"""
    pitzer = catalog.pitzer
    ions = [sp for sp, _ in comp.species if sp in ion_charges]
    cats = [i for i in ions if ion_charges[i] > 0]
    ans = [i for i in ions if ion_charges[i] < 0]
    for c in cats:
        for a in ans:
            p = pitzer.binary.get((c, a)) if pitzer is not None else None
            if p is None or not p.temperature_terms:
                return True
    return False


# ---- the budget ---------------------------------------------------------------------------------------
def budget(recipe: Recipe, catalog: Catalog, *, tolerances: Tolerances = Tolerances(),
           evaluation: Evaluation | None = None) -> Budget:
    """The 95 % uncertainty budget of a recipe's figures.

    Parameters
    ----------
    recipe : the medium
    catalog : component catalog
    tolerances : how well the lab makes it (common-practice defaults)
    evaluation : ``evaluate(recipe, catalog)`` when the caller has it (its central values are used)

    Returns
    -------
    Budget: intervals of osmolality [mOsm/kg], water activity [-], osmotic potential [MPa],
    freezing-point depression [K] and osmometer reading [mOsm/kg], and the contributions by source.
    """
    ev = evaluation if evaluation is not None else evaluate(recipe, catalog)
    lines = recipe.lines(catalog)
    T = recipe.temperature_k
    if not lines:
        z = Interval(0.0, 0.0, 0.0)
        return Budget(z, Interval(1.0, 1.0, 1.0), z, z, z, [], tolerances)
    comps = [ln.component for ln in lines]
    model = compiled(catalog, comps, T)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    nc = len(comps)
    Y = ev.osmolality_mosmol_per_kg / 1000.0  # osmol/kg at T
    Y0 = _osmolality_at_freezing(ev.freezing_point_depression_k)  # osmol/kg at 0 °C
    share = np.array([c.osmolality_mosmol_per_kg / 1000.0 for c in ev.components])  # osmol/kg each
    frac = share / Y if Y > 0 else np.zeros(nc)
    # g = d ln y / d ln(every amount): one solve of the medium with every amount × (1 + h)
    y_up = float(model.solve(n[None, :] * (1 + _H), b[None, :] * (1 + _H)).mix.osmolality[0])
    g = (y_up - Y) / (_H * Y) if Y > 0 else 1.0
    dy = g * frac * Y  # d y / d ln(amount of component i) [osmol/kg]
    dy0 = g * frac * Y0
    per_volume = np.array([ln.amount.kind in ("mass_conc", "molar", "vol_frac") for ln in lines])
    dy_vol, dy0_vol = float(dy[per_volume].sum()), float(dy0[per_volume].sum())
    # exact derivatives of the other figures
    vw = float(potential.potential_from_osmolality(1.0, T))  # Pa per osmol/kg
    aw = float(potential.water_activity(Y))
    eps = max(Y0 * 1e-6, 1e-9)
    th = potential.freezing_point_depression(potential.water_activity(np.array([Y0 - eps, Y0 + eps])))
    dth = float(th[1] - th[0]) / (2 * eps)  # K per osmol/kg at 0 °C

    contribs: list[Contribution] = []

    def add(source: str, sd_y: float, sd_y0: float, note: str, ids=(), sd_psi: float | None = None) -> None:
        if not (sd_y > 0 or sd_y0 > 0 or (sd_psi or 0) > 0):
            return
        contribs.append(Contribution(source, sd_y * 1000.0, note,
                                     sd_potential_mpa=(abs(vw) * sd_y if sd_psi is None else sd_psi) / 1e6,
                                     sd_osmometer_mosmol_per_kg=dth * sd_y0 / K_F_OSMOMETER * 1000.0,
                                     components=tuple(ids)))

    # 1. model error per class: each class's share of the osmolality at T and at 0 °C
    classes: dict[tuple[str, str], list[int]] = {}
    for i, c in enumerate(comps):
        for k in _class_of(model, c):
            classes.setdefault(k, []).append(i)
    by_kind: dict[str, list[tuple[float, float, list[str]]]] = {}
    for (kind, _key), idx in classes.items():
        part = float(sum(frac[i] for i in idx)) / max(len(_class_of(model, comps[idx[0]])), 1)
        by_kind.setdefault(kind, []).append((model_error(kind, Y) * part * Y, model_error(kind, Y0) * part * Y0,
                                             [comps[i].id for i in idx]))
    for kind, items in by_kind.items():
        sd_y = math.sqrt(sum(a * a for a, _, _ in items))
        sd_y0 = math.sqrt(sum(b0 * b0 for _, b0, _ in items))
        a, bb, label, basis = MODEL_ERROR[kind]
        ids = [i for _, _, g in items for i in g]
        per = f" + {100 * bb:g} % per osmol/kg" if bb else ""
        add(label, sd_y, sd_y0, f"{100 * a:g} %{per} of the class's share (1 sd; {basis})", ids)
    # Pitzer pairs without temperature terms, away from 25 °C
    if model.has_electrolytes:
        idx = [i for i, c in enumerate(comps) if _no_temperature_terms(catalog, c, model.ion_charges)]
        part = float(sum(frac[i] for i in idx))
        if part > 0:
            sd_y = NO_TEMPERATURE_TERMS * abs(T - 298.15) / 25.0 * part * Y
            sd_y0 = NO_TEMPERATURE_TERMS * 25.0 / 25.0 * part * Y0
            add("model: Pitzer pairs without temperature terms", sd_y, sd_y0,
                f"{100 * NO_TEMPERATURE_TERMS:g} % per 25 K from 25 °C of their share (25 °C parameters; "
                "the osmometer figure is at 0 °C)", [comps[i].id for i in idx])
    # 2. ZSR mixing
    kinds_present = {k for k, _ in classes}
    if len(classes) > 1:
        if "peg" in kinds_present:
            additive, additive0 = _additive(model, n, b, T)
            add("model: ZSR mixing with PEG", abs(Y - additive) / Z95, abs(Y0 - additive0) / Z95,
                "no published check of the ZSR synergy of PEG with these solutes: the 95 % interval reaches "
                f"the sum of the groups' own osmolalities ({additive * 1000:.0f} mOsm/kg)")
        else:
            mixed = 1.0 - float(sum(sum(frac[i] for i in idx) ** 2 for idx in classes.values()))
            mixed = max(mixed, 0.0)
            add("model: ZSR mixing", ZSR_MIXING * mixed * Y, ZSR_MIXING * mixed * Y0,
                f"{100 * ZSR_MIXING:g} % of the mixed part of the osmolality (Stokes & Robinson 1966; from memory)")
    # 3. preparation
    tol = tolerances
    V_l = recipe.volume_m3 * 1000.0
    if tol.balance_readability_g > 0:
        grams = np.array([c.grams_per_litre for c in ev.components]) * V_l  # g of each form as sold per batch
        rel = np.zeros(nc)
        for i in range(nc):
            if grams[i] > 0:
                rel[i] = tol.balance_readability_g / max(grams[i], tol.min_weighing_steps * tol.balance_readability_g)
        sd_y = float(np.sqrt(np.sum((dy * rel) ** 2)))
        sd_y0 = float(np.sqrt(np.sum((dy0 * rel) ** 2)))
        add("balance", sd_y, sd_y0, f"readability {tol.balance_readability_g:g} g per weighing for "
            f"{_litres(V_l)}; amounts under {tol.min_weighing_steps:g} steps through a stock")
    if tol.volume_relative > 0 and np.any(n > 0):
        u = tol.volume_relative / math.sqrt(3.0)
        add("volume", abs(dy_vol) * u, abs(dy0_vol) * u,
            f"made up to volume within ±{100 * tol.volume_relative:g} % (rectangular)")
    # 4. temperature
    if tol.temperature_sd_k > 0:
        stT = model.solve(n[None, :], b[None, :], T=T + _DT)
        yT = float(stT.mix.osmolality[0])
        psiT = float(potential.potential_from_osmolality(yT, T + _DT))
        psi = float(potential.potential_from_osmolality(Y, T))
        sd_y = abs(yT - Y) / _DT * tol.temperature_sd_k
        add("temperature", sd_y, 0.0, f"the medium within {tol.temperature_sd_k:g} K (1 sd) of "
            f"{T - T0:g} °C; the osmometer reads at the freezing point",
            sd_psi=abs(psiT - psi) / _DT * tol.temperature_sd_k)
    # 5. base lines of confidence C
    if tol.confidence_c_relative > 0:
        idx = [i for i, ln in enumerate(lines) if ln.origin == "base" and ln.confidence == "C"]
        if idx:
            r = tol.confidence_c_relative
            sd_y = float(np.sqrt(np.sum((dy[idx] * r) ** 2)))
            sd_y0 = float(np.sqrt(np.sum((dy0[idx] * r) ** 2)))
            names = ", ".join(comps[i].id for i in idx)
            add("confidence C lines", sd_y, sd_y0,
                f"{len(idx)} base line(s) recalled from memory (unverified), ±{100 * r:g} % each (1 sd): {names}",
                [comps[i].id for i in idx])
    return _combine(ev, contribs, tol, aw, T)


def _litres(V_l: float) -> str:
    return f"{V_l:g} L"


def _osmolality_at_freezing(theta: float) -> float:
    """The osmolality [osmol/kg] whose water activity freezes at a depression θ [K] (the inverse of
    :func:`mediaplan.thermo.potential.freezing_point_depression`, by Newton's method)."""
    if not theta > 0:
        return 0.0
    if not math.isfinite(theta):
        return math.nan
    y = theta / K_F_OSMOMETER
    for _ in range(20):
        eps = max(y * 1e-7, 1e-12)
        aw, aw_eps = float(potential.water_activity(y)), float(potential.water_activity(y + eps))
        if not (aw > 0 and aw_eps > 0):  # a water activity that underflows (far past every model): the
            break                        # estimate stands, no logarithm of zero
        f = float(potential.freezing_point_depression(aw)) - theta
        d = (float(potential.freezing_point_depression(aw_eps)) - theta - f) / eps
        if not d > 0:  # no slope left: the estimate stands
            break
        step = f / d
        y -= step
        if abs(step) <= 1e-13 * y:
            break
    return y


def _additive(model, n: np.ndarray, b: np.ndarray, T: float) -> tuple[float, float]:
    """The sum of each solute group's own binary osmolality at its molality in the medium [osmol/kg],
    at T and at 0 °C (the answer without ZSR's cross effects)."""
    species_m = model.solve(n[None, :], b[None, :]).species_m
    ns = species_m.shape[1]
    groups: list[list[int]] = []
    ions = [k for k, sp in enumerate(model.species) if sp in model.ion_charges]
    if ions:
        groups.append(ions)
    groups += [[k] for k, sp in enumerate(model.species) if sp not in model.ion_charges]
    rows = np.zeros((len(groups), ns))
    for r, g in enumerate(groups):
        rows[r, g] = species_m[0, g]
    keep = rows.sum(axis=1) > 0
    rows = rows[keep]
    if not len(rows):
        return 0.0, 0.0
    a = float(np.nansum(model.mixture(rows, T).osmolality))
    a0 = float(np.nansum(model.mixture(rows, T0).osmolality))
    return a, a0


def _combine(ev: Evaluation, contribs: list[Contribution], tol: Tolerances, aw: float, T: float) -> Budget:
    sd_y = math.sqrt(sum(c.sd_osmolality_mosmol_per_kg ** 2 for c in contribs)) / 1000.0
    sd_psi = math.sqrt(sum(c.sd_potential_mpa ** 2 for c in contribs))
    sd_osm = math.sqrt(sum(c.sd_osmometer_mosmol_per_kg ** 2 for c in contribs))
    sd_th = sd_osm / 1000.0 * K_F_OSMOMETER
    return Budget(
        osmolality=Interval.around(ev.osmolality_mosmol_per_kg, sd_y * 1000.0, lower=0.0),
        water_activity=Interval.around(ev.water_activity, M_WATER * aw * sd_y, upper=1.0),
        osmotic_potential=Interval.around(ev.osmotic_potential_mpa, sd_psi, upper=0.0),
        freezing_point_depression=Interval.around(ev.freezing_point_depression_k, sd_th, lower=0.0),
        osmometer=Interval.around(ev.osmometer_mosmol_per_kg, sd_osm, lower=0.0),
        contributions=sorted(contribs, key=lambda c: -c.sd_osmolality_mosmol_per_kg),
        tolerances=tol)


# ---- a solve: how much the addition may need to differ -------------------------------------------------
@dataclass(frozen=True)
class AdditionRange:
    """The addition of one osmoticum that a solve found, and the range the budget allows: the additions
    that reach the target if the medium's true osmolality lies at the low or the high end of its 95 %
    interval (units in the names; None: that end cannot be reached, see ``note``)."""

    component: str
    added_g_per_l: float
    low_g_per_l: float | None
    high_g_per_l: float | None
    volume_l: float
    note: str = ""

    def to_dict(self) -> dict:
        return finite({"component": self.component, "added_g_per_l": self.added_g_per_l,
                       "interval_g_per_l": [self.low_g_per_l, self.high_g_per_l],
                       "interval_g_per_batch": [None if v is None else v * self.volume_l
                                                for v in (self.low_g_per_l, self.high_g_per_l)],
                       "note": self.note})


def solve_ranges(solution, catalog: Catalog, *, tolerances: Tolerances = Tolerances(),
                 budget_of_result: Budget | None = None) -> list[AdditionRange]:
    """The range of each addition of a :class:`~mediaplan.tasks.solve.Solution` that its budget allows.

    If the made medium's osmolality is ``r`` times the model's (r from the low to the high end of the
    result's 95 % interval), reaching the target y* takes the addition that makes the model say y*/r:
    the solve is repeated for the two ends (same osmotica, ratio and hold). An end that lies below the
    start medium needs no addition (0); one beyond what dissolves has no answer (None, with a note).
    Empty unless the solve added something.
    """
    from mediaplan.medium.errors import InfeasibleError
    from mediaplan.tasks.solve import TargetSpec, additions_at, solve_target, target_osmolality

    if solution.status != "added":
        return []
    b = budget_of_result or budget(solution.recipe, catalog, tolerances=tolerances,
                                   evaluation=solution.evaluation)
    r_lo, r_hi = b.relative_osmolality
    y_star = solution.target_osmolality_mosmol_per_kg / 1000.0
    spec = solution.target
    ev = solution.evaluation
    ref = (ev.tonicity or {}).get("reference_mosmol_per_kg")
    tol = (ev.tonicity or {}).get("tolerance")
    kw = {} if tol is None else {"isotonic_tolerance": tol}

    def end_spec(y: float) -> tuple[TargetSpec, float | None]:
        if solution.matched == "effective_osmolality":
            return spec, (y - spec.offset_osmol) / (1.0 + spec.offset_fraction) * 1000.0
        return TargetSpec("osmolality", y, text=f"{y * 1000:.1f} mOsm/kg"), ref

    def end_osmolality(y: float) -> float:
        """The osmolality [osmol/kg] the solve of this end aims at (as :func:`solve_target` reads it)."""
        s, cells = end_spec(y)
        return target_osmolality(s, solution.start_recipe.temperature_k, cells)

    def added_at(y: float) -> tuple[dict[str, float] | None, str]:
        s, cells = end_spec(y)
        try:
            sol = solve_target(solution.start_recipe, catalog, s, list(solution.osmotica), ratio=solution.ratio,
                               hold=solution.hold, cell_reference_mosmol=cells, **kw)
        except InfeasibleError:
            return None, "beyond what dissolves (or the water left)"
        if sol.status != "added":
            return {a.component: 0.0 for a in solution.additions}, "the start medium already reaches it"
        return {a.component: a.added_g_per_l for a in sol.additions}, ""

    # both ends on one sweep in one batched root finding; an end it does not settle is solved as before
    ends = [y_star / r_lo if r_lo > 0 else None, y_star / r_hi if r_hi > 0 else None]
    ys = [end_osmolality(y) for y in ends if y is not None]
    batch = iter(additions_at(solution.start_recipe, catalog, list(solution.osmotica), ys, ratio=solution.ratio,
                              hold=solution.hold, matched=solution.matched))
    got = []
    for y in ends:
        fast = next(batch) if y is not None else None
        got.append((fast, "") if fast is not None else added_at(y) if y is not None else None)
    more, note_hi = got[0] if got[0] is not None else (None, "no lower end")
    less, note_lo = got[1] if got[1] is not None else (None, "no upper end")
    out = []
    for a in solution.additions:
        if a.held:
            continue
        lo = None if less is None else less.get(a.component)
        hi = None if more is None else more.get(a.component)
        notes = [f"less: {note_lo}" if note_lo else "", f"more: {note_hi}" if note_hi else ""]
        out.append(AdditionRange(a.component, a.added_g_per_l, lo, hi, ev.volume_l,
                                 "; ".join(n for n in notes if n)))
    return out


# ---- a plasmolysis series: each level's potential ----------------------------------------------------
def _level_recipe(background: Recipe, osmoticum_id: str, grams_per_litre: float, catalog: Catalog) -> Recipe | None:
    """The background with a level's osmoticum [g/L of solution] added; None when the background already
    holds that substance in a form the sum cannot be written in (the level is then not covered)."""
    from mediaplan.medium.units import Amount

    comp = catalog.resolve(osmoticum_id, field="osmoticum").component
    for ln in background.lines(catalog):
        same = ln.component.id == comp.id or (comp.substance and ln.component.substance == comp.substance)
        if same:
            if ln.component.id != comp.id or ln.amount.kind != "mass_conc":
                return None
            total = ln.amount.value + grams_per_litre
            return background.with_amount(comp.id, Amount(total, "mass_conc", f"{total:.7g} g/L"))
    return background.with_amount(comp.id, Amount(grams_per_litre, "mass_conc", f"{grams_per_litre:.7g} g/L"))


def level_budgets(design, background: Recipe, catalog: Catalog, *,
                  tolerances: Tolerances = Tolerances()) -> list[Budget | None]:
    """The budget of each level of a :class:`~mediaplan.tasks.plasmolysis.design.SeriesDesign` (the
    background with the level's osmoticum, weighed for the level's volume); None for a level that cannot
    be written as one recipe (the background already holds the osmoticum in another form)."""
    out: list[Budget | None] = []
    for lv in design.levels:
        rec = _level_recipe(background, design.osmoticum, lv.grams_per_litre, catalog)
        out.append(None if rec is None else budget(rec, catalog, tolerances=tolerances))
    return out


def level_potential_intervals(design, budgets: list[Budget | None]) -> list[Interval | None]:
    """Each level's water potential [MPa] with its 95 % interval: the stated level, widened by its
    budget's relative half-widths."""
    out: list[Interval | None] = []
    for lv, b in zip(design.levels, budgets, strict=True):
        if b is None or b.osmotic_potential.value == 0:
            out.append(None)
            continue
        iv, v = b.osmotic_potential, lv.water_potential_mpa
        k_lo, k_hi = iv.low / iv.value, iv.high / iv.value  # both positive: potentials keep their sign
        out.append(Interval(v, v * k_lo, v * k_hi))
    return out


def level_uncertainty(background: Recipe, osmoticum: str, catalog: Catalog, *,
                      tolerances: Tolerances = Tolerances()):
    """A function psi [MPa] -> standard uncertainty [MPa] of the water potential of a level of this
    series (the background with the osmoticum) made at psi: the level's own budget, one level designed
    at psi. For :func:`~mediaplan.tasks.plasmolysis.fit.fit_counts` (the levels' error carried into the
    50 % point)."""
    from mediaplan.tasks.plasmolysis.design import design_series

    def sd_at(psi_mpa: float) -> float:
        d = design_series(background, osmoticum, [psi_mpa * 1e6], catalog=catalog)
        b = level_budgets(d, background, catalog, tolerances=tolerances)[0]
        if b is None:
            return math.nan
        iv = b.osmotic_potential
        return abs(iv.half_width() / iv.value * psi_mpa) / Z95 if iv.value else math.nan

    return sd_at


# ---- results that carry their budget (the command line and the Python API print the same) ------------
#: the note of a fit whose levels' uncertainty is not known
LEVELS_NOT_KNOWN = ("the levels' own uncertainty is not included: the osmoticum of the series is not known "
                    "(name it, and its background, to include it)")


@dataclass
class EvaluationWithBudget(Evaluation):
    """An :class:`~mediaplan.medium.evaluate.Evaluation` with its :class:`Budget`: ``to_dict()`` adds the
    interval keys and the ``uncertainty`` breakdown."""

    budget: Budget | None = None

    def to_dict(self) -> dict:
        b = self.budget
        self.budget = None
        try:
            d = super().to_dict()
        finally:
            self.budget = b
        d.pop("budget", None)
        if b is not None:
            d.update(b.to_dict())
        return d


def with_budget(ev: Evaluation, recipe: Recipe, catalog: Catalog, *,
                tolerances: Tolerances = Tolerances()) -> EvaluationWithBudget:
    """The evaluation of ``recipe`` with its budget."""
    from dataclasses import fields

    b = budget(recipe, catalog, tolerances=tolerances, evaluation=ev)
    return EvaluationWithBudget(**{f.name: getattr(ev, f.name) for f in fields(Evaluation)}, budget=b)


def with_ranges(solution, catalog: Catalog, *, tolerances: Tolerances = Tolerances()):
    """The solution with the budget of its result and the range of each addition (:func:`solve_ranges`);
    a :class:`mediaplan.tasks.uncertain_results.SolutionWithRanges`."""
    from mediaplan.tasks.uncertain_results import with_ranges as attach

    return attach(solution, catalog, tolerances=tolerances)


def with_level_intervals(design, background: Recipe, catalog: Catalog, *, tolerances: Tolerances = Tolerances()):
    """The design with each level's water potential interval (:func:`level_potential_intervals`); a
    :class:`mediaplan.tasks.uncertain_results.SeriesWithIntervals`."""
    from mediaplan.tasks.uncertain_results import with_level_intervals as attach

    return attach(design, background, catalog, tolerances=tolerances)


def series_level_uncertainty(osmoticum: str | None, background: Recipe, catalog: Catalog, *,
                             tolerances: Tolerances = Tolerances()):
    """:func:`level_uncertainty` of a series of ``osmoticum`` in ``background`` (None when the osmoticum is
    not known)."""
    if not osmoticum:
        return None
    return level_uncertainty(background, osmoticum, catalog, tolerances=tolerances)


def plan_series_uncertainty(series, recipe: Recipe, catalog: Catalog, *, tolerances: Tolerances = Tolerances()):
    """:func:`level_uncertainty` of a plan's saved series (its osmoticum, in the plan's recipe at the series'
    volume and temperature); None when the series names no osmoticum."""
    changes = {k: v for k, v in (("volume", series.volume), ("temperature", series.temperature)) if v}
    return series_level_uncertainty(series.osmoticum, recipe.with_settings(**changes), catalog,
                                    tolerances=tolerances)


#: volume of a level [text] when the counts do not say (the series command's default)
LEVEL_VOLUME = "50 mL"


def fit_with_levels(counts, link: str, catalog: Catalog, *, levels=None, temperature_k: float | None = None):
    """:func:`~mediaplan.tasks.plasmolysis.fit.fit_counts` with the levels' uncertainty (``levels``: from
    :func:`plan_series_uncertainty` or :func:`series_level_uncertainty`), or with a note saying it is not
    included (None)."""
    from mediaplan.tasks.plasmolysis.fit import fit_counts

    fit = fit_counts(counts, link, temperature_k=temperature_k, level_uncertainty=levels)
    if levels is None:
        fit.notes.append(LEVELS_NOT_KNOWN)
    return fit


def tolerances_with(tol: Tolerances, *, balance_readability: str | float | None = None,
                    volume_tolerance: str | float | None = None,
                    temperature_sd: float | None = None) -> Tolerances:
    """A copy of ``tol`` with the lab's own values, as typed: a readability (``"0.001 g"``, ``"1 mg"`` or a
    number of grams), a volumetric tolerance (``0.002`` or ``"0.2 %"``), a temperature sd [K].

    Raises AmountError naming the field (``balance_readability``, ``volume_tolerance``) for anything else.
    """
    from mediaplan.medium.errors import AmountError
    from mediaplan.medium.units import convert, normalise, parse_fraction

    changes: dict = {}
    if balance_readability is not None:
        fld = "balance_readability"
        hint = 'e.g. "0.01 g" or "1 mg"'
        if isinstance(balance_readability, (int, float)) and not isinstance(balance_readability, bool):
            g = float(balance_readability)
        else:
            text = normalise(str(balance_readability)).strip()
            num = text.rstrip("abcdefghijklmnopqrstuvwxyzµμABCDEFGHIJKLMNOPQRSTUVWXYZ ")
            unit = text[len(num):].strip() or "g"
            try:
                g = float(convert(float(num), unit, "g", field=fld))
            except ValueError:
                raise AmountError(f"cannot read balance readability {str(balance_readability)[:40]!r}", field=fld,
                                  hint=hint) from None
        if not math.isfinite(g) or g < 0 or g > 10:
            raise AmountError(f"balance readability {g:g} g must lie between 0 and 10 g", field=fld, hint=hint)
        changes["balance_readability_g"] = g
    if volume_tolerance is not None:
        changes["volume_relative"] = parse_fraction(volume_tolerance, field="volume_tolerance", upper=0.5)
    if temperature_sd is not None:
        t = float(temperature_sd)
        if not math.isfinite(t) or t < 0 or t > 20:
            raise AmountError(f"temperature uncertainty {t:g} K must lie between 0 and 20 K", field="temperature_sd",
                              hint="e.g. 1 K")
        changes["temperature_sd_k"] = t
    return replace(tol, **changes)


__all__ = ["Z95", "MODEL_ERROR", "NO_TEMPERATURE_TERMS", "ZSR_MIXING", "Interval", "Contribution", "Tolerances",
           "Budget", "budget", "model_error", "tolerances_with", "AdditionRange", "solve_ranges",
           "level_budgets", "level_potential_intervals", "level_uncertainty", "EvaluationWithBudget", "with_budget",
           "with_ranges", "with_level_intervals", "series_level_uncertainty", "LEVELS_NOT_KNOWN",
           "plan_series_uncertainty", "fit_with_levels", "LEVEL_VOLUME"]
