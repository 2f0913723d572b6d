"""Reach a target: the addition of one or two osmotica that brings a medium to a water potential,
an osmolality, or a tonicity toward the cells.

Targets
-------
``-0.8 MPa``, ``-8 bar``, ``-800 kPa`` (water potential), ``450 mOsm/kg`` (osmolality), or a tonicity
target relative to the cells: ``isotonic``, ``isotonic+10%``, ``isotonic-5 %``, ``isotonic+50 mOsm/kg``,
``isotonic-50 mOsm/kg``. Offsets act on the osmolality: ``+`` makes the medium more concentrated
(hypertonic side), ``-`` less. A tonicity target needs a cell reference (osmolality [mOsm/kg]) and
matches the *effective* osmolality toward the cells (each solute's osmolal share weighted by its
reflection coefficient), not the total.

Method
------
The full non-ideal model is solved, not the van't Hoff inverse. For a potential or osmolality target
the water activity of the answer is known in advance, so the Zdanovskii–Stokes–Robinson rule
(Stokes & Robinson 1966, J Phys Chem 70:2126) turns into one equation in the amount x added:

    Σ_g m_g(x) / m_g°(a_w*) = 1

where m_g°(a_w*) is the molality of the binary solution of solute group g that has the target water
activity (computed once: Norrish inverse for neutral solutes, Michel equations for PEG, Pitzer for
the electrolytes), and m_g(x) the group's molality in the medium after the addition (water content
from the apparent molar volumes: :meth:`mediaplan.medium.model.MediumModel.water`), the residual of
:meth:`mediaplan.medium.model.Sweep.residual_at` (batched: :func:`mediaplan.medium.model.sweep_residuals`).
The left side grows monotonically with x. With the electrolytes' φ held at the target (exact when the
addition leaves the ion proportions as they are: a neutral osmoticum) it is a ratio of polynomials in x whose
root is a quadratic's (:func:`mediaplan.medium.model.sweep_line`); from that first guess the vectorised
bracketed root finder (:func:`mediaplan.medium.roots.bracketed_roots`) confirms the root in two or three
steps, the bracket kept from no addition to the space the volume leaves (:meth:`Sweep.limit`). The
osmoticum's solubility is checked at the root; only when it stops the addition is its limit worked out, and
Brent's method (:func:`mediaplan.medium.roots.increasing_root`) then searches below it, as it does whenever
the batched path does not settle the answer. The answer is then re-evaluated from scratch with
:func:`mediaplan.medium.evaluate.evaluate`. A tonicity target with
permeating solutes (reflection coefficient below 1) has no such shortcut and is solved on the full
evaluation directly (slower, still exact).

Two osmotica: either in a fixed molar ratio (``ratio=[1, 1]``: equal moles added), or with one held at
a set level (``hold={"sucrose": "20 g/L"}``) and the other making up the rest.

When the medium is already more concentrated than the target and already holds the osmoticum (a wash
at 0.5 mol/L mannitol asked for a less negative potential), the osmoticum is lowered first: the answer is
the smaller amount that reaches the target (``lowered`` names it; its additions are negative). Only when
removing all of it does not reach the target does the answer give the strength of the base formulation,
and the dilution of the whole medium with water, that reach it.

Solubility caps the search at the colder of the culture temperature and the plan's storage temperature
(when it states one): a plan kept at 4 °C is never offered more mannitol than dissolves at 4 °C, and the
refusal says which temperature set the limit.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from mediaplan.medium import roots
from mediaplan.medium.catalog import Catalog, Component, celsius
from mediaplan.medium.errors import AmountError, InfeasibleError, UnknownComponentError
from mediaplan.medium.evaluate import ISOTONIC_TOLERANCE, Evaluation, evaluate
from mediaplan.medium.model import Sweep, compiled, sweep_line, sweep_residuals
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import Amount, parse_amount, parse_target
from mediaplan.thermo.potential import osmolality_from_potential, potential_from_osmolality

TARGET_HELP = ('water potential ("-0.8 MPa", "-8 bar"), osmolality ("450 mOsm/kg"), or tonicity toward '
               'the cells: "isotonic", "isotonic+10%%", "isotonic-50 mOsm/kg" (offsets act on the osmolality; '
               '+ is more concentrated)')


# ---- targets ---------------------------------------------------------------------------------
@dataclass(frozen=True)
class TargetSpec:
    """A parsed target.

    kind : "potential" (value [Pa]), "osmolality" (value [osmol/kg]) or "isotonic" (relative to the cells)
    offset_fraction : for "isotonic": fraction added to the cell reference (0.1 for +10 %)
    offset_osmol : for "isotonic": osmolality added to the cell reference [osmol/kg]
    text : as the user wrote it
    """

    kind: Literal["potential", "osmolality", "isotonic"]
    value: float = 0.0
    offset_fraction: float = 0.0
    offset_osmol: float = 0.0
    text: str = ""


_NUM = r"(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_ISO_RE = re.compile(rf"^\s*isotonic\s*(?:(?P<sign>[+-])\s*(?P<num>{_NUM})\s*(?P<unit>.*?))?\s*$", re.IGNORECASE)


def parse_solve_target(text: str, *, field: str | None = "target") -> TargetSpec:
    """Parse a solver target (see the module docstring for the syntax).

    Raises AmountError for anything else, naming the field.
    """
    if not isinstance(text, str) or not text.strip():
        raise AmountError("no target given", field=field, hint=TARGET_HELP.replace("%%", "%"))
    norm = " ".join(text.split())
    if norm.lower().startswith("iso"):
        m = _ISO_RE.match(norm)
        if not m:
            raise AmountError(f"cannot read tonicity target {text!r}", field=field,
                              hint='write "isotonic", "isotonic+10%" or "isotonic-50 mOsm/kg"')
        if not m.group("sign"):
            return TargetSpec("isotonic", text=norm)
        sign = 1.0 if m.group("sign") == "+" else -1.0
        num = float(m.group("num"))
        unit = m.group("unit").replace(" ", "")
        if unit == "%":
            if num >= 100 and sign < 0:
                raise AmountError(f"target {text!r} leaves nothing of the cell reference", field=field,
                                  hint="an offset below the cells must be less than 100 %")
            return TargetSpec("isotonic", offset_fraction=sign * num / 100.0, text=norm)
        t = parse_target(f"{num} {unit}", field=field) if unit else None
        if t is None or t.kind != "osmolality":
            raise AmountError(f"offset in {text!r} must be a percentage or an osmolality", field=field,
                              hint='write "isotonic+10%" or "isotonic-50 mOsm/kg"')
        return TargetSpec("isotonic", offset_osmol=sign * t.value, text=norm)
    t = parse_target(norm, field=field)
    if t.value == 0:
        raise AmountError(f"target {text!r} is pure water", field=field,
                          hint="give a potential below 0 MPa or an osmolality above 0")
    return TargetSpec(t.kind, t.value, text=t.text)


def target_osmolality(spec: TargetSpec, T: float, cell_reference_mosmol: float | None) -> float:
    """The osmolality [osmol/kg] the target asks for at temperature T [K] (effective, for "isotonic")."""
    if spec.kind == "potential":
        return float(osmolality_from_potential(spec.value, T))
    if spec.kind == "osmolality":
        return spec.value
    if cell_reference_mosmol is None:
        raise AmountError(f"target {spec.text!r} needs a cell reference", field="target",
                          hint='give the cells\' osmolality or osmotic potential, e.g. "450 mOsm/kg" or "-1.1 MPa"')
    if not math.isfinite(cell_reference_mosmol) or cell_reference_mosmol <= 0:
        raise AmountError("the cell reference must be a positive osmolality", field="cells")
    y = cell_reference_mosmol / 1000.0 * (1.0 + spec.offset_fraction) + spec.offset_osmol
    if y <= 0:
        raise AmountError(f"target {spec.text!r} falls to zero osmolality or below", field="target",
                          hint="use a smaller offset")
    return y


# ---- results ---------------------------------------------------------------------------------
@dataclass
class Addition:
    """What to add of one osmoticum (per litre of medium and per batch), and its new total."""

    component: str
    name: str
    held: bool
    added_g_per_l: float  # of the form as sold
    added_mol_per_l: float
    added_g_per_batch: float
    total_amount: str  # the amount written into the recipe
    total_g_per_l: float
    total_mol_per_l: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass
class Reduction:
    """How to reach a target that lies above (less negative than) the medium: as data.

    strength : strength of the base formulation that reaches the target, other amounts unchanged
        (None when there is no base, or when the other amounts alone are already past the target)
    dilution : fraction of medium in the mix with water (every amount times this) that reaches it
    medium_l_per_batch, water_l_per_batch : volumes to mix for one batch [L]
    """

    strength: float | None
    strength_recipe: Recipe | None
    strength_evaluation: Evaluation | None
    dilution: float
    dilution_recipe: Recipe
    dilution_evaluation: Evaluation
    medium_l_per_batch: float
    water_l_per_batch: float
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return {
            "strength": self.strength,
            "strength_osmotic_potential_mpa": self.strength_evaluation.osmotic_potential_mpa
            if self.strength_evaluation else None,
            "dilution": self.dilution, "medium_l_per_batch": self.medium_l_per_batch,
            "water_l_per_batch": self.water_l_per_batch,
            "dilution_osmotic_potential_mpa": self.dilution_evaluation.osmotic_potential_mpa,
            "notes": list(self.notes),
        }


Status = Literal["added", "on_target", "too_concentrated"]


@dataclass
class Solution:
    """The answer of :func:`solve_target`.

    status : "added" (additions reach the target), "on_target" (nothing to add), or
        "too_concentrated" (the medium is already past the target: see ``reduction``)
    recipe : the new recipe (the original one unless status is "added")
    evaluation : ``evaluate(recipe)`` from scratch, with tonicity when a cell reference was given
    start : the evaluation of the medium before any change (``start_recipe``)
    target_osmolality_mosmol_per_kg, target_potential_mpa : what the target means at the recipe's
        temperature (for a tonicity target the osmolality is the effective one)
    lowered : ids of osmotica already in the medium that the answer lowers (status "added", additions
        negative); empty when the answer adds
    solubility_temperature_c : the temperature [°C] whose solubility capped the search (the colder of the
        culture and the plan's storage temperature)
    """

    status: Status
    target: TargetSpec
    osmotica: list[str]
    target_osmolality_mosmol_per_kg: float
    target_potential_mpa: float
    matched: Literal["osmolality", "effective_osmolality"]
    recipe: Recipe
    evaluation: Evaluation
    additions: list[Addition]
    reduction: Reduction | None
    message: str
    start_recipe: Recipe
    ratio: list[float] | None = None
    hold: dict[str, str] | None = None
    lowered: list[str] = field(default_factory=list)
    solubility_temperature_c: float | None = None
    _evaluate: Callable[[Recipe], Evaluation] | None = field(default=None, repr=False, compare=False)
    _start: Evaluation | None = field(default=None, repr=False, compare=False)

    @property
    def start(self) -> Evaluation:
        """The evaluation of the medium before any change (computed when first asked for)."""
        if self._start is None:
            self._start = self._evaluate(self.start_recipe) if self._evaluate else evaluate(self.start_recipe)
        return self._start

    @property
    def reached(self) -> float:
        """The matched quantity after the change [mOsm/kg]."""
        ev = self.evaluation
        return ev.effective_osmolality_mosmol_per_kg if self.matched == "effective_osmolality" \
            else ev.osmolality_mosmol_per_kg

    def target_table(self) -> dict:
        """The plan file's ``[target]`` table for this solve."""
        t: dict = {"value": self.target.text, "osmotica": list(self.osmotica)}
        if self.hold:
            t["hold"] = dict(self.hold)
        if self.ratio:
            t["ratio"] = list(self.ratio)
        return t

    def to_dict(self) -> dict:
        from mediaplan.medium.evaluate import finite

        ev = self.evaluation
        return finite({
            "status": self.status, "message": self.message, "target": self.target.text,
            "matched": self.matched,
            "target_osmolality_mosmol_per_kg": self.target_osmolality_mosmol_per_kg,
            "target_potential_mpa": self.target_potential_mpa, "osmotica": list(self.osmotica),
            "ratio": self.ratio, "hold": self.hold,
            "additions": [a.to_dict() for a in self.additions],
            "start": {"osmolality_mosmol_per_kg": self.start.osmolality_mosmol_per_kg,
                      "osmotic_potential_mpa": self.start.osmotic_potential_mpa,
                      "effective_osmolality_mosmol_per_kg": self.start.effective_osmolality_mosmol_per_kg},
            "result": {"osmolality_mosmol_per_kg": ev.osmolality_mosmol_per_kg,
                       "osmolality_ideal_mosmol_per_kg": ev.osmolality_ideal_mosmol_per_kg,
                       "effective_osmolality_mosmol_per_kg": ev.effective_osmolality_mosmol_per_kg,
                       "water_activity": ev.water_activity, "osmotic_potential_mpa": ev.osmotic_potential_mpa,
                       "vant_hoff_potential_mpa": ev.vant_hoff_potential_mpa,
                       "freezing_point_depression_k": ev.freezing_point_depression_k,
                       "tonicity": ev.tonicity, "warnings": [w.to_dict() for w in ev.warnings]},
            "amounts": {cid: a.text for cid, a in self.recipe.amounts},
            "reduction": self.reduction.to_dict() if self.reduction else None,
            "lowered": list(self.lowered), "solubility_temperature_c": self.solubility_temperature_c,
        })


def _molarities(recipe: Recipe, catalog: Catalog) -> dict[str, tuple[float, float]]:
    """Per component id: (mol per m^3 of medium, g of the form as sold per litre), without the ZSR solve."""
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    n_all = n + b * model.water(n, b)
    return {ln.component.id: (float(n_all[i]), float(n_all[i] * model.M[i])) for i, ln in enumerate(lines)}


@dataclass
class _Path:
    """A medium along a line of amounts (the compiled model's :class:`Sweep`, x from 0 up to its
    ``x_max``) and the recipe at any x (``build(x, text)``, precise amount text only when asked)."""

    sweep: Sweep
    build: Callable[[float, bool], Recipe]


def _line_path(catalog: Catalog, recipe: Recipe, comps: Sequence[Component],
               amount_at: Callable[[float], list[Amount]], build, x_hi: float) -> _Path:
    model = compiled(catalog, comps, recipe.temperature_k)
    n0, b0 = model.amounts_to_arrays(amount_at(0.0))
    n1, b1 = model.amounts_to_arrays(amount_at(1.0))
    return _Path(model.along(n0, b0, n1 - n0, b1 - b0, x_max=x_hi), build)


# ---- amounts in the user's own units ---------------------------------------------------------
def _sig(x: float, digits: int = 5) -> str:
    return f"{x:.{digits}g}" if abs(x) < 10 ** digits else f"{x:.0f}"


def amount_text(value: float, kind: str) -> str:
    """Amount text with enough digits that re-reading it changes the medium by < 1e-4 (relative)."""
    if kind == "mass_conc":
        return f"{_sig(value * 1000.0)} mg/L" if value < 1.0 else f"{_sig(value)} g/L"
    if kind == "molar":
        return f"{_sig(value)} mM"
    if kind == "molal":
        return f"{_sig(value)} mol/kg"
    if kind == "mass_per_water":
        return f"{_sig(value * 1000.0)} g/kg"
    return f"{_sig(value * 1000.0)} mL/L"


def _per_x(comp: Component, kind: str, rho_w: float) -> float:
    """SI amount of ``kind`` that one unit of x adds (x: mol per m^3 of medium, or per m^3 of water)."""
    M = (comp.molar_mass or 0.0) / 1000.0
    if kind == "mass_conc":
        return M
    if kind == "molar":
        return 1.0
    if kind == "vol_frac":
        return M / ((comp.density or 0.0) * 1000.0)
    if kind == "molal":
        return 1.0 / rho_w
    return M / rho_w  # mass_per_water


# ---- the solver --------------------------------------------------------------------------------
def _resolve_osmotica(catalog: Catalog, osmotica: Sequence[str]) -> list[Component]:
    if not osmotica:
        raise AmountError("name an osmoticum to add", field="osmoticum", hint="e.g. mannitol, sorbitol, sucrose or PEG")
    if len(osmotica) > 2:
        raise AmountError("at most two osmotica", field="osmoticum", hint="one, or two with a ratio or a hold")
    out = []
    for name in osmotica:
        comp = catalog.resolve(name, field="osmoticum").component
        if not comp.species:
            raise UnknownComponentError(f"{comp.id} does not dissolve into solutes: it cannot set a potential",
                                        field="osmoticum", hint="choose mannitol, sorbitol, sucrose or PEG")
        if comp.molar_mass is None:
            raise UnknownComponentError(f"{comp.id} has no molar mass in the catalog", field="osmoticum",
                                        hint="add molar_mass to its catalog entry")
        if any(c.id == comp.id for c in out):
            raise AmountError(f"{comp.id} is named twice", field="osmoticum", hint="name two different osmotica")
        out.append(comp)
    return out


def _check_ratio(ratio: Sequence[float] | None, n: int) -> list[float] | None:
    if ratio is None:
        return None
    try:
        r = [float(v) for v in ratio]
    except (TypeError, ValueError):
        raise AmountError(f"ratio {ratio!r} must be numbers", field="ratio", hint='e.g. "1:1" or "3:1"') from None
    if len(r) != n:
        raise AmountError(f"ratio has {len(r)} parts for {n} osmotica", field="ratio",
                          hint="one part per osmoticum, e.g. 1:1")
    if any(not math.isfinite(v) or v < 0 for v in r):
        raise AmountError(f"ratio {':'.join(f'{v:g}' for v in r)} has a negative or non-finite part",
                          field="ratio", hint="parts are 0 or more, e.g. 1:1")
    if sum(r) <= 0:
        raise AmountError("ratio parts are all zero", field="ratio", hint="e.g. 1:1")
    return r


@dataclass
class _Setup:
    recipe: Recipe  # the start, with holds applied
    free: list[Component]
    weights: list[float]
    comps: list[Component]
    path: _Path
    lower: _Path | None = None  # from the osmotica removed (0) to the medium as it is (1), when it holds them
    x_min: float = 0.0  # the x of the path at which the first lowered osmoticum reaches zero
    line_ids: frozenset[str] = frozenset()  # the components of the start's lines


def _setup(recipe: Recipe, catalog: Catalog, comps_os: list[Component], ratio: list[float] | None,
           hold: Mapping[str, str | Amount] | None) -> _Setup:
    held_ids: dict[str, Amount] = {}
    for key, amt in (hold or {}).items():
        comp = catalog.resolve(key, field=f"hold {key}").component
        if comp.id not in {c.id for c in comps_os}:
            raise AmountError(f"held component {comp.id} is not one of the osmotica", field="hold",
                              hint="hold one of the osmotica being added")
        held_ids[comp.id] = amt if isinstance(amt, Amount) else parse_amount(str(amt), field=f"hold {key}")
    free = [c for c in comps_os if c.id not in held_ids]
    if not free:
        raise AmountError("every osmoticum is held: nothing left to solve for", field="hold",
                          hint="hold one and let the other make up the rest")
    if ratio is not None and held_ids:
        raise AmountError("give a ratio or a hold, not both", field="ratio")
    if len(free) == 2 and ratio is None:
        raise AmountError("with two osmotica give their ratio or hold one of them", field="osmoticum",
                          hint='e.g. a ratio of 1:1, or sucrose held at 20 g/L')
    weights = ratio if ratio is not None else [1.0] * len(free)
    start = recipe
    for cid, amt in held_ids.items():
        start = start.with_amount(cid, amt)
    lines = start.lines(catalog)
    by_id = {ln.component.id: ln for ln in lines}
    for c in free:
        for ln in lines:
            if ln.component.id != c.id and c.substance and ln.component.substance == c.substance:
                raise AmountError(f"the medium already holds {c.substance} as {ln.component.id}", field="osmoticum",
                                  hint=f"solve with {ln.component.id} instead of {c.id}")
    T = start.temperature_k
    from mediaplan.thermo.water import density

    rho_w = float(density(T))
    kinds = {}
    base_value = {}
    for c in free:
        ln = by_id.get(c.id)
        if ln is not None:
            kinds[c.id] = ln.amount.kind
            base_value[c.id] = ln.amount.value
        else:
            kinds[c.id] = "mass_conc"
            base_value[c.id] = 0.0
        if kinds[c.id] == "vol_frac" and not c.density:
            kinds[c.id] = "mass_conc"  # a volume fraction needs a density; the model would refuse it too
    per_x = {c.id: _per_x(c, kinds[c.id], rho_w) for c in free}
    w = dict(zip([c.id for c in free], weights, strict=True))

    def amount_of(cid: str, x: float, text: bool) -> Amount:
        v = base_value[cid] + x * w[cid] * per_x[cid]
        return Amount(v, kinds[cid], amount_text(v, kinds[cid]) if text else "")

    def build(x: float, text: bool = True) -> Recipe:
        r = start
        for c in free:
            a = amount_of(c.id, x, text)
            r = r.with_amount(c.id, parse_amount(a.text, field=c.id) if text else a)
        return r

    comps = [ln.component for ln in lines] + [c for c in free if c.id not in by_id]

    def amounts_at(x: float) -> list[Amount]:
        out = [amount_of(ln.component.id, x, False) if ln.component.id in w else ln.amount
               for ln in lines]
        return out + [amount_of(c.id, x, False) for c in free if c.id not in by_id]

    path = _line_path(catalog, start, comps, amounts_at, build, math.inf)
    lower, x_min = None, 0.0
    if all(base_value[c.id] > 0 for c in free):
        x_min = max(-base_value[c.id] / (w[c.id] * per_x[c.id]) for c in free)

        def build_low(t: float, text: bool = True) -> Recipe:
            return build(x_min * (1.0 - t), text)

        lower = _line_path(catalog, start, comps, lambda t: amounts_at(x_min * (1.0 - t)), build_low, 1.0)
    return _Setup(start, free, weights, comps, path, lower, x_min, frozenset(by_id))


def _needs_full_evaluation(comps: Sequence[Component], matched: str) -> bool:
    if matched != "effective_osmolality":
        return False
    return any(c.reflection_coefficient is not None and c.reflection_coefficient != 1.0 for c in comps)


def _residual(path: _Path, catalog: Catalog, y: float, full: bool) -> Callable[[float], float]:
    """f(x) = (what the medium has at x) − (target), increasing in x; scaled to about 1."""
    if not full:
        f_rows = sweep_residuals(path.sweep, [y])

        def f_zsr(x: float) -> float:
            return float(f_rows(np.array([x], dtype=float), _ROW0)[0])

        f_zsr.rows = f_rows  # type: ignore[attr-defined]  # the batched form, for bracketed_roots
        return f_zsr

    def f(x: float) -> float:
        ev = evaluate(path.build(x, False), catalog)
        return ev.effective_osmolality_mosmol_per_kg / 1000.0 / y - 1.0

    return f


def _reachable(path: _Path, x: float) -> tuple[float, float]:
    """(osmolality [osmol/kg], potential [Pa]) of the medium at x, from the compiled model."""
    y = float(path.sweep.osmolality(x)[0])
    return y, float(potential_from_osmolality(y, path.sweep.T))


def solve_target(recipe: Recipe, catalog: Catalog, target: TargetSpec | str, osmotica: list[str], *,
                 ratio: Sequence[float] | None = None, hold: Mapping[str, str | Amount] | None = None,
                 cell_reference_mosmol: float | None = None,
                 isotonic_tolerance: float = ISOTONIC_TOLERANCE) -> Solution:
    """Find the addition of one osmoticum (or two, in a molar ratio or with one held) that reaches a target.

    Parameters
    ----------
    recipe : the medium to start from
    catalog : component catalog
    target : a TargetSpec or its text (``"-0.8 MPa"``, ``"450 mOsm/kg"``, ``"isotonic+10%"``)
    osmotica : one or two component ids, aliases or names
    ratio : molar ratio of the additions of two osmotica (e.g. [1, 1])
    hold : {component: amount} holding one of two osmotica at a set level (e.g. {"sucrose": "20 g/L"})
    cell_reference_mosmol : osmolality of the cells' sap [mOsm/kg]; needed for a tonicity target, and
        adds a tonicity classification to the evaluations
    isotonic_tolerance : fraction of the reference within which the medium counts as isotonic

    Returns
    -------
    Solution; its evaluation is a fresh ``evaluate()`` of the new recipe.

    Raises
    ------
    AmountError (bad target, ratio or hold), UnknownComponentError (unknown osmoticum),
    InfeasibleError (the target lies beyond the osmoticum's solubility; the error carries
    ``reachable_potential_mpa``, ``reachable_osmolality_mosmol_per_kg`` and ``limit_amount``).
    """
    spec = parse_solve_target(target) if isinstance(target, str) else target
    T = recipe.temperature_k
    y = target_osmolality(spec, T, cell_reference_mosmol)
    matched: Literal["osmolality", "effective_osmolality"] = (
        "effective_osmolality" if spec.kind == "isotonic" else "osmolality")
    comps_os = _resolve_osmotica(catalog, osmotica)
    r = _check_ratio(ratio, len(comps_os)) if ratio is not None else None
    if r is not None and len(comps_os) == 1:
        r = None
    s = _setup(recipe, catalog, comps_os, r, hold)
    held = {catalog.resolve(k).component.id: (v.text if isinstance(v, Amount) else str(v))
            for k, v in (hold or {}).items()}
    full = _needs_full_evaluation(s.comps, matched)
    f = _residual(s.path, catalog, y, full)
    ev_kw = dict(cell_reference_mosmol=cell_reference_mosmol, isotonic_tolerance=isotonic_tolerance)

    def ev_of(rec: Recipe) -> Evaluation:
        return evaluate(rec, catalog, **ev_kw)

    psi_t = float(potential_from_osmolality(y, T)) / 1e6
    common = dict(target=spec, osmotica=[c.id for c in comps_os], target_osmolality_mosmol_per_kg=y * 1000.0,
                  target_potential_mpa=psi_t, matched=matched, start_recipe=recipe, ratio=r, hold=held or None,
                  _evaluate=ev_of)
    line = exact = None
    if not full:  # the residual along the path in closed form (plain numbers when the ions keep proportion)
        try:
            with np.errstate(**roots.FAST_PATH_ERRORS):
                line, exact = sweep_line(s.path.sweep, f.rows)
        except roots.FAST_PATH_FAILURES:
            line = None
    f0 = line.row(0)(0.0) if exact else f(0.0)
    if abs(f0) < 1e-9:
        ev0 = ev_of(s.recipe)
        return Solution(status="on_target", recipe=s.recipe, evaluation=ev0, additions=[], reduction=None,
                        message="the medium is already at the target: nothing to add", **common)
    T_sol, sol_where = _solubility_temperature(recipe)
    common["solubility_temperature_c"] = T_sol - 273.15
    lower_note = ""
    if f0 > 0 and s.lower is not None:
        f_low = _residual(s.lower, catalog, y, full)
        fl0 = f_low(0.0)
        names = " and ".join(c.id for c in s.free)
        if fl0 <= 0:
            t = 0.0 if fl0 == 0 else roots.increasing_root(f_low, 0.0, 1.0, f_lo=fl0, f_hi=f0)
            new = s.lower.build(t, True)
            ev = ev_of(new)
            adds = _additions(recipe, new, s, ev, held, catalog)
            parts = [f"lower {a.component} by {-a.added_g_per_l:.4g} g/L to {a.total_amount} "
                     f"({-a.added_g_per_batch:.4g} g less per {ev.volume_l:g} L)" for a in adds if not a.held]
            parts += [f"{a.component} held at {a.total_amount}" for a in adds if a.held]
            got = (ev.effective_osmolality_mosmol_per_kg if matched == "effective_osmolality"
                   else ev.osmolality_mosmol_per_kg)
            msg = ("the medium is more concentrated than the target and already holds " + names + ": " +
                   "; ".join(parts) + f": {got:.1f} mOsm/kg, {ev.osmotic_potential_mpa:.4f} MPa (re-evaluated)")
            return Solution(status="added", recipe=new, evaluation=ev, additions=adds, reduction=None, message=msg,
                            lowered=[c.id for c in s.free], **common)
        lower_note = f"even without {names} the medium is past the target; "
    if f0 > 0:
        if s.recipe is not recipe and _residual(_plain_path(recipe, catalog), catalog, y, full)(0.0) <= 0:
            lo = evaluate(s.recipe, catalog)
            raise InfeasibleError(
                f"holding {', '.join(f'{k} at {v}' for k, v in held.items())} already takes the medium past "
                f"the target ({lo.osmotic_potential_mpa:.3f} MPa against {psi_t:.3f} MPa)",
                field="hold", hint="hold less, or drop the hold")
        start_ev = ev_of(recipe)
        red = reduction(recipe, catalog, y, full=full, **ev_kw)
        now = (start_ev.effective_osmolality_mosmol_per_kg if matched == "effective_osmolality"
               else start_ev.osmolality_mosmol_per_kg)
        msg = (f"the medium is already more concentrated than the target ({matched.replace('_', ' ')} "
               f"{now:.1f} against {y * 1000:.1f} mOsm/kg; {start_ev.osmotic_potential_mpa:.3f} MPa against "
               f"{psi_t:.3f} MPa): no addition helps; " + lower_note + _reduction_sentence(red, recipe))
        return Solution(status="too_concentrated", recipe=recipe, evaluation=start_ev, additions=[],
                        reduction=red, message=msg, _start=start_ev, **common)
    # ---- bracket: solubility and volume ---------------------------------------------------
    path = s.path
    capped = {c.id: c.soluble_at(T_sol) for c in s.free}
    x = None if line is None else _root_below_solubility(path.sweep, f.rows, f0, [cc for cc, _ in capped.values()],
                                                         line, exact)
    if x is not None:
        return _added(recipe, catalog, s, path.build(x, True), ev_of, held, matched, common)
    limit = path.sweep.limit([cc for cc, _ in capped.values()])
    x_cap = limit.x
    limit_note = ("the space left for water" if limit.component is None else
                  f"the solubility of {limit.component.id} ({limit.component.solubility:.3g} g/100 g water "
                  f"{capped[limit.component.id][1]}{sol_where})")
    f_hi = f(x_cap) if x_cap > 0 else f0
    if f_hi < 0:
        y_hi, psi_hi = _reachable(path, x_cap)
        best = path.build(x_cap, True)
        amounts = ", ".join(f"{c.id} {best.amount_of(c.id).text}" for c in s.free)
        names = " and ".join(c.id for c in s.free)
        err = InfeasibleError(
            f"{spec.text} cannot be reached with {names} below {limit_note}: the most it gives is about "
            f"{psi_hi / 1e6:.3f} MPa ({y_hi * 1000:.0f} mOsm/kg) at {amounts}", field="target",
            hint="choose a more soluble osmoticum (sorbitol, sucrose) or PEG, or a less negative target")
        err.reachable_potential_mpa = psi_hi / 1e6  # type: ignore[attr-defined]
        err.reachable_osmolality_mosmol_per_kg = y_hi * 1000.0  # type: ignore[attr-defined]
        err.limit_amount = amounts  # type: ignore[attr-defined]
        raise err
    x = roots.increasing_root(f, 0.0, x_cap, f_lo=f0, f_hi=f_hi)
    return _added(recipe, catalog, s, path.build(x, True), ev_of, held, matched, common)


#: the one row of a single target (for :func:`sweep_residuals`)
_ROW0 = np.zeros(1, dtype=int)
#: half-width [-] of the window tried first around the root of :func:`mediaplan.medium.model.sweep_line`:
#: by whether the guess is exact (to rounding) or a first approximation (the ion proportions change)
GUESS_WINDOW = {True: 1e-9, False: 0.1}


def _root_below_solubility(sweep: Sweep, f, f0: float, saturating: Sequence[Component], line=None,
                           exact: bool = False) -> float | None:
    """The x where the ZSR residual ``f`` (x, rows) of the medium along ``sweep`` at one target osmolality
    (:func:`mediaplan.medium.model.sweep_residuals`) is zero, when that x is below every solubility in
    ``saturating``; None otherwise (the caller then works out which limit stops it). ``line, exact``: the
    residual's closed form along the sweep (:func:`mediaplan.medium.model.sweep_line`), when at hand.

    One vectorised root finding (:func:`mediaplan.medium.roots.bracketed_roots`), bracketed by x = 0
    (residual ``f0`` < 0) and the space the volume leaves (:meth:`Sweep.limit` without solubilities); the
    solubilities are checked at the root only (the substance's molality grows with x, so a root below
    saturation means no solubility limit comes first)."""
    # a hair inside the limit: a batch of rows sums the volumes in another order than the one row of limit()
    room = sweep.limit().x * (1.0 - 1e-12)
    if room <= 0:
        return None
    try:
        with np.errstate(**roots.FAST_PATH_ERRORS):
            if line is None:
                line, exact = sweep_line(sweep, f)
            guess = line.root()
            # along a line whose ion proportions stay put the residual is the line's closed form (plain numbers)
            x = float(roots.bracketed_roots(line if exact else f, np.zeros(1), np.array([room]), np.array([f0]),
                                            None, first=guess, window=GUESS_WINDOW[exact], scale=guess)[0])
            if not math.isfinite(x) or _past_solubility(sweep, x, saturating):
                return None
    except roots.FAST_PATH_FAILURES:
        return None
    return x



def _added(recipe: Recipe, catalog: Catalog, s: _Setup, new: Recipe, ev_of, held: dict[str, str],
           matched: str, common: dict) -> Solution:
    """The solution that adds: ``new`` evaluated, the additions and the message."""
    ev = ev_of(new)
    adds = _additions(recipe, new, s, ev, held, catalog)
    parts = [f"add {a.added_g_per_l:.4g} g/L {a.component} ({a.added_g_per_batch:.4g} g per {ev.volume_l:g} L)"
             for a in adds if not a.held]
    parts += [f"{a.component} held at {a.total_amount}" for a in adds if a.held]
    got = ev.effective_osmolality_mosmol_per_kg if matched == "effective_osmolality" else ev.osmolality_mosmol_per_kg
    msg = "; ".join(parts) + f": {got:.1f} mOsm/kg, {ev.osmotic_potential_mpa:.4f} MPa (re-evaluated)"
    return Solution(status="added", recipe=new, evaluation=ev, additions=adds, reduction=None, message=msg, **common)


def additions_at(recipe: Recipe, catalog: Catalog, osmotica: Sequence[str], ys: Sequence[float], *,
                 ratio: Sequence[float] | None = None, hold: Mapping[str, str | Amount] | None = None,
                 matched: str = "osmolality") -> list[dict[str, float] | None]:
    """The additions that bring ``recipe`` to each osmolality in ``ys`` [osmol/kg], all found in one
    vectorised root finding on one sweep: per y, {osmoticum id: added g/L of the form as sold} of the free
    osmotica, the figures :func:`solve_target` reports as ``Addition.added_g_per_l`` for that target (the
    same root to its tolerance, the same amount text, the same grams per litre of the re-read amount).

    None for a y this batched path does not settle — the medium already at or past it, a solubility or the
    volume in its way, or a tonicity matched with permeating solutes: :func:`solve_target` answers that one.
    """
    comps_os = _resolve_osmotica(catalog, osmotica)
    r = _check_ratio(ratio, len(comps_os)) if ratio is not None else None
    if r is not None and len(comps_os) == 1:
        r = None
    s = _setup(recipe, catalog, comps_os, r, hold)
    held = {catalog.resolve(k).component.id for k in (hold or {})}
    K = len(ys)
    out: list[dict[str, float] | None] = [None] * K
    if _needs_full_evaluation(s.comps, matched) or K == 0:
        return out
    sweep = s.path.sweep
    room = sweep.limit().x * (1.0 - 1e-12)
    if not room > 0:
        return out
    T_sol, _ = _solubility_temperature(recipe)
    saturating = [c.soluble_at(T_sol)[0] for c in s.free]
    try:
        with np.errstate(**roots.FAST_PATH_ERRORS):
            f = sweep_residuals(sweep, np.asarray(ys, dtype=float))
            f0 = f(np.zeros(K), np.arange(K))
            todo = np.nonzero(f0 <= -1e-9)[0]  # the others: on target, or to be lowered or diluted
            if todo.size == 0:
                return out
            line, exact = sweep_line(sweep, f)
            guess = line.root()[todo]
            fun = line if exact else f
            x = roots.bracketed_roots(lambda xx, rows: fun(xx, todo[rows]), np.zeros(todo.size),
                                      np.full(todo.size, room), f0[todo], None, first=guess,
                                      window=GUESS_WINDOW[exact], scale=guess)
            found = [(i, xi) for i, xi in zip(todo.tolist(), x.tolist(), strict=True)
                     if math.isfinite(xi) and not _past_solubility(sweep, xi, saturating)]
    except roots.FAST_PATH_FAILURES:
        return out
    before = _molarities(recipe, catalog) if held or any(c.id in s.line_ids for c in s.free) else {}
    ids = {c.id for c in s.free}
    for i, xi in found:
        g1 = _grams_per_litre(s.path.build(xi, True), catalog, ids)
        out[i] = {c.id: g1.get(c.id, 0.0) - before.get(c.id, (0.0, 0.0))[1] for c in s.free}
    return out


def _past_solubility(sweep: Sweep, x: float, saturating: Sequence[Component]) -> bool:
    """Whether some component of ``saturating`` (with every form of its substance) is past its solubility at
    x along the sweep."""
    if not saturating:
        return False
    m = sweep.molality(x)
    for c in saturating:
        m_sat = c.saturation_molality
        if m_sat is None:
            continue
        idx = sweep.model.substance_columns(c)
        if float(m[idx].sum()) > m_sat:
            return True
    return False


def _grams_per_litre(recipe: Recipe, catalog: Catalog, ids: set[str]) -> dict[str, float]:
    """{id: g per litre of the form as sold} of the components ``ids`` of the recipe, computed as
    :func:`mediaplan.medium.evaluate.evaluate` computes them (the volume balance of one batch row of
    :meth:`MediumModel.solve`), without the ZSR solution."""
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    n, b = n[None, :], b[None, :]
    W = model.water(n, b)
    n_all = (n / W[:, None] + b) * W[:, None]
    return {ln.component.id: float(n_all[0, i] * model.M[i]) for i, ln in enumerate(lines) if ln.component.id in ids}


def _solubility_temperature(recipe: Recipe) -> tuple[float, str]:
    """The temperature [K] whose solubility caps an addition: the colder of the culture temperature and the
    plan's storage temperature (when it states one), and in words which it is."""
    T, T_store = recipe.temperature_k, recipe.storage_temperature_k
    if T_store is not None and T_store < T - 1e-9:
        return T_store, f", the stated storage temperature (colder than the culture at {celsius(T)})"
    return T, ", the culture temperature" if T_store is None else ", the culture temperature (stored no colder)"


def _plain_path(recipe: Recipe, catalog: Catalog) -> _Path:
    """The medium as it is (x does nothing): for the residual at x = 0."""
    lines = recipe.lines(catalog)
    amounts = [ln.amount for ln in lines]
    return _line_path(catalog, recipe, [ln.component for ln in lines], lambda x: amounts,
                      lambda x, text=True: recipe, 0.0)


def _additions(recipe: Recipe, new: Recipe, s: _Setup, ev: Evaluation, held: dict[str, str],
               catalog: Catalog) -> list[Addition]:
    # the start holds none of the osmotica (the usual case): nothing to weigh before, no model to solve
    before = _molarities(recipe, catalog) if held or any(c.id in s.line_ids for c in s.free) else {}
    out = []
    for c in [*(cc for cc in s.comps if cc.id in held), *s.free]:
        n0, g0 = before.get(c.id, (0.0, 0.0))
        mol0 = n0 / 1000.0
        after = ev.component(c.id)
        mol1 = after.molarity_mmol_per_l / 1000.0 if after else 0.0
        g1 = after.grams_per_litre if after else 0.0
        amt = new.amount_of(c.id)
        out.append(Addition(component=c.id, name=c.name, held=c.id in held, added_g_per_l=g1 - g0,
                            added_mol_per_l=mol1 - mol0, added_g_per_batch=(g1 - g0) * ev.volume_l,
                            total_amount=amt.text if amt else "", total_g_per_l=g1, total_mol_per_l=mol1))
    return out


# ---- less concentrated: strength and dilution ------------------------------------------------------
def _scaled_recipe(recipe: Recipe, f: float, catalog: Catalog | None = None) -> Recipe:
    """Every amount of the recipe times f (the medium mixed with water, f = fraction of medium). The base
    lines its strength scope leaves as published (vitamins under scope salts) are written out times f, since
    a strength would not scale them (needs ``catalog`` when the recipe has such lines)."""
    amounts = tuple((cid, Amount(a.value * f, a.kind, amount_text(a.value * f, a.kind))) for cid, a in recipe.amounts)
    if recipe.base and catalog is not None:
        amounts += tuple((ln.component.id, Amount(ln.amount.value * f, ln.amount.kind,
                                                  amount_text(ln.amount.value * f, ln.amount.kind)))
                         for ln in recipe.lines(catalog) if ln.origin == "base" and not recipe.scales(ln.component))
    return recipe.with_settings(strength=recipe.strength * f, amounts=amounts)


def reduction(recipe: Recipe, catalog: Catalog, y: float, *, full: bool = False,
              cell_reference_mosmol: float | None = None,
              isotonic_tolerance: float = ISOTONIC_TOLERANCE) -> Reduction:
    """Strength of the base, and dilution of the whole medium, that bring it down to osmolality y
    [osmol/kg] (effective osmolality when ``full``)."""
    ev_kw = dict(cell_reference_mosmol=cell_reference_mosmol, isotonic_tolerance=isotonic_tolerance)
    lines = recipe.lines(catalog)
    comps = [ln.component for ln in lines]
    amounts = [ln.amount for ln in lines]
    dil = _line_path(catalog, recipe, comps, lambda x: [Amount(a.value * x, a.kind, "") for a in amounts],
                     lambda x, text=True: _scaled_recipe(recipe, x, catalog), 1.0)
    f = roots.increasing_root(_residual(dil, catalog, y, full), 0.0, 1.0)
    dil_recipe = _scaled_recipe(recipe, f, catalog)
    notes = []
    strength = strength_recipe = strength_ev = None
    if recipe.base and recipe.strength > 0:
        full_lines = recipe.with_settings(strength=1.0).lines(catalog)
        s_comps = [ln.component for ln in full_lines]

        def s_amounts(x: float) -> list[Amount]:
            return [Amount(ln.amount.value * x, ln.amount.kind, "")
                    if ln.origin == "base" and recipe.scales(ln.component) else ln.amount for ln in full_lines]

        sp = _line_path(catalog, recipe, s_comps, s_amounts,
                        lambda x, text=True: recipe.with_settings(strength=x), recipe.strength)
        fs = _residual(sp, catalog, y, full)
        if fs(0.0) >= 0:
            notes.append("the components added to the base already pass the target on their own: "
                         "lowering the base strength cannot reach it")
        else:
            strength = round(roots.increasing_root(fs, 0.0, recipe.strength), 4)
            strength_recipe = recipe.with_settings(strength=strength)
            strength_ev = evaluate(strength_recipe, catalog, **ev_kw)
    elif not recipe.base:
        notes.append("no base formulation: only dilution applies")
    V = recipe.volume_m3 * 1000.0
    return Reduction(strength=strength, strength_recipe=strength_recipe, strength_evaluation=strength_ev,
                     dilution=f, dilution_recipe=dil_recipe, dilution_evaluation=evaluate(dil_recipe, catalog, **ev_kw),
                     medium_l_per_batch=f * V, water_l_per_batch=(1.0 - f) * V, notes=notes)


def _reduction_sentence(red: Reduction, recipe: Recipe) -> str:
    parts = []
    if red.strength is not None:
        parts.append(f"base {recipe.base} at strength {red.strength:.3g} (other amounts unchanged) reaches it")
    parts.append(f"or mix {red.medium_l_per_batch:.3g} L of this medium with {red.water_l_per_batch:.3g} L water "
                 f"(dilution to {100 * red.dilution:.1f} %)")
    return "; ".join(parts) + "".join(f"; {n}" for n in red.notes)


__all__ = ["TargetSpec", "parse_solve_target", "target_osmolality", "Addition", "Reduction", "Solution",
           "solve_target", "reduction", "amount_text", "TARGET_HELP"]
