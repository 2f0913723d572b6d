"""Plasmolysis series design.

Levels evenly spaced in water potential (not in concentration). For each level the osmoticum
amount that brings the background (water, a buffer or a medium) to that potential is found with
the full non-ideal model (the background plus the osmoticum as a :class:`~mediaplan.medium.model.Sweep`,
ZSR mixing) and the root finder the solver uses too (:mod:`mediaplan.medium.roots`).
Preparation is stated, and the levels are computed for exactly that preparation (``PREPARATIONS``):

- ``in_background`` (the default): the osmoticum is dissolved in the ready-made background (water, a buffer or
  a medium) and made up to volume with the same background. The background keeps its own composition per kg
  of water; each level's grams per litre are of the finished solution, and ``grams_per_litre_of_background``
  gives the same solution made by adding the osmoticum to a measured volume of the background.
- ``weighed_together``: the background's components and the osmoticum are weighed into one flask and made
  up to volume with water, so the background is at its nominal amount per litre of each level.

In water the two are the same. When a stock is named, the levels are also given as volumes of stock and
diluent. The stock is the osmoticum in the background (as the preparation says); the diluent is the
background. The mixture's composition
per kg of water follows from the water content per litre of stock and diluent (the model's
solution density), not from C1V1 = C2V2; the mixing ratio is solved (for all levels at once) so that the
mixture has the level's water potential, which in water means the level's osmoticum molality exactly.
The two volumes are then scaled so that the mixture's own volume is the batch volume.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field

import numpy as np

from mediaplan.medium import roots
from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import AmountError, InfeasibleError, MediaplanError
from mediaplan.medium.evaluate import finite  # no NaN or infinity in any output (shared rule)
from mediaplan.medium.model import ModelState, ZSRTargets, compiled, sweep_line, sweep_residuals
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import Amount, parse_amount
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0

#: tolerances of the root finder on the amount: relative to the bracket's end [-], and on brentq's scale
_XTOL = 1e-10
_RTOL = 4 * np.finfo(float).eps
#: error hint when a level lies beyond what the model reaches
_HINT_LEVEL = "choose a less negative level"
#: how the levels are made: name -> what it means (the design computes exactly the one it names)
PREPARATIONS = {
    "in_background": "the osmoticum dissolved in the ready-made background and made up to volume with it",
    "weighed_together": "the background's components and the osmoticum weighed together and made up to volume "
                        "with water (the background at its nominal amount per litre of each level)",
}
#: temperature [K] a stock is taken to be kept at when the background states none (common practice: 4 °C)
DEFAULT_STORAGE_K = 277.15


def potentials_between(start: float, stop: float, steps: int) -> np.ndarray:
    """``steps`` water potentials [Pa] evenly spaced from ``start`` to ``stop`` (both included)."""
    _check_steps(steps)
    if start == stop:
        raise AmountError("the first and last level are the same potential", field="series.last",
                          hint="give two different potentials, e.g. from -0.2 MPa to -1.6 MPa")
    return np.linspace(start, stop, steps)


def potentials_around(centre: float, step: float, steps: int) -> np.ndarray:
    """``steps`` water potentials [Pa] centred on ``centre`` and ``step`` [Pa] apart, least negative first."""
    _check_steps(steps)
    step = abs(step)
    if step == 0:
        raise AmountError("the step between levels is zero", field="series.step", hint="e.g. a step of 0.1 MPa")
    psi = centre + step * (np.arange(steps) - (steps - 1) / 2.0)[::-1]
    if psi[0] >= 0:
        raise AmountError(f"the series around {centre / 1e6:g} MPa with steps of {step / 1e6:g} MPa reaches "
                          f"{psi[0] / 1e6:+.3g} MPa, which no solution has", field="series.step",
                          hint="use a smaller step, fewer levels or a more negative centre")
    return psi


def _check_steps(steps: int) -> None:
    if not isinstance(steps, int) or steps < 2:
        raise AmountError(f"a series needs at least 2 levels (got {steps})", field="series.steps",
                          hint="the fit needs 3 or more levels; 6-10 is usual")
    if steps > 60:
        raise AmountError(f"{steps} levels is more than anyone counts", field="series.steps", hint="use 60 or fewer")


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
    grams_per_litre_of_background: float | None = None  # osmoticum per litre of background taken (in_background)

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
    saturation_percent: float | None = None  # of the osmoticum's solubility at the series temperature
    storage_temperature_c: float | None = None  # where the stock is kept (the background's, or 4 °C)
    storage_saturation_percent: float | None = None  # of the solubility there (None: not known there)


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
    preparation: str = "in_background"
    preparation_text: str = ""

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


class _Background:
    """The background compiled with one osmoticum: ``sweep`` is the background plus x mol of osmoticum
    per m^3 of solution (component ``k`` of the model)."""

    def __init__(self, background: Recipe, osmoticum: Component, catalog: Catalog,
                 preparation: str = "in_background") -> None:
        lines = background.lines(catalog)
        #: amount of the same substance already in the background (the levels add to it), or None
        self.already = next((ln.amount.text for ln in lines if ln.component.id == osmoticum.id or (
            osmoticum.substance and ln.component.substance == osmoticum.substance)), None)
        if not osmoticum.species or not osmoticum.molar_mass:
            raise MediaplanError(f"{osmoticum.id} dissolves into nothing the model counts", field="osmoticum",
                                 hint="choose a solute such as mannitol, sorbitol, sucrose or KNO3")
        self.T = background.temperature_k
        self.model = compiled(catalog, [ln.component for ln in lines] + [osmoticum], self.T)
        n, b = self.model.amounts_to_arrays([ln.amount for ln in lines] + [Amount(0.0, "molar", "0 mM")])
        self.k = len(lines)
        #: kg water per litre of the ready-made background
        self.water_kg_per_l = float(self.model.water(n, b)) / 1000.0
        if preparation == "in_background" and self.k:
            # the background as made keeps its molalities: every amount per kg of its water
            b = n / (self.water_kg_per_l * 1000.0) + b
            n = np.zeros_like(n)
        dn = np.zeros_like(n)
        dn[self.k] = 1.0
        self.sweep = self.model.along(n, b, dn, np.zeros_like(b))
        self.osmoticum = osmoticum

    def water_and_solutes(self, st: ModelState) -> tuple[np.ndarray, np.ndarray]:
        """kg water per m^3 and kg anhydrous solutes per m^3 of each state in the batch."""
        return st.water_kg_per_m3, st.n_per_m3 @ self.model.M_anh


def design_series(background: Recipe, osmoticum: str, potentials_pa: Sequence[float], *,
                  catalog: Catalog, stock: str | None = None, spacing: str = "",
                  preparation: str = "in_background") -> SeriesDesign:
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
    preparation : how each level is made, one of :data:`PREPARATIONS` (``in_background``: dissolved in the
        ready-made background and made up to volume with it; ``weighed_together``: the background's
        components and the osmoticum made up to volume with water)

    Raises
    ------
    InfeasibleError when a level is less negative than the background, lies beyond the osmoticum's
    solubility at the series temperature, or beyond what the models reach; or when the stock cannot be made.
    """
    if preparation not in PREPARATIONS:
        raise AmountError(f"unknown preparation {preparation!r}", field="series.preparation",
                          hint="one of " + ", ".join(PREPARATIONS))
    comp = catalog.resolve(osmoticum, field="osmoticum").component
    background.check_plausible(catalog)  # an amount no medium holds: refused in the words calc uses
    mixer = _Background(background, comp, catalog, preparation)
    T = mixer.T
    psi = np.asarray(potentials_pa, dtype=float)
    y_target = potential.osmolality_from_potential(psi, T)
    st_bg = mixer.sweep.state(0.0)
    y_bg = float(st_bg.mix.osmolality[0])
    psi_bg = float(potential.potential_from_osmolality(y_bg, T))
    above = np.nonzero(y_target <= y_bg)[0]
    if above.size:
        i = int(above[0])
        raise InfeasibleError(f"level {i + 1} ({psi[i] / 1e6:.4g} MPa) is not more negative than the background "
                              f"itself ({psi_bg / 1e6:.4g} MPa)", field="series.first",
                              hint="start the series below the background's potential, or dilute the background")
    n_x, st, targets = _level_amounts(mixer, y_target, psi, comp)
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
            water_kg_per_l=float(W[i]) / 1000.0,
            grams_per_litre_of_background=(float(st.molality[i, mixer.k]) * M * 1000.0 * mixer.water_kg_per_l
                                           if preparation == "in_background" and mixer.k else None)))
    design = SeriesDesign(osmoticum=comp.id, osmoticum_name=comp.name, temperature_c=T - T0,
                          volume_ml=round(vol_l * 1000.0, 9), background=describe_background(background),
                          background_potential_mpa=psi_bg / 1e6 + 0.0, spacing=spacing, levels=levels,
                          preparation=preparation,
                          preparation_text=preparation_sentence(preparation, design_background(background),
                                                                comp.id, f"{vol_l * 1000.0:g} mL"))
    if stock is not None:
        _add_stock(design, mixer, stock, y_target, vol_l, st_bg, targets)
        _stock_saturation(design, comp, mixer, background)
    design.warnings = _design_warnings(design, comp, mixer)
    return design


def design_background(recipe: Recipe) -> str | None:
    """The background's description, or None when it is water."""
    text = describe_background(recipe)
    return None if text == "water" else text


def preparation_sentence(preparation: str, background: str | None, osmoticum: str, volume: str) -> str:
    """How the levels are made, in one sentence (what the design computed)."""
    if background is None:
        return f"By weight: dissolve the grams of {osmoticum} in water and make up to {volume} with water."
    if preparation == "weighed_together":
        return (f"By weight: weigh the components of {background} and the grams of {osmoticum} together and make "
                f"up to {volume} with water (the background at its nominal amount per litre of each level).")
    return (f"By weight: dissolve the grams of {osmoticum} in ready-made {background} and make up to {volume} "
            f"with the same {background}; or add the grams per litre of background to a measured volume of it "
            "(the same solution). The background keeps its own composition per kg of water.")


def _refuse_beyond_solubility(mixer: _Background, comp: Component, psi: np.ndarray, y_target: np.ndarray) -> None:
    """A level that needs more of the osmoticum (with what the background holds of the same substance) than
    dissolves at the series temperature cannot be made: refused, as the solver refuses it, naming the level
    and the limit (:meth:`Component.soluble_at`: the figure at that temperature, or the nearest one, said)."""
    capped, where = comp.soluble_at(mixer.T)
    if capped.solubility is None:
        return
    lim = mixer.sweep.limit([capped])
    if lim.component is None:
        return
    y_sat = float(mixer.sweep.osmolality(lim.x)[0])
    over = np.nonzero(y_target > y_sat * (1 + 1e-9))[0]
    if not over.size:
        return
    i = int(over[0])
    psi_sat = float(potential.potential_from_osmolality(y_sat, mixer.T)) / 1e6
    m_sat = capped.saturation_molality
    raise InfeasibleError(
        f"level {i + 1} ({psi[i] / 1e6:.4g} MPa) cannot be made with {comp.id}: it needs more than its solubility "
        f"({capped.solubility:.3g} g/100 g water, {m_sat:.3g} mol/kg {where}); the most negative level that "
        f"dissolves is {psi_sat:.4g} MPa", field="series.last",
        hint="choose a less negative last level, or a more soluble osmoticum (sorbitol, sucrose) or PEG")


def _stock_saturation(design: SeriesDesign, comp: Component, mixer: _Background, background: Recipe) -> None:
    """The stock's share of the osmoticum's solubility at the series temperature (refused above it: it
    cannot be made) and at the storage temperature (the background's, or :data:`DEFAULT_STORAGE_K`)."""
    s = design.stock
    m = s.molality_mol_per_kg
    capped, where = comp.soluble_at(mixer.T)
    m_sat = capped.saturation_molality
    if m_sat:
        if m > m_sat * (1 + 1e-9):
            raise InfeasibleError(f"the stock ({s.amount}, {m:.3g} mol/kg) is above the solubility of {comp.id} "
                                  f"({capped.solubility:.3g} g/100 g water, {m_sat:.3g} mol/kg {where}): it cannot "
                                  "be made", field="series.stock",
                                  hint="make the stock less concentrated: it need only pass the most negative level")
        s.saturation_percent = 100.0 * m / m_sat
    T_store = background.storage_temperature_k
    T_store = DEFAULT_STORAGE_K if T_store is None else T_store
    s.storage_temperature_c = T_store - T0
    m_cold = comp.saturation_molality_at(T_store)
    if m_cold:
        s.storage_saturation_percent = 100.0 * m / m_cold


def _level_amounts(mixer: _Background, y_target: np.ndarray, psi: np.ndarray,
                   comp: Component) -> tuple[np.ndarray, ModelState, ZSRTargets | None]:
    """Osmoticum [mol/m^3] of every level, the solved medium of each (one batched model call), and the ZSR
    residual at the levels' osmolalities (None when the forward search found them).

    All levels at once: one vectorised root finding (:func:`mediaplan.medium.roots.bracketed_roots`) on the
    ZSR residual at each level's osmolality (:func:`mediaplan.medium.model.sweep_residuals`), started from
    the closed-form root along the sweep (:func:`mediaplan.medium.model.sweep_line`: the answer itself when
    the osmoticum leaves the ion proportions as they are, a first guess otherwise), bracketed by no
    osmoticum and the space the volume leaves. The levels are then solved forward; should any of them not
    come back at its own osmolality (:data:`_FORWARD_CHECK`), or not be reached before the volume runs out,
    the levels are found on the forward model itself (:func:`_level_amounts_forward`), which also words
    the refusal. A level past the osmoticum's solubility is refused (:func:`_refuse_beyond_solubility`);
    the solubility limit itself is worked out only when some level's amount passes it."""
    sweep = mixer.sweep
    room = sweep.limit().x * (1.0 - 1e-12)  # a hair inside: a batch sums the volumes in another order
    n_x = targets = None
    past = found = False
    if room > 0:
        try:
            with np.errstate(**roots.FAST_PATH_ERRORS):
                f = sweep_residuals(sweep, y_target)
                line, exact = sweep_line(sweep, f)
                K = y_target.size
                guess = line.root()
                n_x = roots.bracketed_roots(line if exact else f, np.zeros(K), np.full(K, room), first=guess,
                                            window=_GUESS_WINDOW[exact], scale=guess, xtol=_XTOL, rtol=_RTOL,
                                            x_floor=1e-9)
                found = bool(np.all(np.isfinite(n_x)))
                past = found and _past_solubility(mixer, comp, n_x)
                targets = f.targets
        except roots.FAST_PATH_FAILURES:
            found = False
    if not found or past:
        _refuse_beyond_solubility(mixer, comp, psi, y_target)
    if found:
        st = sweep.state(n_x)
        y = st.mix.osmolality
        if np.all(np.isfinite(y)) and np.all(np.abs(y / y_target - 1.0) <= _FORWARD_CHECK):
            return n_x, st, targets
    return (*_level_amounts_forward(mixer, y_target, psi, comp), None)


def _past_solubility(mixer: _Background, comp: Component, n_x: np.ndarray) -> bool:
    """Whether some level's osmoticum, with every form of its substance in the model (the components
    :meth:`~mediaplan.medium.model.Sweep.limit` counts), is past its solubility at the series temperature."""
    capped, _ = comp.soluble_at(mixer.T)
    m_sat = capped.saturation_molality if capped.solubility is not None else None
    if m_sat is None:
        return False
    comps = mixer.model.components
    idx = [i for i, cc in enumerate(comps) if (cc.substance == capped.substance if capped.substance else cc is capped)]
    return bool(idx) and bool(np.any(mixer.sweep.molality(n_x)[:, idx].sum(axis=1) > m_sat))


#: half-width [-] of the window tried first around the closed-form root (by whether it is exact)
_GUESS_WINDOW = {True: 1e-9, False: 0.1}
#: how closely [-] each level solved forward must give back its own osmolality (the ZSR residual's root and
#: the forward ZSR solution agree to about 1e-12; anything wider means the forward model is past its range)
_FORWARD_CHECK = 1e-8


def _level_amounts_forward(mixer: _Background, y_target: np.ndarray, psi: np.ndarray,
                           comp: Component) -> tuple[np.ndarray, ModelState]:
    """The levels found on the forward model's osmolality itself (a grid, then the brackets refined): where
    the model stops answering past its range the search draws back, and a level beyond it is refused."""
    hi = _upper_bound(mixer, float(y_target.max()), psi, comp)
    n_x = roots.increasing_roots(mixer.sweep.osmolality, y_target, 0.0, hi, what="level", hint=_HINT_LEVEL,
                                 xtol=_XTOL, rtol=_RTOL, x_floor=1e-9)
    return n_x, mixer.sweep.state(n_x)


def _upper_bound(mixer: _Background, y_max: float, psi: np.ndarray, comp: Component) -> float:
    """An amount [mol/m^3] beyond the most concentrated level (the model must reach it), below the
    sweep's limit (the water left: :meth:`~mediaplan.medium.model.Sweep.limit`)."""
    hi = roots.bracket_above(lambda x: float(mixer.sweep.osmolality(x)[0]), y_max, 2.5 * y_max * 1000.0 + 10.0,
                             mixer.sweep.limit().x)
    if hi is None:
        raise InfeasibleError(f"{comp.id} cannot bring the background down to {psi.min() / 1e6:.4g} MPa: "
                              "the solution would be mostly solute", field="series.last",
                              hint="choose a less negative last level or another osmoticum")
    return hi


def _add_stock(design: SeriesDesign, mixer: _Background, stock_text: str, y_target: np.ndarray,
               vol_l: float, st_d: ModelState | None = None, targets: ZSRTargets | None = None) -> None:
    """Volumes of stock and diluent per level, from the water content of each (not C1V1 = C2V2).
    ``st_d``: the background solved (the diluent), when already at hand; ``targets``: the ZSR residual at
    the levels' osmolalities for this model, when already at hand."""
    amt = parse_amount(stock_text, field="series.stock")
    model, k = mixer.model, mixer.k
    n_s, b_s = model.amounts_to_arrays([Amount(0.0, "molar", "0 mM")] * k + [amt])
    n_stock, b_stock = mixer.sweep.n0.copy(), mixer.sweep.b0.copy()
    n_stock[k], b_stock[k] = n_s[k], b_s[k]
    st_s = model.solve(n_stock[None, :], b_stock[None, :])
    st_d = mixer.sweep.state(0.0) if st_d is None else st_d
    y_s = float(st_s.mix.osmolality[0])
    if not math.isfinite(y_s):  # e.g. an electrolyte background pushed past Pitzer's range by the stock
        raise InfeasibleError(f"the stock ({stock_text}) is past the range of the models: its water potential "
                              "cannot be computed", field="series.stock",
                              hint="make the stock less concentrated: it need only pass the most negative level")
    if y_s < float(y_target.max()) * (1 - 1e-9):
        psi_s = float(potential.potential_from_osmolality(y_s, mixer.T)) / 1e6
        raise InfeasibleError(f"the stock ({stock_text}, {psi_s:.4g} MPa) is weaker than the last level "
                              f"({design.levels[-1].water_potential_mpa:.4g} MPa)", field="series.stock",
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
        return model.solve(np.zeros_like(b), b), water[:, 0]

    fr, st_m, water = _mixing_fractions(model, c_s, c_d, W_s, W_d, y_target, mix_state, targets)
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


def _mixing_fractions(model, c_s: np.ndarray, c_d: np.ndarray, W_s: float, W_d: float, y_target: np.ndarray,
                      mix_state, eq: ZSRTargets | None = None) -> tuple[np.ndarray, ModelState, np.ndarray]:
    """Volume fraction of stock [-] in each level's mixture, with the mixture solved (and its water [kg per
    m^3 of stock and diluent]).

    The mixture of fraction f holds (f c_s + (1 − f) c_d) / (f W_s + (1 − f) W_d) mol per kg water: the same
    vectorised root finding as the levels (:func:`_level_amounts`) on the ZSR residual at each level's
    osmolality, from the closed-form root (exact when stock and diluent hold the ions in the same
    proportions), checked forward; the forward search of before when the check fails."""
    eq = ZSRTargets(model, y_target) if eq is None else eq
    K = y_target.size
    zero = np.zeros_like(c_s)

    def f_rows(f: np.ndarray, rows: np.ndarray) -> np.ndarray:
        f = np.asarray(f, dtype=float)[:, None]
        return eq((f * c_s + (1 - f) * c_d) / (f * W_s + (1 - f) * W_d), rows)

    try:
        with np.errstate(**roots.FAST_PATH_ERRORS):
            line, exact = eq.along(c_d, c_s - c_d, zero, zero, W_d, -(W_s - W_d), 1.0, 0.0)
            guess = line.root()
            fr = roots.bracketed_roots(line if exact else f_rows, np.zeros(K), np.ones(K), first=guess,
                                       window=_GUESS_WINDOW[exact], scale=guess, xtol=_XTOL, rtol=_RTOL,
                                       x_floor=1e-9)
    except roots.FAST_PATH_FAILURES:
        fr = np.full(K, np.nan)
    if np.all(np.isfinite(fr)):
        st_m, water = mix_state(fr)
        y = st_m.mix.osmolality
        if np.all(np.isfinite(y)) and np.all(np.abs(y / y_target - 1.0) <= _FORWARD_CHECK):
            return fr, st_m, water
    fr = roots.increasing_roots(lambda f: mix_state(f)[0].mix.osmolality, y_target, 0.0, 1.0, what="level",
                                hint=_HINT_LEVEL, xtol=_XTOL, rtol=_RTOL, x_floor=1e-9)
    st_m, water = mix_state(fr)
    return fr, st_m, water


def _design_warnings(design: SeriesDesign, comp: Component, mixer: _Background) -> list[str]:
    out = []
    if comp.reflection_coefficient is not None and comp.reflection_coefficient < 0.9:
        out.append(f"{comp.id} enters cells (reflection coefficient {comp.reflection_coefficient:g}): the cells "
                   "recover from plasmolysis and the 50 % point drifts; count quickly or use mannitol or sorbitol")
    elif comp.reflection_coefficient is None and any(":" not in sp and "[" in sp for sp, _ in comp.species):
        out.append(f"{comp.id} is an electrolyte whose ions may enter the cells: plasmolysis can reverse with time")
    capped, where = comp.soluble_at(mixer.T)
    m_sat = capped.saturation_molality
    if m_sat:
        top = max(lv.molality_mol_per_kg for lv in design.levels)
        if top > 0.8 * m_sat:
            out.append(f"the most concentrated level is at {100 * top / m_sat:.0f} % of the solubility of {comp.id} "
                       f"{where}: it may crystallise in the cold")
        if design.stock is not None and design.stock.molality_mol_per_kg > 0.8 * m_sat:
            out.append(f"the stock is at {100 * design.stock.molality_mol_per_kg / m_sat:.0f} % of the solubility of "
                       f"{comp.id} {where}: keep it warm and check for crystals before use")
    s = design.stock
    if s is not None and s.storage_saturation_percent is not None and s.storage_saturation_percent > 100 \
            and s.storage_temperature_c is not None and s.storage_temperature_c < design.temperature_c:
        out.append(f"the stock is at {s.storage_saturation_percent:.0f} % of the solubility of {comp.id} at "
                   f"{s.storage_temperature_c:g} °C: it crystallises if kept there; store it at the series "
                   "temperature or make it fresh")
    model = mixer.model
    for sp, p in model.neutral_models.items():
        top = max(lv.molality_mol_per_kg for lv in design.levels) if sp in dict(comp.species) else 0
        if top > p.m_max:
            out.append(f"{sp} above {p.m_max:g} mol/kg is beyond its model's range: extrapolated")
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
                         catalog: Catalog, preparation: str = "in_background") -> np.ndarray:
    """Water potential [Pa] of the background with each amount of the osmoticum (one batched model call),
    made as ``preparation`` says (see :data:`PREPARATIONS`)."""
    comp = catalog.resolve(osmoticum, field="osmoticum").component
    background.check_plausible(catalog)  # an amount no medium holds: refused in the words calc uses
    mixer = _Background(background, comp, catalog, preparation)
    model, k = mixer.model, mixer.k
    n = np.tile(mixer.sweep.n0, (len(amounts), 1))
    b = np.tile(mixer.sweep.b0, (len(amounts), 1))
    for i, a in enumerate(amounts):
        ni, bi = model.amounts_to_arrays([Amount(0.0, "molar", "0 mM")] * k + [a])
        n[i, k], b[i, k] = ni[k], bi[k]
    return potential.potential_from_osmolality(model.solve(n, b).mix.osmolality, mixer.T)
