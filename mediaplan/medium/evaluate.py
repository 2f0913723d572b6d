"""Recipe -> Evaluation: every figure a user sees about a medium's water relations.

The Evaluation is plain data (floats, strings, lists); the CLI, the terminal app, the preparation
sheet and the exports only format it.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

import numpy as np

from mediaplan.medium.catalog import GROUP_LABELS, Catalog
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Line, Recipe
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0
from mediaplan.thermo.ions import parse_species
from mediaplan.thermo.peg import PEG_VALIDITY
from mediaplan.thermo.precipitation import calcium_saturation

#: default tolerance of "isotonic" [fraction of the cell reference]
ISOTONIC_TOLERANCE = 0.05


@dataclass
class Warning_:
    """A condition the user should know about. ``code`` is stable for scripts."""

    code: str
    message: str
    component: str | None = None

    def to_dict(self) -> dict:
        return {"code": self.code, "message": self.message, "component": self.component}


@dataclass
class ComponentResult:
    id: str
    name: str
    formula: str | None
    group: str
    amount: str
    origin: str
    confidence: str | None
    molarity_mmol_per_l: float
    molality_mmol_per_kg: float
    osmolality_mosmol_per_kg: float  # this component's share of the non-ideal osmolality
    osmolality_ideal_mosmol_per_kg: float
    share: float  # fraction of the total non-ideal osmolality
    grams_per_litre: float
    hazard: str | None
    reflection_coefficient: float | None


@dataclass
class Evaluation:
    """The water relations of one recipe (units in the field names)."""

    temperature_c: float
    volume_l: float
    base: str | None
    strength: float
    components: list[ComponentResult]
    osmolality_mosmol_per_kg: float
    osmolality_ideal_mosmol_per_kg: float
    osmometer_mosmol_per_kg: float
    water_activity: float
    osmotic_potential_mpa: float
    vant_hoff_potential_mpa: float
    freezing_point_depression_k: float
    osmotic_pressure_mpa: float
    electrolyte_phi: float
    ionic_strength_mol_per_kg: float
    water_kg_per_l: float
    density_kg_per_l: float
    groups: dict[str, float]
    effective_osmolality_mosmol_per_kg: float
    tonicity: dict | None
    warnings: list[Warning_] = field(default_factory=list)
    cautions: list[dict] = field(default_factory=list)

    @property
    def osmotic_potential_bar(self) -> float:
        return self.osmotic_potential_mpa * 10.0

    def component(self, cid: str) -> ComponentResult | None:
        return next((c for c in self.components if c.id == cid), None)

    def to_dict(self) -> dict:
        d = asdict(self)
        d["osmotic_potential_bar"] = self.osmotic_potential_bar
        d["warnings"] = [w.to_dict() for w in self.warnings]
        return finite(d)


def finite(obj):
    """No NaN or infinity ever reaches an output: they become None (JSON null)."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: finite(v) for k, v in obj.items()}
    if isinstance(obj, list):
        return [finite(v) for v in obj]
    return obj


def evaluate(recipe: Recipe, catalog: Catalog, *, cell_reference_mosmol: float | None = None,
             isotonic_tolerance: float = ISOTONIC_TOLERANCE) -> Evaluation:
    """Evaluate a recipe: molalities, non-ideal and ideal osmolality, a_w, potential, freezing point.

    Parameters
    ----------
    recipe : the medium
    catalog : component catalog (load one with :func:`mediaplan.files.catalog.load_catalog`)
    cell_reference_mosmol : osmolality of the cells' sap [mOsm/kg] for tonicity, or None
    isotonic_tolerance : fraction of the reference within which the medium counts as isotonic
    """
    lines = recipe.lines(catalog)
    T = recipe.temperature_k
    comps = [ln.component for ln in lines]
    model = compiled(catalog, comps, T)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    st = model.solve(n[None, :], b[None, :])
    mix = st.mix
    y = float(mix.osmolality[0])
    ideal = float(mix.ideal[0])
    # freezing-point osmometer: the same medium at 0 °C
    y0 = float(model.mixture(st.species_m, T0, start=mix.state).osmolality[0]) if lines else y
    aw = float(potential.water_activity(y))
    aw0 = float(potential.water_activity(y0))
    theta = float(potential.freezing_point_depression(aw0))
    psi = float(potential.potential_from_aw(aw, T))
    W = float(st.water_kg_per_m3[0])
    molality = st.molality[0]
    species_m = st.species_m[0]
    n_all = st.n_per_m3[0]
    osmolarity = float(n_all @ model.S.sum(axis=1))  # ideal osmol per m^3 of medium
    vh = float(potential.vant_hoff_potential(osmolarity, T))
    # --- split the non-ideal osmolality among components --------------------------------------
    ncomp = len(comps)
    share_abs = np.zeros(ncomp)
    ideal_c = molality * model.S.sum(axis=1)
    if model.ion_idx:
        ion_part = molality[:, None] * model.S[:, model.ion_idx]
        ion_c = ion_part.sum(axis=1)
        tot = ion_c.sum()
        if tot > 0:
            share_abs += float(mix.fraction_electrolyte[0]) * y * ion_c / tot
    for j, k in enumerate(model.neutral_idx):
        part = molality * model.S[:, k]
        tot = part.sum()
        if tot > 0:
            share_abs += float(mix.fraction_neutral[0, j]) * y * part / tot
    for j, k in enumerate(model.peg_idx):
        part = molality * model.S[:, k]
        tot = part.sum()
        if tot > 0:
            share_abs += float(mix.fraction_peg[0, j]) * y * part / tot
    results = []
    groups: dict[str, float] = {}
    eff = 0.0
    for i, ln in enumerate(lines):
        c = ln.component
        sh = float(share_abs[i])
        sigma = c.reflection_coefficient if c.reflection_coefficient is not None else 1.0
        eff += sigma * sh
        label = GROUP_LABELS.get(c.group, c.group)
        groups[label] = groups.get(label, 0.0) + sh * 1000.0
        results.append(ComponentResult(
            id=c.id, name=c.name, formula=c.formula, group=c.group, amount=ln.amount.text, origin=ln.origin,
            confidence=ln.confidence, molarity_mmol_per_l=float(n_all[i]), molality_mmol_per_kg=float(molality[i] * 1000),
            osmolality_mosmol_per_kg=sh * 1000.0, osmolality_ideal_mosmol_per_kg=float(ideal_c[i] * 1000),
            share=sh / y if y > 0 else 0.0, grams_per_litre=float(n_all[i] * model.M[i]), hazard=c.hazard,
            reflection_coefficient=c.reflection_coefficient))
    ion_I = 0.0
    if model.ion_idx:
        z = np.array([parse_species(model.species[k]).charge for k in model.ion_idx])
        ion_I = float(0.5 * np.sum(species_m[model.ion_idx] * z**2))
    solute_mass = float(n_all @ model.M_anh)  # kg anhydrous solute per m^3
    density = (W + solute_mass) / 1000.0
    tonicity = None
    if cell_reference_mosmol is not None:
        tonicity = classify_tonicity(eff * 1000.0, cell_reference_mosmol, isotonic_tolerance)
    ev = Evaluation(
        temperature_c=T - T0, volume_l=recipe.volume_m3 * 1000.0, base=recipe.base, strength=recipe.strength,
        components=results, osmolality_mosmol_per_kg=y * 1000.0, osmolality_ideal_mosmol_per_kg=ideal * 1000.0,
        osmometer_mosmol_per_kg=float(potential.osmometer_reading(theta)) * 1000.0, water_activity=aw,
        osmotic_potential_mpa=psi / 1e6, vant_hoff_potential_mpa=vh / 1e6, freezing_point_depression_k=theta,
        osmotic_pressure_mpa=-psi / 1e6, electrolyte_phi=float(mix.electrolyte_phi_own[0]),
        ionic_strength_mol_per_kg=ion_I, water_kg_per_l=W / 1000.0, density_kg_per_l=density, groups=groups,
        effective_osmolality_mosmol_per_kg=eff * 1000.0, tonicity=tonicity,
    )
    ev.warnings = _warnings(recipe, catalog, lines, model, st, ev)
    ev.cautions = [{"component": c.id, "caution": c.hazard} for c in comps if c.hazard]
    if not all(math.isfinite(v) for v in (ev.osmolality_mosmol_per_kg, ev.water_activity, ev.osmotic_potential_mpa)):
        raise MediaplanError("the models gave no finite answer for this medium",
                             hint="check for absurd amounts; the medium is past every model's range")
    return ev


def _pairs_present(model, species_m) -> list[tuple[str, str]]:
    """Cation-anion pairs with parameters whose ions are both present."""
    present = [model.species[k] for k in model.ion_idx if species_m[k] > 0]
    cats = [i for i in present if parse_species(i).charge > 0]
    ans = [i for i in present if parse_species(i).charge < 0]
    binary = model.catalog.pitzer.binary if model.catalog.pitzer else {}
    return [(c, a) for c in cats for a in ans if (c, a) in binary]


def classify_tonicity(effective_mosmol: float, reference_mosmol: float, tolerance: float) -> dict:
    """Hypotonic / isotonic / hypertonic toward cells of the given sap osmolality.

    Parameters
    ----------
    effective_mosmol : the medium's effective osmolality toward the cells [mOsm/kg]: each solute's
        osmolal share weighted by its reflection coefficient (1 = impermeant)
    reference_mosmol : osmolality of the cell sap [mOsm/kg] (typed in, or from a plasmolysis fit)
    tolerance : half-width of the isotonic band [fraction of the reference], 0 <= tolerance < 1

    Returns
    -------
    dict with ``class``, ``ratio`` (effective / reference), ``difference_mosmol_per_kg`` (effective −
    reference), the inputs, and ``water_flow`` (expected direction of net water movement).
    """
    if not math.isfinite(reference_mosmol) or reference_mosmol <= 0:
        raise AmountError(f"the cell reference ({reference_mosmol:g} mOsm/kg) must be a positive osmolality",
                          field="cells", hint='e.g. "450 mOsm/kg" or "-1.1 MPa"')
    if isinstance(tolerance, bool) or not math.isfinite(tolerance) or not 0 <= tolerance < 1:
        raise AmountError(f"isotonic tolerance {tolerance!r} must be a fraction from 0 to below 1",
                          field="cells.tolerance", hint="e.g. 0.05 for ±5 %")
    ratio = effective_mosmol / reference_mosmol
    if abs(ratio - 1) <= tolerance * (1 + 1e-12):  # the band's edges count as isotonic
        cls, flow = "isotonic", "no net water flow"
    elif ratio < 1:
        cls, flow = "hypotonic", "water moves into the cells (they swell; turgor rises)"
    else:
        cls, flow = "hypertonic", "water leaves the cells (they shrink; plasmolysis possible)"
    return {"class": cls, "ratio": ratio, "reference_mosmol_per_kg": reference_mosmol,
            "effective_mosmol_per_kg": effective_mosmol, "difference_mosmol_per_kg": effective_mosmol - reference_mosmol,
            "tolerance": tolerance, "water_flow": flow}


def _warnings(recipe: Recipe, catalog: Catalog, lines: list[Line], model, st, ev: Evaluation) -> list[Warning_]:
    out: list[Warning_] = []
    T = recipe.temperature_k
    species_m = st.species_m[0]
    # neutral solutes past their validity range
    for j, k in enumerate(model.neutral_idx):
        p = model.neutral_params[j]
        if species_m[k] > p.m_max:
            out.append(Warning_("validity", f"{model.species[k]} at {species_m[k]:.3g} mol/kg is beyond its model's "
                                f"range (≤ {p.m_max:g} mol/kg): extrapolated", model.species[k]))
    if model.ideal_neutral:
        share = sum(c.osmolality_mosmol_per_kg for c in ev.components
                    if any(sp in model.ideal_neutral for sp, _ in catalog.components[c.id].species))
        frac = share / ev.osmolality_mosmol_per_kg if ev.osmolality_mosmol_per_kg > 0 else 0
        if frac > 0.005:
            out.append(Warning_("ideal_fallback", f"no published model for {', '.join(model.ideal_neutral)}: treated "
                                f"as ideal ({100 * frac:.2g} % of the osmolality)"))
    # PEG
    for j, g in enumerate(model.peg_grades):
        c = float(species_m[model.peg_idx[j]] * g / 1000.0)
        if c <= 0:
            continue
        val = PEG_VALIDITY.get(g, {})
        cmax = val.get("c_max", 0.8)
        tmin, tmax = val.get("T_min", 278.15), val.get("T_max", 313.15)
        if c > cmax:
            out.append(Warning_("validity", f"PEG {g} at {c:.2f} g/g water is beyond the published equation "
                                f"(≤ {cmax} g/g)", f"peg{g}"))
        if not tmin <= T <= tmax:
            out.append(Warning_("validity", f"PEG {g} equation holds for {tmin - T0:.0f}–{tmax - T0:.0f} °C",
                                f"peg{g}"))
    if model.peg_idx and (model.ion_idx or model.neutral_idx):
        out.append(Warning_("peg_mixture", "PEG mixed with other solutes lowers the water potential more than "
                            "additivity predicts (Michel 1983, Plant Physiol 72:66): the figure is an upper bound; "
                            "measure it (psychrometer or vapour-pressure osmometer)"))
    # electrolytes
    if model.pitzer is not None:
        missing = getattr(model.pitzer, "missing_pairs", ())
        present = {model.species[k] for k in model.ion_idx if species_m[k] > 0}
        miss = [(c, a) for c, a in missing if c in present and a in present]
        if miss:
            # weight of the cation-anion interaction terms that fall back to Debye-Hückel only
            m_of = {model.species[k]: float(species_m[k]) for k in model.ion_idx}
            total_w = (sum(v for sp, v in m_of.items() if parse_species(sp).charge > 0)
                       * sum(v for sp, v in m_of.items() if parse_species(sp).charge < 0))
            weights = sorted(((m_of[c] * m_of[a], c, a) for c, a in miss), reverse=True)  # weightiest first
            frac = sum(w for w, _, _ in weights) / total_w if total_w > 0 else 0.0
            named = ", ".join(f"{c.split('[')[0]}–{a.split('[')[0]}" for _, c, a in weights[:3]) + (
                " …" if len(weights) > 3 else "")
            out.append(Warning_("pitzer_default", f"{len(miss)} ion pair{'s' if len(miss) > 1 else ''} without Pitzer "
                                f"parameters ({named}): Debye–Hückel term only, {100 * frac:.2g} % of the "
                                "cation–anion interactions"))
        try:
            over = model.pitzer.max_molality_exceeded(species_m[model.ion_idx])
        except Exception:  # noqa: BLE001 - a validity screen must never break an evaluation
            over = []
        for c, a in over:
            out.append(Warning_("validity", f"{c}–{a}: ionic strength beyond the Pitzer parameters' data range"))
        if abs(T - 298.15) > 10.5:
            fixed = [f"{c}–{a}" for c, a in _pairs_present(model, species_m)
                     if not catalog.pitzer.binary[(c, a)].temperature_terms]
            if fixed:
                out.append(Warning_("temperature", "Pitzer parameters of " + ", ".join(fixed[:5]) +
                                    (" …" if len(fixed) > 5 else "") + f" are 25 °C values, used at {T - T0:.0f} °C"))
        # precipitation screen
        present = {sp: float(species_m[k]) for k, sp in enumerate(model.species) if species_m[k] > 0}
        for an, name, ratio in calcium_saturation(present, ev.ionic_strength_mol_per_kg):
            if ratio > 0.5:
                word = "exceeds" if ratio > 1 else "approaches"
                out.append(Warning_("precipitation", f"Ca²⁺ with {an.split('[')[0]}: ion activity product {word} the "
                                    f"solubility product of {name}; keep them in separate stocks and watch for "
                                    "cloudiness after autoclaving"))
    # solubility per substance
    by_sub: dict[str, float] = {}
    sub_comp: dict[str, object] = {}
    for i, ln in enumerate(lines):
        c = ln.component
        if c.solubility is None or not c.substance:
            continue
        by_sub[c.substance] = by_sub.get(c.substance, 0.0) + float(st.molality[0, i])
        sub_comp.setdefault(c.substance, c)
    for sub, m in by_sub.items():
        c = sub_comp[sub]
        m_sat = c.solubility * 10.0 / c.anhydrous_molar_mass  # g/100 g water -> mol/kg
        if m > m_sat:
            out.append(Warning_("solubility", f"{sub} at {m:.3g} mol/kg is above its solubility "
                                f"({c.solubility:g} g/100 g water at 25 °C): it will not all dissolve", c.id))
        elif m > 0.8 * m_sat:
            out.append(Warning_("solubility", f"{sub} is at {100 * m / m_sat:.0f} % of its solubility at 25 °C: "
                                "it may crystallise in the cold", c.id))
    # unverified published amounts
    if recipe.base:
        med = catalog.medium(recipe.base)
        unverified = [ln.component.id for ln in lines if ln.origin == "base" and ln.confidence == "C"]
        if unverified:
            out.append(Warning_("unverified", f"{len(unverified)} amounts of {med.id} are from memory and unverified "
                                "(confidence C): check them against the original paper before use"))
    if ev.tonicity is not None:
        unknown = [c for c in ev.components if c.reflection_coefficient is None and c.share > 0.01]
        if unknown:
            frac = sum(c.share for c in unknown)
            out.append(Warning_("reflection_unknown", "no reflection coefficient for " +
                                ", ".join(c.id for c in unknown[:4]) + (" …" if len(unknown) > 4 else "") +
                                f" ({100 * frac:.3g} % of the osmolality): counted as impermeant (σ = 1); solutes "
                                "that enter the cells make the medium less hypertonic than shown"))
    if model.default_volume:
        by_id = {c.id: c for c in ev.components}
        big = [cid for cid in model.default_volume if cid in by_id and by_id[cid].grams_per_litre > 10]
        if big:
            out.append(Warning_("density_estimate", "no apparent molar volume for " + ", ".join(big) +
                                ": estimated from a solid density of 1.5 g/cm³"))
    return out
