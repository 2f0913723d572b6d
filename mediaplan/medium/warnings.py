"""What a user should know about an evaluation: one function per check.

Each check reads a :class:`Context` (the recipe, its lines, the compiled model, the solved state and
the evaluation's figures) and returns its warnings; :data:`CHECKS` runs them in a fixed order, which is
the order a user sees (scripts and the screens rely on it, so a new check goes at a deliberate place).
A check states what it tests and where its threshold comes from.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from operator import itemgetter, mul
from typing import TYPE_CHECKING

from mediaplan.medium.catalog import Catalog, celsius
from mediaplan.medium.model import MediumModel, ModelState
from mediaplan.medium.recipe import Line, Recipe
from mediaplan.thermo.constants import T0
from mediaplan.thermo.peg import PEG_VALIDITY
from mediaplan.thermo.potential import potential_from_osmolality
from mediaplan.thermo.precipitation import SPECIES_READ, calcium_saturation

if TYPE_CHECKING:
    from mediaplan.medium.evaluate import Evaluation


@dataclass
class Warning_:
    """A condition the user should know about. ``code`` is stable for scripts."""

    code: str
    message: str
    component: str | None = None

    def to_dict(self) -> dict:
        return {"code": self.code, "message": self.message, "component": self.component}


@dataclass
class Context:
    """Everything a check may read about one evaluated recipe (row 0 of ``state``); T [K].

    ``lines`` are the recipe's lines as :meth:`Recipe.lines_at_full_strength` gives them: with ``factors``
    (not None), a scaled base line is its full-strength line and its amount is ``lines[i].amount`` times
    ``factors[i]``. Their components, origins and confidences are those of :meth:`Recipe.lines`; a check
    that reads an amount takes it from the evaluation's components (or applies the factor)."""

    recipe: Recipe
    catalog: Catalog
    lines: list[Line]
    model: MediumModel
    state: ModelState
    evaluation: Evaluation
    T: float
    factors: list[float] | None = None


#: share of the osmolality [fraction] from solutes without a published model above which the ideal
#: fallback is worth a warning: below it the ideal assumption moves the total by less than the
#: published models' own error (about 1-2 %, Norrish fits). (common practice)
IDEAL_SHARE_NOTED = 0.005
#: PEG equation limits when PEG_VALIDITY has no entry for a grade: c [g/g water], T [K] (Michel 1983)
PEG_C_MAX_DEFAULT = 0.8
PEG_T_RANGE_DEFAULT = (278.15, 313.15)
#: distance from 25 °C [K] within which 25 °C Pitzer parameters serve without a note (common practice:
#: the temperature derivatives of the binary parameters change φ by well under 1 % over ±10 K)
PITZER_T_SPAN = 10.5
#: ion activity product / solubility product above which a calcium salt "approaches" saturation (common
#: practice: a screen, not a speciation model; see mediaplan.thermo.precipitation)
PRECIPITATION_RATIO = 0.5
#: fraction of the solubility above which a solute may crystallise in the cold (common practice:
#: solubilities fall on cooling, and a medium is often colder than the temperature checked)
SOLUBILITY_MARGIN = 0.8
#: temperature [K] a medium or its stocks are taken to be kept at when the plan states none (common
#: practice: a cold room or refrigerator at 4 °C)
DEFAULT_STORAGE_K = 277.15
#: relative margin [-] by which the evaluation's ionic strength must lie below every Pitzer pair's range for
#: :func:`pitzer_range` to stop there (the two sums of I agree to about 1e-15; a wide margin, so the screen
#: never decides what the full check would decide otherwise)
PITZER_RANGE_SCREEN = 1e-9
#: share of the osmolality [fraction] above which a component without a reflection coefficient is named
REFLECTION_SHARE_NOTED = 0.01
#: grams per litre above which an estimated apparent molar volume is worth a note (common practice: below
#: it the estimate moves the water content by well under 1 %)
DENSITY_ESTIMATE_G_PER_L = 10.0


def neutral_validity(ctx: Context) -> list[Warning_]:
    """A neutral solute above the molality its binary model was fitted to (``m_max`` of the catalog's
    neutral.yaml, per solute, with its source there): the figure is extrapolated."""
    out = []
    for sp, m, p in ctx.model.neutral_solutes(ctx.state):
        if m > p.m_max:
            out.append(Warning_("validity", f"{sp} at {m:.3g} mol/kg is beyond its model's "
                                f"range (≤ {p.m_max:g} mol/kg): extrapolated", sp))
    return out


def ideal_fallback(ctx: Context) -> list[Warning_]:
    """Solutes without a published model, treated as ideal, that carry more than
    :data:`IDEAL_SHARE_NOTED` of the osmolality."""
    model, ev = ctx.model, ctx.evaluation
    if not model.ideal_neutral:
        return []
    share = sum(ev.components[i].osmolality_mosmol_per_kg for i in model.ideal_components)
    frac = share / ev.osmolality_mosmol_per_kg if ev.osmolality_mosmol_per_kg > 0 else 0
    if frac > IDEAL_SHARE_NOTED:
        return [Warning_("ideal_fallback", f"no published model for {', '.join(model.ideal_neutral)}: treated "
                         f"as ideal ({100 * frac:.2g} % of the osmolality)")]
    return []


def peg_validity(ctx: Context) -> list[Warning_]:
    """PEG beyond the concentration, or outside the temperatures, of its published equation
    (``PEG_VALIDITY`` of mediaplan.thermo.peg: Michel & Kaufmann 1973, Michel 1983), grade by grade."""
    out = []
    T = ctx.T
    for g, c in ctx.model.peg_solutes(ctx.state):
        if c <= 0:
            continue
        val = PEG_VALIDITY.get(g, {})
        cmax = val.get("c_max", PEG_C_MAX_DEFAULT)
        tmin, tmax = val.get("T_min", PEG_T_RANGE_DEFAULT[0]), val.get("T_max", PEG_T_RANGE_DEFAULT[1])
        if c > cmax:
            out.append(Warning_("validity", f"PEG {g} at {c:.2f} g/g water is beyond the published equation "
                                f"(≤ {cmax} g/g)", f"peg{g}"))
        if not tmin <= T <= tmax:
            out.append(Warning_("validity", f"PEG {g} equation holds for {tmin - T0:.0f}–{tmax - T0:.0f} °C",
                                f"peg{g}"))
    return out


def peg_mixture(ctx: Context) -> list[Warning_]:
    """PEG in a medium with other solutes. The figure is the ZSR rule, which already holds an interaction
    (a synergy: ψ below the sum of the solutes' own effects); Michel 1983 (Plant Physiol 72:66) measured a
    synergy of that sign for PEG with mannitol and with NaCl, but its size is not checked against his data,
    so the warning gives both figures (``MediumModel.mixing_span``): the answer lies between them."""
    model = ctx.model
    if not (model.has_peg and (model.has_electrolytes or model.has_neutral)):
        return []
    try:
        span = model.mixing_span(ctx.state, ctx.T)
        add_mpa = float(potential_from_osmolality(span.additive[0], ctx.T)) / 1e6
        zsr_mpa = float(potential_from_osmolality(span.zsr[0], ctx.T)) / 1e6
    except Exception:  # noqa: BLE001 - a warning must never break an evaluation
        add_mpa = zsr_mpa = math.nan
    if math.isfinite(add_mpa) and math.isfinite(zsr_mpa):
        figures = (f"this figure ({zsr_mpa:.3f} MPa, ZSR mixing) includes a synergy that the sum of the "
                   f"solutes' own effects ({add_mpa:.3f} MPa) leaves out; the true value is expected between "
                   "the two")
    else:
        figures = ("this figure (ZSR mixing) includes a synergy that the sum of the solutes' own effects "
                   "leaves out; the true value is expected between the two")
    return [Warning_("peg_mixture", "PEG mixed with other solutes lowers the water potential more than the "
                     f"solutes do apart (Michel 1983, Plant Physiol 72:66): {figures}; its size is not checked "
                     "against published data: measure it (psychrometer or vapour-pressure osmometer)")]


def pitzer_default(ctx: Context) -> list[Warning_]:
    """Ion pairs present without Pitzer parameters (catalog pitzer.yaml), with the weight of the
    cation–anion interaction terms they carry (product of molalities, heaviest named first)."""
    model = ctx.model
    found = model.memo(("pitzer_default",), lambda: _default_pairs(model))
    if found is None:
        return []
    ions_of, cations_of, anions_of, firsts, seconds, names = found
    m = ions_of(ctx.state.species_m[0].tolist())  # the ion molalities in model order (ion_molalities)
    mi, mj = firsts(m), seconds(m)
    if min(m) > 0:  # every ion present (the usual medium): every pair counts
        ws = list(map(mul, mi, mj))
    else:
        kept = [(a * b, c, n, t) for a, b, c, n, t in zip(mi, mj, *names, strict=True) if a > 0 and b > 0]
        ws = [w for w, _, _, _ in kept]
        names = ([c for _, c, _, _ in kept], [n for _, _, n, _ in kept], [t for _, _, _, t in kept])
    if not ws:
        return []
    desc = sorted(ws, reverse=True)  # weightiest first
    # the three named: of the pairs at or above the third weight, the first three of the (weight, cation,
    # anion) tuples sorted descending (so ties fall as they would in a sort of every pair's tuple)
    cut = desc[min(2, len(desc) - 1)]
    cations, anions, labels = names
    top = sorted([(ws[k], cations[k], anions[k], labels[k]) for k, w in enumerate(ws) if w >= cut], reverse=True)[:3]
    total_w = sum(cations_of(m)) * sum(anions_of(m))
    frac = sum(desc) / total_w if total_w > 0 else 0.0
    named = ", ".join([label for _, _, _, label in top]) + (" …" if len(ws) > 3 else "")
    return [Warning_("pitzer_default", f"{len(ws)} ion pair{'s' if len(ws) > 1 else ''} without Pitzer "
                     f"parameters ({named}): Debye–Hückel term only, {100 * frac:.2g} % of the "
                     "cation–anion interactions")]


def _gather(idx: list[int]) -> Callable[[Sequence], tuple]:
    """A function that takes the items at ``idx`` of a sequence, as a tuple (itemgetter's, always a tuple)."""
    if not idx:
        return lambda seq: ()
    if len(idx) == 1:
        k = idx[0]
        return lambda seq: (seq[k],)
    return itemgetter(*idx)


def _default_pairs(model: MediumModel) -> tuple | None:
    """What :func:`pitzer_default` looks at, per model (None: every pair has parameters): gatherers of the
    ion molalities in the model's ion order (from the species' molalities), of the cations', of the
    anions', of each pair's cation and of each pair's anion (:func:`_gather`), and the pairs' names (a list
    of cations, a list of anions, a list of the pairs as shown: "K–NO3")."""
    missing = model.ion_pairs_without_parameters
    if not missing:
        return None
    ions = list(model.ion_charges)
    where = {ion: k for k, ion in enumerate(ions)}
    charges = list(model.ion_charges.values())
    column = {sp: k for k, sp in enumerate(model.species)}
    return (_gather([column[ion] for ion in ions]),
            _gather([k for k, q in enumerate(charges) if q > 0]), _gather([k for k, q in enumerate(charges) if q < 0]),
            _gather([where[c] for c, _ in missing]), _gather([where[a] for _, a in missing]),
            ([c for c, _ in missing], [a for _, a in missing],
             [f"{c.split('[')[0]}–{a.split('[')[0]}" for c, a in missing]))


def pitzer_range(ctx: Context) -> list[Warning_]:
    """Ion pairs whose Pitzer parameters are used beyond the ionic strength of their data (``max_m`` of
    each pair in catalog pitzer.yaml, with its source)."""
    model = ctx.model
    floor = model.pitzer_range_floor
    # the evaluation's ionic strength (the same sum in another order: within a few 1e-16 of the one
    # ion_pairs_beyond_data makes) well below every pair's range: nothing to look at, no second sum
    if ctx.evaluation.ionic_strength_mol_per_kg * (1.0 + PITZER_RANGE_SCREEN) < floor:
        return []
    try:
        over = model.ion_pairs_beyond_data(ctx.state)
    except Exception:  # noqa: BLE001 - a validity screen must never break an evaluation
        over = []
    return [Warning_("validity", f"{c}–{a}: ionic strength beyond the Pitzer parameters' data range")
            for c, a in over]


def pitzer_temperature(ctx: Context) -> list[Warning_]:
    """Pairs with 25 °C Pitzer parameters only (no temperature terms), used more than
    :data:`PITZER_T_SPAN` from 25 °C."""
    T = ctx.T
    if abs(T - 298.15) <= PITZER_T_SPAN:
        return []
    fixed = [f"{c}–{a}" for c, a, p in ctx.model.ion_pairs(ctx.state) if not p.temperature_terms]
    if not fixed:
        return []
    return [Warning_("temperature", "Pitzer parameters of " + ", ".join(fixed[:5]) +
                     (" …" if len(fixed) > 5 else "") + f" are 25 °C values, used at {T - T0:.0f} °C")]


def precipitation(ctx: Context) -> list[Warning_]:
    """Calcium with sulfate or phosphate near or past the solubility product of the salt
    (mediaplan.thermo.precipitation, Davies activity coefficients): above :data:`PRECIPITATION_RATIO`
    it "approaches", above 1 it "exceeds"."""
    if not ctx.model.has_electrolytes:
        return []
    out = []
    model = ctx.model
    read = model.memo(("precipitation",), lambda: [(sp, k) for k, sp in enumerate(model.species)
                                                    if sp in SPECIES_READ])
    sm = ctx.state.species_m[0].tolist()
    # what MediumModel.species_present gives, of the species the screen reads
    present = {sp: sm[k] for sp, k in read if sm[k] > 0}
    for an, name, ratio in calcium_saturation(present, ctx.evaluation.ionic_strength_mol_per_kg):
        if ratio > PRECIPITATION_RATIO:
            word = "exceeds" if ratio > 1 else "approaches"
            out.append(Warning_("precipitation", f"Ca²⁺ with {an.split('[')[0]}: ion activity product {word} the "
                                f"solubility product of {name}; keep them in separate stocks and watch for "
                                "cloudiness after autoclaving"))
    return out


def solubility(ctx: Context) -> list[Warning_]:
    """Each substance (all its forms together) against its solubility (:meth:`Component.saturation_at`,
    from the catalog's sourced solubility table, or its 25 °C figure when it has no table):

    - above the solubility at the culture temperature: it will not all dissolve;
    - else above the solubility at the storage temperature (the plan's, or :data:`DEFAULT_STORAGE_K` when
      it states none): it crystallises if kept there;
    - else above :data:`SOLUBILITY_MARGIN` of the solubility at the colder of the two: it may crystallise.

    A temperature outside the substance's table is never extrapolated: the warning names the nearest
    tabulated temperature and says the figure there is not the one asked for."""
    T = ctx.T
    stated = ctx.recipe.storage_temperature_k
    T_store = DEFAULT_STORAGE_K if stated is None else stated
    limits = ctx.model.memo(("solubility", T, T_store), lambda: _solubility_limits(ctx.lines, T, T_store))
    molality = ctx.state.molality[0].tolist()
    out = []
    for sub, c, idx, culture, store in limits:
        m = molality[idx[0]]
        for i in idx[1:]:
            m += molality[i]
        m_T, where_T, g_T = culture
        if m > m_T:
            out.append(Warning_("solubility", f"{sub} at {m:.3g} mol/kg is above its solubility "
                                f"({g_T:.3g} g/100 g water {where_T}): it will not all dissolve", c.id))
            continue
        if store is not None:
            kept = _kept(T_store, stated is not None) if m > SOLUBILITY_MARGIN * store.molality else ""
            if m > store.molality:
                out.append(Warning_("solubility", f"{sub} at {m:.3g} mol/kg is {100 * m / store.molality:.0f} % of "
                                    f"its solubility at {celsius(T_store)} ({store.g_per_100g_water:.3g} g/100 g "
                                    f"water): it crystallises if {kept}", c.id))
            elif m > SOLUBILITY_MARGIN * store.molality:
                out.append(Warning_("solubility", f"{sub} is at {100 * m / store.molality:.0f} % of its solubility "
                                    f"at {celsius(T_store)}: it may crystallise if {kept}", c.id))
        elif m > SOLUBILITY_MARGIN * m_T:
            out.append(Warning_("solubility", f"{sub} is at {100 * m / m_T:.0f} % of its solubility {where_T}: "
                                "it may crystallise in the cold", c.id))
    return out


def _kept(T_store: float, stated: bool) -> str:
    """Where the medium is kept, in words (T_store [K])."""
    return f"kept at {celsius(T_store)}" + (" (the stated storage temperature)" if stated
                                            else " (a cold room; the plan states no storage temperature)")


def _solubility_limits(lines: list[Line], T: float, T_store: float) -> list[tuple]:
    """Per substance with a solubility: (substance, its first component, the indices of its lines, the figure
    at the culture temperature T [K] (:func:`_figure`), the saturation at the storage temperature T_store [K]
    when that is the colder and known there, else None). What :func:`solubility` compares the molalities
    with; it depends on the lines and temperatures alone."""
    idx: dict[str, list[int]] = {}
    sub_comp: dict[str, object] = {}
    for i, ln in enumerate(lines):
        c = ln.component
        if (c.solubility is None and not c.solubility_table) or not c.substance:
            continue
        idx.setdefault(c.substance, []).append(i)
        sub_comp.setdefault(c.substance, c)
    out = []
    for sub, members in idx.items():
        c = sub_comp[sub]
        culture = _figure(c, T)
        if culture is None:
            continue
        store = c.saturation_at(T_store)
        ok = T_store < T and store.at_asked and store.molality is not None
        out.append((sub, c, members, culture, store if ok else None))
    return out


def _figure(c, T: float) -> tuple[float, str, float] | None:
    """(saturation molality [mol/kg], where it holds in words, g per 100 g water) of component c at T [K]:
    the figure at T, else the 25 °C figure, else the table's end nearest T, each said as such."""
    sat = c.saturation_at(T)
    if sat.molality is not None:
        where = f"at {celsius(sat.temperature_k)}"
        return sat.molality, where, sat.g_per_100g_water
    rows = c.solubility_table
    if not rows:
        return None
    end = rows[0] if rows[0].temperature_k > T else rows[-1]
    near = c.saturation_at(end.temperature_k)
    if near.molality is None:
        return None
    return near.molality, f"at {celsius(end.temperature_k)}, the nearest tabulated temperature to {celsius(T)}", \
        near.g_per_100g_water


def unverified_amounts(ctx: Context) -> list[Warning_]:
    """Amounts of the base formulation the catalog marks as from memory (confidence C)."""
    recipe = ctx.recipe
    if not recipe.base:
        return []
    med = ctx.catalog.medium(recipe.base)
    unverified = [ln.component.id for ln in ctx.lines if ln.origin == "base" and ln.confidence == "C"]
    if unverified:
        return [Warning_("unverified", f"{len(unverified)} amounts of {med.id} are from memory and unverified "
                         "(confidence C): check them against the original paper before use")]
    return []


def reflection_unknown(ctx: Context) -> list[Warning_]:
    """With a cell reference: components above :data:`REFLECTION_SHARE_NOTED` of the osmolality that have
    no reflection coefficient, counted as impermeant."""
    ev = ctx.evaluation
    if ev.tonicity is None:
        return []
    unknown = [c for c in ev.components if c.reflection_coefficient is None and c.share > REFLECTION_SHARE_NOTED]
    if not unknown:
        return []
    frac = sum(c.share for c in unknown)
    return [Warning_("reflection_unknown", "no reflection coefficient for " +
                     ", ".join(c.id for c in unknown[:4]) + (" …" if len(unknown) > 4 else "") +
                     f" ({100 * frac:.3g} % of the osmolality): counted as impermeant (σ = 1); solutes "
                     "that enter the cells make the medium less hypertonic than shown")]


def density_estimate(ctx: Context) -> list[Warning_]:
    """Components above :data:`DENSITY_ESTIMATE_G_PER_L` whose apparent molar volume is estimated from a
    solid density (``DEFAULT_SOLUTE_DENSITY`` of mediaplan.medium.model)."""
    model = ctx.model
    if not model.default_volume:
        return []
    comps = ctx.evaluation.components
    if len(comps) == len(model.components):  # the rows are the model's components, in its order
        rows = model.memo(("density_estimate",), lambda: [(c.id, i) for i, c in enumerate(model.components)
                                                          if c.id in model.default_volume])
        # default_volume lists each id once, in model order
        big = [cid for cid, i in rows if comps[i].id == cid and comps[i].grams_per_litre > DENSITY_ESTIMATE_G_PER_L]
    else:
        by_id = {c.id: c for c in comps}
        big = [cid for cid in model.default_volume
               if cid in by_id and by_id[cid].grams_per_litre > DENSITY_ESTIMATE_G_PER_L]
    if big:
        return [Warning_("density_estimate", "no apparent molar volume for " + ", ".join(big) +
                         ": estimated from a solid density of 1.5 g/cm³")]
    return []


#: the checks, in the order their warnings are shown
CHECKS: tuple[Callable[[Context], list[Warning_]], ...] = (
    neutral_validity, ideal_fallback, peg_validity, peg_mixture, pitzer_default, pitzer_range,
    pitzer_temperature, precipitation, solubility, unverified_amounts, reflection_unknown, density_estimate,
)


def warnings_for(ctx: Context) -> list[Warning_]:
    """Every check's warnings, in the order of :data:`CHECKS`."""
    out: list[Warning_] = []
    for check in CHECKS:
        out.extend(check(ctx))
    return out
