"""Recipe -> Evaluation: every figure a user sees about a medium's water relations.

The Evaluation is plain data (floats, strings, lists); the CLI, the terminal app, the preparation
sheet and the exports only format it.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

from mediaplan.medium.catalog import GROUP_LABELS, Catalog
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe, check_plausible, molality_of, within_limits
from mediaplan.medium.units import format_amount
from mediaplan.medium.warnings import Context, Warning_, warnings_for
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0

#: default tolerance of "isotonic" [fraction of the cell reference]
ISOTONIC_TOLERANCE = 0.05


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

    def __getattr__(self, name: str):
        # evaluate() leaves ``amount`` to be written when first read (a base line at a new strength is
        # formatted only for display): it keeps the Amount and the factor it is taken at (the strength of a
        # scaled base line, else 1), whose text is the field's value
        if name == "amount" and "_amount_of" in self.__dict__:
            a, f = self.__dict__["_amount_of"], self.__dict__.get("_factor", 1.0)
            # a base line at a strength: the text ScaledAmount gives (the published text's unit and style)
            text = a.text if f == 1.0 else format_amount(a.value * f, a.kind, like=a.text)
            self.__dict__["amount"] = text
            return text
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")


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
        d["volume_l"] = tidy_volume_l(self.volume_l)
        d["osmotic_potential_bar"] = self.osmotic_potential_bar
        d["warnings"] = [w.to_dict() for w in self.warnings]
        return finite(d)


def _component_rows(comps) -> list[tuple]:
    """Per component, what its row of an evaluation takes from the catalog: a template of the row's fields
    (id, name, formula, group, hazard and reflection coefficient filled in, the others placeholders, in the
    order evaluate() gives them), the σ its share is weighted by (1 without one) and its group's label."""
    return [({"id": c.id, "name": c.name, "formula": c.formula, "group": c.group, "_amount_of": None,
              "_factor": 1.0, "origin": None, "confidence": None, "molarity_mmol_per_l": 0.0,
              "molality_mmol_per_kg": 0.0, "osmolality_mosmol_per_kg": 0.0, "osmolality_ideal_mosmol_per_kg": 0.0,
              "share": 0.0, "grams_per_litre": 0.0, "hazard": c.hazard,
              "reflection_coefficient": c.reflection_coefficient},
             c.reflection_coefficient if c.reflection_coefficient is not None else 1.0,
             GROUP_LABELS.get(c.group, c.group)) for c in comps]


def tidy_volume_l(v: float) -> float:
    """A batch volume [L] as output, to 12 significant digits: a typed volume ("2 L", "250 mL") has far
    fewer, and the litre's conversion factor, (0.1 m)³, leaves noise in the 16th (2 L -> 2.0000000000000004).
    Still a float; the figures computed from the volume are left as they are."""
    return float(f"{v:.12g}") if isinstance(v, float) and math.isfinite(v) else v


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
    # a base at a strength: its scaled lines as the full-strength lines and the strength (no line object
    # made per scaled line); recipe.lines() gives the lines themselves, where an error message needs them
    lines, factors = recipe.lines_at_full_strength(catalog)
    T = recipe.temperature_k
    comps = [ln.component for ln in lines]
    model = compiled(catalog, comps, T)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines], factors)
    try:
        W = float(model.water(n, b))
    except MediaplanError:
        # the error that names the line taking the most volume
        molality_of(model, lines if factors is None else recipe.lines(catalog), n, b)
        raise
    molality = n / W + b  # what molality_of gives (MediumModel.molality)
    if not within_limits(lines, molality, catalog.pitzer, model):
        # says which line is past its limit, in its amount (the scaled one for a base line at a strength)
        check_plausible(lines if factors is None else recipe.lines(catalog), molality, catalog.pitzer)
    st = model.solve_row(n, b, W=W, molality=molality)
    mix = st.mix
    y = float(mix.osmolality[0])
    ideal = float(mix.ideal[0])
    # freezing-point osmometer: the same medium at 0 °C
    y0 = float(model.mixture_at(mix, T0).osmolality[0]) if lines else y
    if not math.isfinite(y0):  # the warm start can lie too far away (concentrated PEG): solve from cold
        y0 = float(model.mixture(st.species_m, T0, osmolality_only=True).osmolality[0])
    aw = float(potential.water_activity(y))
    aw0 = float(potential.water_activity(y0))
    if not aw > 0:  # exp(-M_w y) underflows far past every model's range: said now, before a log of zero
        raise _no_finite_answer()
    # no freezing point where a_w at 0 °C underflows (or has no figure): said in a warning below
    theta = float(potential.freezing_point_depression(aw0)) if aw0 > 0 else math.nan
    psi = float(potential.potential_from_aw(aw, T))
    n_all = st.n_per_m3[0]
    osmolarity = float(n_all @ model.particles)  # ideal osmol per m^3 of medium
    vh = float(potential.vant_hoff_potential(osmolarity, T))
    share_abs = model.shares_row(st)  # the non-ideal osmolality split among components [osmol/kg]
    molality = st.molality[0].tolist()
    n_list = n_all.tolist()
    particles, molar_mass = model.particles.tolist(), model.M.tolist()
    results = []
    groups: dict[str, float] = {}
    eff = 0.0
    new_result = ComponentResult.__new__
    for ln, (template, sigma, label), factor, sh, mi, ni, pi, Mi in zip(
            lines, model.memo(("component_rows",), lambda: _component_rows(comps)),
            [1.0] * len(lines) if factors is None else factors, share_abs, molality, n_list, particles, molar_mass,
            strict=True):
        eff += sigma * sh
        groups[label] = groups.get(label, 0.0) + sh * 1000.0
        # the row's fields: the catalog's from the template, the rest set here (the amount's text when first
        # read); the dict then becomes the row's own
        d = template.copy()
        d["_amount_of"] = ln.amount
        d["_factor"] = factor
        d["origin"] = ln.origin
        d["confidence"] = ln.confidence
        d["molarity_mmol_per_l"] = ni
        d["molality_mmol_per_kg"] = mi * 1000
        d["osmolality_mosmol_per_kg"] = sh * 1000.0
        d["osmolality_ideal_mosmol_per_kg"] = mi * pi * 1000
        d["share"] = sh / y if y > 0 else 0.0
        d["grams_per_litre"] = ni * Mi
        r = new_result(ComponentResult)
        r.__dict__ = d
        results.append(r)
    ion_I = float(model.ionic_strength(st)[0])
    solute_mass = float(n_all @ model.M_anh)  # kg anhydrous solute per m^3
    density = (W + solute_mass) / 1000.0
    tonicity = None
    if cell_reference_mosmol is not None:
        tonicity = classify_tonicity(eff * 1000.0, cell_reference_mosmol, isotonic_tolerance, permeants={
            r.id: (r.reflection_coefficient, r.osmolality_mosmol_per_kg) for r in results
            if r.reflection_coefficient is not None and r.reflection_coefficient < 1})
    ev = Evaluation(
        temperature_c=T - T0, volume_l=recipe.volume_m3 * 1000.0, base=recipe.base, strength=recipe.strength,
        components=results, osmolality_mosmol_per_kg=y * 1000.0, osmolality_ideal_mosmol_per_kg=ideal * 1000.0,
        osmometer_mosmol_per_kg=float(potential.osmometer_reading(theta)) * 1000.0, water_activity=aw,
        osmotic_potential_mpa=psi / 1e6, vant_hoff_potential_mpa=vh / 1e6, freezing_point_depression_k=theta,
        osmotic_pressure_mpa=-psi / 1e6, electrolyte_phi=float(mix.electrolyte_phi_own[0]),
        ionic_strength_mol_per_kg=ion_I, water_kg_per_l=W / 1000.0, density_kg_per_l=density, groups=groups,
        effective_osmolality_mosmol_per_kg=eff * 1000.0, tonicity=tonicity,
    )
    ev.warnings = warnings_for(Context(recipe, catalog, lines, model, st, ev, T, factors))
    if not math.isfinite(theta):  # said in words, never a silent blank where a figure should be
        ev.warnings.insert(0, Warning_(
            "no_freezing_point", "no freezing-point or osmometer figure: at 0 °C the models have no solution for "
            "this medium (a solute's model is past its range there, e.g. far beyond its solubility); the "
            "figures at the medium's temperature stand"))
    ev.cautions = [{"component": cid, "caution": hazard}
                   for cid, hazard in model.memo(("cautions",), lambda: [(c.id, c.hazard) for c in comps if c.hazard])]
    if not all(math.isfinite(v) for v in (ev.osmolality_mosmol_per_kg, ev.water_activity, ev.osmotic_potential_mpa)):
        raise _no_finite_answer()
    return ev


def _no_finite_answer() -> MediaplanError:
    return MediaplanError("the models gave no finite answer for this medium",
                          hint="check for absurd amounts; the medium is past every model's range")


def classify_tonicity(effective_mosmol: float, reference_mosmol: float, tolerance: float, *,
                      permeants: dict[str, tuple[float, float]] | None = None) -> dict:
    """Hypotonic / isotonic / hypertonic toward cells of the given sap osmolality.

    Parameters
    ----------
    effective_mosmol : the medium's effective osmolality toward the cells [mOsm/kg]: each solute's
        osmolal share weighted by its reflection coefficient (1 = impermeant)
    reference_mosmol : osmolality of the cell sap [mOsm/kg] (typed in, or from a plasmolysis fit)
    tolerance : half-width of the isotonic band [fraction of the reference], 0 <= tolerance < 1
    permeants : component id -> (reflection coefficient σ < 1 [-], its osmolal share [mOsm/kg]) of the
        solutes known to enter the cells

    Returns
    -------
    dict with ``class``, ``ratio`` (effective / reference), ``difference_mosmol_per_kg`` (effective −
    reference), the inputs, ``water_flow`` (expected direction of net water movement), ``turgor`` (what
    walled plant cells do: their wall resists swelling, so turgor changes rather than volume), and two
    phases, ``first_minutes`` and ``steady_state``, each with ``class``, ``ratio``,
    ``effective_mosmol_per_kg`` and ``turgor``; ``permeants`` lists the ids of the permeating solutes.

    Notes
    -----
    In the first minutes, before a permeating solute has entered, water flow follows each solute's share
    weighted by its reflection coefficient (Kedem & Katchalsky 1958, Biochim Biophys Acta 27:229): this is
    ``effective_mosmol`` and the top-level class. A permeant then enters until its concentration inside
    matches the medium's and no longer draws water: at the steady state only the solutes that do not enter
    count, so a medium made hypertonic with glycerol plasmolyses cells at first and they recover (the
    deplasmolysis of plasmolysis tests with permeating solutes). Ions and solutes without a reflection
    coefficient are taken as impermeant in both phases (their uptake by transport is not modelled).
    """
    if not math.isfinite(reference_mosmol) or reference_mosmol <= 0:
        raise AmountError(f"the cell reference ({reference_mosmol:g} mOsm/kg) must be a positive osmolality",
                          field="cells", hint='e.g. "450 mOsm/kg" or "-1.1 MPa"')
    if isinstance(tolerance, bool) or not math.isfinite(tolerance) or not 0 <= tolerance < 1:
        raise AmountError(f"isotonic tolerance {tolerance!r} must be a fraction from 0 to below 1",
                          field="cells.tolerance", hint="e.g. 0.05 for ±5 %")
    permeants = permeants or {}
    ratio = effective_mosmol / reference_mosmol
    cls = _tonicity_class(ratio, tolerance)
    flow = {"isotonic": "no net water flow",
            "hypotonic": "water moves into the cells (they swell; turgor rises)",
            "hypertonic": "water leaves the cells (they shrink; plasmolysis possible)"}[cls]
    steady = max(effective_mosmol - sum(sigma * share for sigma, share in permeants.values()), 0.0)
    steady_cls = _tonicity_class(steady / reference_mosmol, tolerance)
    return {"class": cls, "ratio": ratio, "reference_mosmol_per_kg": reference_mosmol,
            "effective_mosmol_per_kg": effective_mosmol, "difference_mosmol_per_kg": effective_mosmol - reference_mosmol,
            "tolerance": tolerance, "water_flow": flow, "turgor": _TURGOR[cls],
            "first_minutes": {"class": cls, "ratio": ratio, "effective_mosmol_per_kg": effective_mosmol,
                              "turgor": _TURGOR[cls]},
            "steady_state": {"class": steady_cls, "ratio": steady / reference_mosmol,
                             "effective_mosmol_per_kg": steady, "turgor": _TURGOR[steady_cls]},
            "permeants": sorted(permeants)}


#: what walled plant cells do in each class: a wall resists swelling, so water taken up raises turgor
#: rather than volume; water lost first lowers turgor, and past zero turgor the protoplast leaves the wall
_TURGOR = {
    "isotonic": "turgor stays as it is",
    "hypotonic": "water enters until the wall resists: turgor rises, the cells barely swell",
    "hypertonic": "water leaves: turgor falls, and past zero turgor the protoplasts plasmolyse",
}


def _tonicity_class(ratio: float, tolerance: float) -> str:
    if abs(ratio - 1) <= tolerance * (1 + 1e-12):  # the band's edges count as isotonic
        return "isotonic"
    return "hypotonic" if ratio < 1 else "hypertonic"
