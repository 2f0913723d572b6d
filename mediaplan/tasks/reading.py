"""An osmometer reading of a prepared batch against its plan: verdict, interval and the likely slips.

:func:`check_reading` compares what an osmometer displayed for a batch with what the plan predicts for
that instrument:

- a **freezing-point** osmometer reports the freezing-point depression θ / 1.858 K kg/mol
  (:attr:`~mediaplan.medium.evaluate.Evaluation.osmometer_mosmol_per_kg`);
- a **vapour-pressure** osmometer reports the osmolality implied by the water activity at its chamber
  temperature: the recipe evaluated at that temperature.

The predicted interval (95 %) is the model's uncertainty budget combined with the instrument's
repeatability (:class:`Instrument`, a stated default a lab can set). When the reading falls outside it,
single preparation slips are enumerated and each is re-evaluated with the full model, in one batch through
the compiled model: a component left out; a component at 2×, 10×, ½ or 1/10; the other hydrate form
weighed for a line; a stock added twice or left out (when the recipe has a stock scheme); the whole batch
at a factor (solved for); a solute not in the recipe (the grams of one of the plan's usual osmotica that
would explain the excess). Each is ranked by how well it explains the reading within the interval and by
how plausible such a slip is (:data:`PLAUSIBILITY`).

An instrument calibration (:class:`Calibration`: offset and slope from readings of osmometer standards)
corrects the displayed value before the comparison. Reads no file: the catalog, the calibration and the
instrument settings are passed in.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import AmountError, InfeasibleError, MediaplanError
from mediaplan.medium.evaluate import Evaluation, evaluate, finite
from mediaplan.medium.model import MIN_FREE_VOLUME, MediumModel, compiled
from mediaplan.medium.recipe import Line, Recipe
from mediaplan.medium.units import measure, parse_temperature
from mediaplan.tasks.uncertainty import budget
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0

INSTRUMENTS = ("freezing-point", "vapour-pressure")
VERDICTS = ("consistent", "higher", "lower")
KINDS = ("omitted", "amount", "hydrate", "stock", "strength", "unlisted_solute")

#: a reading above this is no osmometer reading of a culture medium [mOsm/kg] (laboratory osmometers
#: read up to about 3000-4000 mOsm/kg; common practice)
MAX_READING_MOSMOL = 5000.0
#: the component factors tried as slips: double, a decimal slip, half, a tenth
AMOUNT_FACTORS = (2.0, 10.0, 0.5, 0.1)
#: the largest whole-batch factor searched [-]
MAX_STRENGTH = 20.0
#: explanations listed at most
MAX_EXPLANATIONS = 8
Z95 = 1.959963984540054  # two-sided 95 % point of the normal distribution

#: how plausible each kind of slip is a priori [-] (judgement, common practice in a media kitchen: a line
#: forgotten or weighed with a decimal slip is common; the other hydrate form less so; the whole batch
#: made up wrong, or something foreign in the vessel, are the explanations of last resort because they
#: fit any reading by construction)
PLAUSIBILITY = {"omitted": 1.0, "amount": 0.8, "hydrate": 0.6, "stock": 0.8, "strength": 0.35,
                "strength_far": 0.08, "unlisted_solute": 0.15}
#: a whole-batch factor within this ratio of 1 is a plausible volume or evaporation slip [-] (common practice)
STRENGTH_NEAR = 1.5

_WORDS = {2.0: "twice", 10.0: "ten times", 0.5: "half", 0.1: "a tenth of"}


@dataclass(frozen=True)
class Instrument:
    """An osmometer as the comparison sees it.

    kind : ``"freezing-point"`` or ``"vapour-pressure"``
    repeatability_mosmol : standard deviation of repeated readings at low osmolality [mOsm/kg]
    repeatability_fraction : standard deviation relative to the reading at high osmolality [-]; the larger
        of the two applies
    chamber_temperature_k : the chamber temperature of a vapour-pressure osmometer [K] (None otherwise)

    Defaults (common practice, from memory: the repeatability laboratory osmometers are specified with):
    freezing-point 2 mOsm/kg or 0.5 %; vapour-pressure 3 mOsm/kg or 1 %.
    """

    kind: str = "freezing-point"
    repeatability_mosmol: float | None = None
    repeatability_fraction: float | None = None
    chamber_temperature_k: float | None = None

    def __post_init__(self) -> None:
        if self.kind not in INSTRUMENTS:
            raise AmountError(f"unknown instrument {self.kind!r}", field="instrument",
                              hint="freezing-point or vapour-pressure")
        for name in ("repeatability_mosmol", "repeatability_fraction"):
            v = getattr(self, name)
            if v is not None and (isinstance(v, bool) or not math.isfinite(v) or v < 0):
                raise AmountError(f"repeatability {v!r} must be a number of 0 or more", field="repeatability",
                                  hint='e.g. "2 mOsm/kg"')

    @property
    def sd_floor(self) -> float:
        """[mOsm/kg]"""
        if self.repeatability_mosmol is not None:
            return self.repeatability_mosmol
        return 2.0 if self.kind == "freezing-point" else 3.0  # common practice (see the class docstring)

    @property
    def sd_fraction(self) -> float:
        """[-]"""
        if self.repeatability_fraction is not None:
            return self.repeatability_fraction
        return 0.005 if self.kind == "freezing-point" else 0.01  # common practice (see the class docstring)

    def sd(self, value_mosmol: float) -> float:
        """Standard deviation of one reading near ``value_mosmol`` [mOsm/kg]."""
        return max(self.sd_floor, self.sd_fraction * abs(value_mosmol))


@dataclass(frozen=True)
class Calibration:
    """An osmometer's correction from readings of standards: true = offset + slope × displayed [mOsm/kg].

    standards : (nominal, displayed) pairs [mOsm/kg] it was made from
    """

    instrument: str
    offset_mosmol: float = 0.0
    slope: float = 1.0
    standards: tuple[tuple[float, float], ...] = ()
    date: str | None = None

    def corrected(self, displayed_mosmol: float) -> float:
        """[mOsm/kg]"""
        return self.offset_mosmol + self.slope * displayed_mosmol

    def note(self) -> str:
        std = ", ".join(f"{n:g}" for n, _ in self.standards)
        return (f"{self.instrument} calibration applied: true = {self.offset_mosmol:+.2f} mOsm/kg + "
                f"{self.slope:.4f} × displayed" + (f" (standards {std} mOsm/kg" + (f", {self.date})" if self.date
                                                                                    else ")") if std else ""))

    def to_dict(self) -> dict:
        return {"instrument": self.instrument, "offset_mosmol_per_kg": self.offset_mosmol, "slope": self.slope,
                "standards": [list(s) for s in self.standards], "date": self.date}


def fit_calibration(instrument: str, standards: Sequence[tuple[float, float]], *, date: str | None = None
                    ) -> Calibration:
    """The calibration of an instrument from (nominal, displayed) readings of standards [mOsm/kg].

    One standard gives an offset alone (slope 1); two or more a least-squares line nominal = a + b·displayed.
    The usual standards are 100, 290 and 1000 mOsm/kg (common practice). A slope outside 0.8-1.25 is
    refused: that is no calibration drift but a wrong standard or a wrong number.
    """
    if instrument not in INSTRUMENTS:
        raise AmountError(f"unknown instrument {instrument!r}", field="instrument",
                          hint="freezing-point or vapour-pressure")
    pts = [(float(a), float(b)) for a, b in standards]
    if not pts:
        raise AmountError("no standard readings given", field="standards", hint="e.g. 290=293 (nominal=displayed)")
    for nominal, shown in pts:
        for v in (nominal, shown):
            if not math.isfinite(v) or v <= 0 or v > MAX_READING_MOSMOL:
                raise AmountError(f"standard reading {v:g} mOsm/kg is not a plausible osmolality",
                                  field="standards", hint=f"between 0 and {MAX_READING_MOSMOL:g} mOsm/kg")
    nominal = np.array([p[0] for p in pts])
    shown = np.array([p[1] for p in pts])
    if len(pts) == 1 or float(np.ptp(shown)) == 0.0:
        if len(set(nominal.tolist())) > 1:
            raise AmountError("different standards gave the same displayed value", field="standards",
                              hint="check the pairs (nominal=displayed)")
        a, b = float(np.mean(nominal - shown)), 1.0
    else:
        b, a = (float(x) for x in np.polyfit(shown, nominal, 1))
    if not 0.8 <= b <= 1.25:
        raise AmountError(f"the standards give a slope of {b:.3f}: no calibration drift is that large",
                          field="standards", hint="check each pair is nominal=displayed of the same standard")
    if abs(a) > 100:
        raise AmountError(f"the standards give an offset of {a:+.0f} mOsm/kg", field="standards",
                          hint="check each pair is nominal=displayed of the same standard")
    return Calibration(instrument, a, b, tuple(pts), date)


def parse_reading(text: str, *, field: str = "reading") -> float:
    """An osmometer reading such as ``"182 mOsm/kg"`` or ``"0.182 Osm/kg"`` -> [mOsm/kg].

    Refuses text without a unit, other kinds of quantity, negative, zero-free absurd and non-finite values
    (one-line errors naming the field).
    """
    if not isinstance(text, str) or not text.strip():
        raise AmountError("no reading given", field=field, hint='e.g. "182 mOsm/kg"')
    if len(text) > 200:
        raise AmountError("the reading is longer than 200 characters", field=field, hint='e.g. "182 mOsm/kg"')
    try:
        m = measure(text, field=field)
    except AmountError as exc:
        if "has no unit" in exc.message:
            exc.hint = f'osmometers display mOsm/kg: write "{text.strip()} mOsm/kg"'
        raise
    if m.kind != "osmolality":
        raise AmountError(f"{text.strip()!r} is not an osmolality", field=field,
                          hint='an osmometer reading is in mOsm/kg, e.g. "182 mOsm/kg"')
    value = m.value * 1000.0
    if not math.isfinite(value):
        raise AmountError(f"{text.strip()!r} is not a finite number", field=field, hint='e.g. "182 mOsm/kg"')
    if value < 0:
        raise AmountError(f"reading {text.strip()!r} is negative", field=field,
                          hint="an osmometer reading of a medium is positive")
    if value > MAX_READING_MOSMOL:
        raise AmountError(f"reading {text.strip()!r} is above {MAX_READING_MOSMOL:g} mOsm/kg", field=field,
                          hint="no osmometer reads that far; check the number and unit")
    return value


# ---- the prediction and its interval ---------------------------------------------------------------
@dataclass(frozen=True)
class Prediction:
    """What the instrument should read for a recipe: value and the model's own 95 % interval [mOsm/kg]."""

    value: float
    low: float
    high: float
    recipe: Recipe  # the recipe at the temperature the instrument measures (the chamber's for vapour pressure)
    evaluation: Evaluation
    source: str  # where the model interval comes from

    @property
    def relative_half_width(self) -> float:
        """The model interval's half-width relative to the value [-]."""
        return (self.high - self.low) / 2.0 / self.value if self.value > 0 else 0.0


def predict(recipe: Recipe, catalog: Catalog, instrument: Instrument) -> Prediction:
    """The instrument's predicted reading of a recipe with the 95 % interval of the uncertainty budget
    (:func:`mediaplan.tasks.uncertainty.budget`: model error, weighing, volume, temperature) [mOsm/kg]:
    its ``osmometer`` interval for a freezing-point osmometer, its ``osmolality`` interval at the chamber
    temperature for a vapour-pressure one."""
    at = recipe
    if instrument.kind == "vapour-pressure" and instrument.chamber_temperature_k is not None:
        at = recipe.with_settings(temperature=f"{instrument.chamber_temperature_k - T0:.6g} degC")
    ev = evaluate(at, catalog)
    value = ev.osmometer_mosmol_per_kg if instrument.kind == "freezing-point" else ev.osmolality_mosmol_per_kg
    b = budget(at, catalog, evaluation=ev)
    iv = b.osmometer if instrument.kind == "freezing-point" else b.osmolality  # centred on the evaluation's value
    return Prediction(value, iv.low, iv.high, at, ev, "uncertainty budget")


def combined_interval(pred: Prediction, instrument: Instrument, value: float | None = None) -> tuple[float, float]:
    """The 95 % interval of a reading [mOsm/kg]: the model interval (scaled to ``value`` when given)
    and the instrument's repeatability, combined in quadrature on each side; never below zero."""
    v = pred.value if value is None else value
    k = v / pred.value if pred.value > 0 else 1.0
    lo_m, hi_m = (pred.value - pred.low) * k, (pred.high - pred.value) * k
    inst = Z95 * instrument.sd(v)
    return max(v - math.hypot(lo_m, inst), 0.0), v + math.hypot(hi_m, inst)


# ---- slips ----------------------------------------------------------------------------------------
@dataclass
class Explanation:
    """One single slip that may explain a reading.

    kind : one of :data:`KINDS`; component_ids : the components concerned (empty for the whole batch);
    factor : the factor on the amount(s) [-] (None for an omission; grams per litre for an unlisted solute
    are in the description and ``grams_per_litre``, of the component ``equivalent_of``); predicted_mosmol_per_kg : what the instrument would read
    after this slip; explains : within the interval of the reading; z : (predicted − reading) in standard
    deviations [-]; plausibility : a priori [-]
    """

    kind: str
    component_ids: list[str]
    factor: float | None
    description: str
    predicted_mosmol_per_kg: float
    explains: bool = False
    z: float = math.nan
    plausibility: float = 1.0
    grams_per_litre: float | None = None
    equivalent_of: str | None = None

    @property
    def score(self) -> float:
        """Lower is better: half the squared z plus the negative log of the plausibility."""
        return 0.5 * self.z * self.z - math.log(self.plausibility)

    def to_dict(self) -> dict:
        d = {"kind": self.kind, "component_ids": list(self.component_ids), "factor": self.factor,
             "description": self.description, "predicted_mosmol_per_kg": self.predicted_mosmol_per_kg,
             "explains": self.explains, "z": self.z, "plausibility": self.plausibility}
        if self.grams_per_litre is not None:
            d["grams_per_litre"] = self.grams_per_litre
            d["equivalent_component_id"] = self.equivalent_of
        return finite(d)


@dataclass
class _Variant:
    kind: str
    ids: list[str]
    factor: float | None
    description: str
    scale: np.ndarray  # factor on each component's amount
    plausibility: float


def _name(c: Component) -> str:
    return f"{c.name} ({c.formula})" if c.formula and c.formula != c.name else c.name


def _has_solutes(ln: Line) -> bool:
    return bool(ln.component.species)


def _same_substance(catalog: Catalog, c: Component) -> list[Component]:
    if not c.substance:
        return []
    return [o for o in catalog.components.values() if o.substance == c.substance and o.id != c.id
            and o.molar_mass and o.hydrate_water != c.hydrate_water]


def _variants(lines: list[Line], catalog: Catalog, stocks: list[tuple[str, list[str]]]) -> list[_Variant]:
    out: list[_Variant] = []
    nc = len(lines)
    ones = np.ones(nc)
    for i, ln in enumerate(lines):
        if not _has_solutes(ln):
            continue
        c = ln.component
        s = ones.copy()
        s[i] = 0.0
        out.append(_Variant("omitted", [c.id], None, f"{_name(c)} left out of the batch ({ln.amount.text} planned).",
                            s, PLAUSIBILITY["omitted"]))
        for f in AMOUNT_FACTORS:
            s = ones.copy()
            s[i] = f
            how = "a decimal or unit slip" if f in (10.0, 0.1) else ("weighed twice" if f == 2.0 else "half weighed")
            out.append(_Variant("amount", [c.id], f, f"{_WORDS[f].capitalize()} the planned amount of {_name(c)} "
                                f"({ln.amount.text} planned; {how}).", s, PLAUSIBILITY["amount"]))
        if c.molar_mass and ln.amount.kind in ("mass_conc", "mass_per_water", "molar", "molal"):
            for o in _same_substance(catalog, c):
                ratio = c.molar_mass / o.molar_mass  # moles of the substance per mole planned
                s = ones.copy()
                s[i] = ratio
                what = _name(o)
                out.append(_Variant("hydrate", [c.id, o.id], ratio,
                                    f"{what[:1].upper()}{what[1:]} weighed at the mass planned for {c.display}: "
                                    f"{abs(ratio - 1) * 100:.0f} % {'more' if ratio > 1 else 'less'} of the substance.",
                                    s, PLAUSIBILITY["hydrate"]))
    index = {ln.component.id: i for i, ln in enumerate(lines)}
    for label, ids in stocks:
        idx = [index[c] for c in ids if c in index]
        if len(idx) < 2:
            continue  # a stock of one component: the amount slips above already say it
        for f, what in ((2.0, "added twice"), (0.0, "left out")):
            s = ones.copy()
            s[idx] = f
            out.append(_Variant("stock", [lines[k].component.id for k in idx], f if f else None,
                                f"The {label} stock {what} ({len(idx)} components).", s, PLAUSIBILITY["stock"]))
    return out


def _reading_of(model: MediumModel, n: np.ndarray, b: np.ndarray, instrument: str) -> np.ndarray:
    """What the instrument reads for each row of amounts [mOsm/kg]; NaN for rows past the model's range."""
    n, b = np.atleast_2d(n), np.atleast_2d(b)
    out = np.full(n.shape[0], np.nan)
    ok = model.free_volume(n) >= MIN_FREE_VOLUME
    if not ok.any():
        return out
    with np.errstate(all="ignore"):
        st = model.solve(n[ok], b[ok])
        if instrument == "freezing-point":
            y0 = model.mixture(st.species_m, T0).osmolality
            theta = potential.freezing_point_depression(potential.water_activity(y0))
            vals = potential.osmometer_reading(theta) * 1000.0
        else:
            vals = st.mix.osmolality * 1000.0
    out[ok] = vals
    return out


def _factor_root(f_batch, reading: float, hi: float, what: str) -> float | None:
    from mediaplan.medium import roots

    try:
        return float(roots.increasing_roots(f_batch, np.array([reading]), 0.0, hi, what=what,
                                            hint="no such factor")[0])
    except (InfeasibleError, MediaplanError, ValueError, ZeroDivisionError):
        return None


def _strength(model: MediumModel, n0, b0, reading: float, instrument: str) -> _Variant | None:
    hi = min(MAX_STRENGTH, model.along(np.zeros_like(n0), np.zeros_like(b0), n0, b0).limit().x)
    if not hi > 0:
        return None
    f = _factor_root(lambda x: _reading_of(model, np.outer(x, n0), np.outer(x, b0), instrument), reading, hi,
                     "whole-batch factor")
    if f is None or not f > 0:
        return None
    if f >= 1:
        desc = (f"The whole batch {f:.2f}× as concentrated as planned (made up to {1 / f:.2f} of the volume, "
                f"or water lost by evaporation).")
    else:
        desc = (f"The whole batch at {f:.2f}× the planned concentration (made up to {1 / f:.2f} times the "
                f"planned volume).")
    near = 1 / STRENGTH_NEAR <= f <= STRENGTH_NEAR or abs(f - 2) < 0.1 or abs(f - 0.5) < 0.025
    p = PLAUSIBILITY["strength"] if near else PLAUSIBILITY["strength_far"]
    return _Variant("strength", [], f, desc, np.full(n0.shape, f), p)


def usual_osmotica(lines: list[Line], catalog: Catalog, named: Sequence[str] = ()) -> list[Component]:
    """The osmotica a plan usually holds: those it names (its target's, its series'), the recipe's own
    osmotica and carbon source, else sucrose and mannitol."""
    out: list[Component] = []
    for cid in named:
        try:
            c = catalog.resolve(cid).component
        except MediaplanError:
            continue
        if c not in out:
            out.append(c)
    for ln in lines:
        if ln.component.group in ("osmoticum", "carbon", "cryoprotectant") and ln.component not in out:
            out.append(ln.component)
    if not out:
        for cid in ("sucrose", "mannitol"):
            if cid in catalog.components:
                out.append(catalog.components[cid])
    return out[:3]


def _unlisted(lines, catalog, T, n0, b0, reading, instrument, osmotica) -> list[Explanation]:
    out = []
    comps = [ln.component for ln in lines]
    for osm in osmotica:
        if not osm.molar_mass:
            continue
        if osm in comps:
            model, j, n, b = compiled(catalog, comps, T), comps.index(osm), n0, b0
        else:
            model = compiled(catalog, [*comps, osm], T)
            j, n, b = len(comps), np.append(n0, 0.0), np.append(b0, 0.0)
        dn = np.zeros_like(n)
        dn[j] = 1.0  # mol per m^3 of medium
        hi = model.along(n, b, dn, np.zeros_like(b)).limit([osm]).x
        if not hi > 0:
            continue
        x = _factor_root(lambda x, m=model, n=n, b=b, dn=dn: _reading_of(m, n + np.outer(x, dn), np.outer(
            np.ones_like(x), b), instrument), reading, hi, "unlisted solute")
        if x is None or not x > 0:
            continue
        g = x * osm.molar_mass / 1000.0  # g per L of medium
        pred = float(_reading_of(model, n + x * dn, b, instrument)[0])
        out.append(Explanation("unlisted_solute", [], None,
                               f"A solute not in the recipe, as much as {g:.3g} g/L of {osm.name} would bring "
                               f"(a wrong bottle, a leftover in the vessel, or a solute added twice).", pred,
                               plausibility=PLAUSIBILITY["unlisted_solute"], grams_per_litre=g,
                               equivalent_of=osm.id))
    return out


def stock_groups(recipe: Recipe, catalog: Catalog) -> list[tuple[str, list[str]]]:
    """(label, component ids) of each stock of the recipe's stock scheme (:mod:`mediaplan.tasks.prep`);
    empty when the recipe has none."""
    from mediaplan.tasks.prep.sheet import build_sheet

    try:
        sheet = build_sheet(recipe, catalog, stocks=True)
    except MediaplanError:
        return []
    return [(s.label, [it.id for it in s.items]) for s in sheet.stocks]


def explain(recipe: Recipe, catalog: Catalog, reading: float, pred: Prediction, instrument: Instrument, *,
            osmotica_named: Sequence[str] = ()) -> list[Explanation]:
    """Every single slip re-evaluated with the full model and ranked (best first) against ``reading``
    [mOsm/kg]: those that explain it within its interval first."""
    at = pred.recipe
    lines = at.lines(catalog)
    if not lines:
        return []
    T = at.temperature_k
    comps = [ln.component for ln in lines]
    model = compiled(catalog, comps, T)
    n0, b0 = model.amounts_to_arrays([ln.amount for ln in lines])
    variants = _variants(lines, catalog, stock_groups(recipe, catalog))
    if variants:
        S = np.array([v.scale for v in variants])
        preds = _reading_of(model, S * n0, S * b0, instrument.kind)
    else:
        preds = np.array([])
    out: list[Explanation] = []
    for v, p in zip(variants, preds.tolist(), strict=True):
        if math.isfinite(p):
            out.append(Explanation(v.kind, v.ids, v.factor, v.description, p, plausibility=v.plausibility))
    st = _strength(model, n0, b0, reading, instrument.kind)
    if st is not None:
        p = float(_reading_of(model, st.scale * n0, st.scale * b0, instrument.kind)[0])
        out.append(Explanation("strength", [], st.factor, st.description, p, plausibility=st.plausibility))
    if reading > pred.value:
        out += _unlisted(lines, catalog, T, n0, b0, reading, instrument.kind,
                         usual_osmotica(lines, catalog, osmotica_named))
    rel = pred.relative_half_width / Z95
    for e in out:
        sd = math.hypot(rel * e.predicted_mosmol_per_kg, instrument.sd(e.predicted_mosmol_per_kg))
        e.z = (e.predicted_mosmol_per_kg - reading) / sd if sd > 0 else math.inf
        e.explains = abs(e.z) <= Z95
    # a slip that changes nothing the instrument can see explains nothing a reading can say
    out = [e for e in out if abs(e.predicted_mosmol_per_kg - pred.value) > 1e-9 * max(pred.value, 1.0)]
    out.sort(key=lambda e: (not e.explains, e.score))
    return out


# ---- the verdict ----------------------------------------------------------------------------------
@dataclass
class ReadingCheck:
    """A reading against its plan (units in the names; the ``reading`` JSON contract is :meth:`to_dict`)."""

    instrument: str
    predicted_mosmol_per_kg: float
    interval_mosmol_per_kg: tuple[float, float]
    model_interval_mosmol_per_kg: tuple[float, float]
    reading_mosmol_per_kg: float
    displayed_mosmol_per_kg: float
    deviation_mosmol_per_kg: float
    deviation_percent: float
    verdict: str
    repeatability_sd_mosmol_per_kg: float
    chamber_temperature_c: float | None
    explanations: list[Explanation] = field(default_factory=list)
    none_explains: bool = False
    calibration: Calibration | None = None
    notes: list[str] = field(default_factory=list)
    interval_source: str = ""

    def to_dict(self) -> dict:
        return finite({
            "predicted_mosmol_per_kg": self.predicted_mosmol_per_kg,
            "interval_mosmol_per_kg": list(self.interval_mosmol_per_kg),
            "reading_mosmol_per_kg": self.reading_mosmol_per_kg,
            "deviation_percent": self.deviation_percent,
            "verdict": self.verdict,
            "instrument": self.instrument,
            "explanations": [e.to_dict() for e in self.explanations],
            "deviation_mosmol_per_kg": self.deviation_mosmol_per_kg,
            "displayed_mosmol_per_kg": self.displayed_mosmol_per_kg,
            "model_interval_mosmol_per_kg": list(self.model_interval_mosmol_per_kg),
            "interval_source": self.interval_source,
            "repeatability_sd_mosmol_per_kg": self.repeatability_sd_mosmol_per_kg,
            "chamber_temperature_c": self.chamber_temperature_c,
            "none_explains": self.none_explains,
            "calibration": self.calibration.to_dict() if self.calibration else None,
            "notes": list(self.notes),
        })


def check_reading(recipe: Recipe, catalog: Catalog, reading: float | str, *,
                  instrument: Instrument | None = None, calibration: Calibration | None = None,
                  osmotica_named: Sequence[str] = (), explain_always: bool = False) -> ReadingCheck:
    """A reading against the plan's prediction for the instrument.

    Parameters
    ----------
    recipe : the plan's recipe
    catalog : the catalog the recipe resolves with
    reading : what the osmometer displayed [mOsm/kg], or its text (``"182 mOsm/kg"``)
    instrument : the osmometer (default: freezing-point, common-practice repeatability); a vapour-pressure
        osmometer needs its chamber temperature, else the recipe's own temperature is taken (with a note)
    calibration : the instrument's correction (its ``instrument`` must match), applied before comparing
    osmotica_named : the plan's own osmotica (its target's, its series') for the unlisted-solute slips
    explain_always : enumerate the slips even for a consistent reading
    """
    instrument = instrument or Instrument()
    displayed = parse_reading(reading) if isinstance(reading, str) else float(reading)
    if not math.isfinite(displayed) or displayed < 0 or displayed > MAX_READING_MOSMOL:
        raise AmountError(f"reading {displayed!r} mOsm/kg is not a plausible osmometer reading", field="reading",
                          hint=f"between 0 and {MAX_READING_MOSMOL:g} mOsm/kg")
    notes: list[str] = []
    if instrument.kind == "vapour-pressure" and instrument.chamber_temperature_k is None:
        notes.append(f"no chamber temperature given: the plan's {recipe.temperature} taken")
    if instrument.chamber_temperature_k is not None:
        parse_temperature(f"{instrument.chamber_temperature_k - T0:.6g} degC", field="chamber_temperature")
    value = displayed
    if calibration is not None:
        if calibration.instrument != instrument.kind:
            raise AmountError(f"the calibration is of a {calibration.instrument} osmometer, the reading of a "
                              f"{instrument.kind} one", field="calibration", hint="use that instrument's calibration")
        value = calibration.corrected(displayed)
        notes.append(calibration.note())
    pred = predict(recipe, catalog, instrument)
    low, high = combined_interval(pred, instrument)
    dev = value - pred.value
    verdict = "consistent" if low <= value <= high else ("higher" if value > high else "lower")
    explanations: list[Explanation] = []
    none = False
    if verdict != "consistent" or explain_always:
        ranked = explain(recipe, catalog, value, pred, instrument, osmotica_named=osmotica_named)
        good = [e for e in ranked if e.explains]
        none = not good and verdict != "consistent"
        explanations = (good if good else ranked[:3])[:MAX_EXPLANATIONS]
        if none:
            notes.append("no single slip explains the reading: look for several, or check the instrument")
    chamber = pred.evaluation.temperature_c if instrument.kind == "vapour-pressure" else None
    return ReadingCheck(
        instrument=instrument.kind, predicted_mosmol_per_kg=pred.value, interval_mosmol_per_kg=(low, high),
        model_interval_mosmol_per_kg=(pred.low, pred.high), reading_mosmol_per_kg=value,
        displayed_mosmol_per_kg=displayed, deviation_mosmol_per_kg=dev,
        deviation_percent=dev / pred.value * 100.0 if pred.value > 0 else math.nan, verdict=verdict,
        repeatability_sd_mosmol_per_kg=instrument.sd(pred.value), chamber_temperature_c=chamber,
        explanations=explanations, none_explains=none, calibration=calibration, notes=notes,
        interval_source=pred.source)


__all__ = ["INSTRUMENTS", "KINDS", "PLAUSIBILITY", "VERDICTS", "Calibration", "Explanation", "Instrument",
           "Prediction", "ReadingCheck", "check_reading", "combined_interval", "explain", "fit_calibration",
           "parse_reading", "predict", "stock_groups", "usual_osmotica"]
