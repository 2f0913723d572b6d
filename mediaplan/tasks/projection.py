"""Projections: how a medium's water relations change after autoclaving and during culture.

Three stages, each re-evaluated with the full non-ideal model:

``as made``
    the recipe as weighed out.
``after autoclaving``
    a fraction h of the sucrose is hydrolysed: each mole becomes one mole of glucose and one of
    fructose (C12H22O11 + H2O -> C6H12O6 + C6H12O6), so each mole hydrolysed adds one osmole and
    takes one mole of water.
``after N weeks``
    the vessel has lost a fraction L of its water (solutes stay): every molality rises by 1/(1 - L).
    L is set directly (``water_loss``) or as a loss per week of the water first present
    (``water_loss_per_week``), taken as constant over time: L = rate x weeks. Evaporation through a
    closure is driven by a nearly constant vapour-pressure difference, so a constant mass loss per
    week is the usual description.

Guidance (ranges as published; set the fractions for your own autoclave, vessels and closures):

- Sucrose hydrolysis on autoclaving: about 5-20 % in ordinary media (Hagen et al. 1991, Plant Cell
  Tiss Organ Cult 25:45; Druart & De Wulf 1993, Plant Cell Tiss Organ Cult 32:97 -- journal details
  from memory, unverified), far more with activated charcoal or at low pH (53-95 %).
- Water loss during culture depends on the vessel and its closure; weigh a few vessels weekly to
  measure it (no default is assumed: it is 0 unless set).

Plan files keep the settings in a ``[projection]`` table (a :class:`ProjectionRecord`, read and written
by :mod:`mediaplan.files.plan_tables`)::

    [projection]
    autoclave_hydrolysis = 0.1     # fraction of the sucrose hydrolysed
    water_loss_per_week = 0.02     # fraction of the water lost per week (or water_loss = total)
    weeks = 4
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import Amount, parse_fraction  # re-exported: the one fraction reader
from mediaplan.tasks.records import TableView
from mediaplan.thermo.constants import M_WATER

if TYPE_CHECKING:  # the engine is imported where a projection is computed, so reading a plan needs no numpy
    from mediaplan.medium.evaluate import Evaluation

#: the published range of sucrose hydrolysis on autoclaving in ordinary media [fraction]
HYDROLYSIS_TYPICAL = (0.05, 0.20)
#: with activated charcoal or at low pH [fraction]
HYDROLYSIS_CHARCOAL_OR_LOW_PH = (0.53, 0.95)
GUIDANCE = ("sucrose hydrolysis on autoclaving is about 5–20 % in ordinary media (Hagen et al. 1991; "
            "Druart & De Wulf 1993) and 53–95 % with activated charcoal or at low pH; water loss depends "
            "on vessel and closure: weigh vessels weekly to measure it")

#: default fraction when --project is asked for without a hydrolysis setting (inside the typical range)
DEFAULT_HYDROLYSIS = 0.10
#: a vessel that has lost this much of its water is past any use of the figures
_MAX_WATER_LOSS = 0.9



@dataclass(frozen=True)
class ProjectionSettings:
    """autoclave_hydrolysis : fraction of the sucrose hydrolysed [-];
    water_loss_per_week : fraction of the initial water lost per week [-] (or None);
    water_loss : total fraction of the water lost by the end (or None; excludes the per-week rate);
    weeks : length of the culture [weeks]."""

    autoclave_hydrolysis: float = 0.0
    water_loss_per_week: float | None = None
    water_loss: float | None = None
    weeks: float = 4.0

    @property
    def total_water_loss(self) -> float:
        """Fraction of the water lost by the end of the culture [-]."""
        if self.water_loss is not None:
            return self.water_loss
        return (self.water_loss_per_week or 0.0) * self.weeks

    def to_table(self) -> dict:
        """The plan file's ``[projection]`` table."""
        t: dict = {"autoclave_hydrolysis": self.autoclave_hydrolysis}
        if self.water_loss is not None:
            t["water_loss"] = self.water_loss
        else:
            t["water_loss_per_week"] = self.water_loss_per_week or 0.0
        t["weeks"] = self.weeks
        return t


_KEYS = ("autoclave_hydrolysis", "water_loss_per_week", "water_loss", "weeks")


@dataclass(frozen=True, eq=False)
class ProjectionRecord(TableView):
    """A plan's ``[projection]`` table as written: each value a number, a text (``"10 %"``) or None (not given).

    autoclave_hydrolysis : fraction of the sucrose hydrolysed on autoclaving [-]
    water_loss_per_week : fraction of the water first present lost per week [-]
    water_loss : total fraction of the water lost by the end [-]
    weeks : length of the culture [weeks]
    extra : keys this version does not know, as (key, value) pairs (refused by :func:`settings_from`)

    The values are checked when they are used (:func:`settings_from`), as the command line's are.
    """

    autoclave_hydrolysis: float | str | None = None
    water_loss_per_week: float | str | None = None
    water_loss: float | str | None = None
    weeks: float | str | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    @classmethod
    def of(cls, settings: ProjectionSettings) -> ProjectionRecord:
        """The record that keeps ``settings`` (the same keys and values as :meth:`ProjectionSettings.to_table`)."""
        s = settings
        if s.water_loss is not None:
            return cls(autoclave_hydrolysis=s.autoclave_hydrolysis, water_loss=s.water_loss, weeks=s.weeks)
        return cls(autoclave_hydrolysis=s.autoclave_hydrolysis, water_loss_per_week=s.water_loss_per_week or 0.0,
                   weeks=s.weeks)


def settings_from(record: ProjectionRecord | None, *, default_hydrolysis: float = DEFAULT_HYDROLYSIS,
                  **overrides) -> ProjectionSettings:
    """Settings from a plan's ``[projection]`` record, then overrides (None values ignored).

    Raises AmountError naming the field (``projection.weeks`` ...) for unknown keys and bad values.
    """
    record = record or ProjectionRecord()
    if record.extra:
        raise AmountError(f"unknown key {sorted(k for k, _ in record.extra)[0]!r} in [projection]", field="projection",
                          hint="keys: " + ", ".join(sorted(_KEYS)))
    raw = {k: getattr(record, k) for k in _KEYS if getattr(record, k) is not None}
    for k, v in overrides.items():
        if v is not None:
            if k == "water_loss":
                raw.pop("water_loss_per_week", None)
            if k == "water_loss_per_week":
                raw.pop("water_loss", None)
            raw[k] = v
    if "water_loss" in raw and "water_loss_per_week" in raw:
        raise AmountError("give water_loss or water_loss_per_week, not both", field="projection",
                          hint="a total fraction, or a fraction per week")
    h = parse_fraction(raw.get("autoclave_hydrolysis", default_hydrolysis), field="projection.autoclave_hydrolysis")
    per_week = raw.get("water_loss_per_week")
    per_week = parse_fraction(per_week, field="projection.water_loss_per_week") if per_week is not None else None
    total = raw.get("water_loss")
    total = parse_fraction(total, field="projection.water_loss", upper=_MAX_WATER_LOSS) if total is not None else None
    weeks = raw.get("weeks", 4)
    if isinstance(weeks, bool) or not isinstance(weeks, (int, float, str)):
        raise AmountError(f"weeks {weeks!r} must be a number", field="projection.weeks", hint="e.g. 4")
    try:
        weeks = float(weeks)
    except ValueError:
        raise AmountError(f"weeks {weeks!r} must be a number", field="projection.weeks", hint="e.g. 4") from None
    if not math.isfinite(weeks) or not 0 <= weeks <= 104:
        raise AmountError(f"weeks {weeks:g} must lie between 0 and 104", field="projection.weeks", hint="e.g. 4")
    s = ProjectionSettings(h, per_week, total, weeks)
    if s.total_water_loss > _MAX_WATER_LOSS:
        raise AmountError(f"{100 * s.total_water_loss:.0f} % of the water lost over {weeks:g} weeks leaves the "
                          "vessel dry", field="projection.water_loss_per_week", hint="check the rate and the weeks")
    return s


@dataclass
class Stage:
    label: str
    recipe: Recipe
    evaluation: Evaluation


@dataclass
class Projection:
    settings: ProjectionSettings
    stages: list[Stage] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        from mediaplan.medium.evaluate import finite

        out = []
        for st in self.stages:
            ev = st.evaluation
            sugars = {cid: (ev.component(cid).molality_mmol_per_kg if ev.component(cid) else 0.0)
                      for cid in ("sucrose", "glucose", "fructose")}
            out.append({"label": st.label, "osmolality_mosmol_per_kg": ev.osmolality_mosmol_per_kg,
                        "osmolality_ideal_mosmol_per_kg": ev.osmolality_ideal_mosmol_per_kg,
                        "effective_osmolality_mosmol_per_kg": ev.effective_osmolality_mosmol_per_kg,
                        "water_activity": ev.water_activity, "osmotic_potential_mpa": ev.osmotic_potential_mpa,
                        "freezing_point_depression_k": ev.freezing_point_depression_k,
                        "sugars_mmol_per_kg": sugars, "tonicity": ev.tonicity})
        return finite({"settings": self.settings.to_table(), "total_water_loss": self.settings.total_water_loss,
                        "stages": out, "notes": list(self.notes), "guidance": GUIDANCE})


def _molal_recipe(recipe: Recipe, molal: dict[str, float]) -> Recipe:
    """The same medium written as amounts per kg water (no base): exact under hydrolysis and water loss."""
    amounts = tuple((cid, Amount(m, "molal", f"{m:.6g} mol/kg")) for cid, m in molal.items() if m > 0)
    return Recipe(volume=recipe.volume, temperature=recipe.temperature, base=None, strength=1.0, amounts=amounts)


def project(recipe: Recipe, catalog: Catalog, settings: ProjectionSettings, *,
            cell_reference_mosmol: float | None = None,
            isotonic_tolerance: float | None = None) -> Projection:
    """As made, after autoclaving and after the culture period, each evaluated from scratch.

    Parameters
    ----------
    recipe : the medium as made
    catalog : component catalog (glucose and fructose are looked up in it)
    settings : fractions and weeks (see :class:`ProjectionSettings`)
    cell_reference_mosmol : cell sap osmolality [mOsm/kg] for tonicity in each stage, or None
    isotonic_tolerance : "isotonic" band [fraction of the cell reference]; None takes the engine's default
    """
    from mediaplan.medium.evaluate import ISOTONIC_TOLERANCE, evaluate

    if isotonic_tolerance is None:
        isotonic_tolerance = ISOTONIC_TOLERANCE
    kw = dict(cell_reference_mosmol=cell_reference_mosmol, isotonic_tolerance=isotonic_tolerance)
    made = evaluate(recipe, catalog, **kw)
    proj = Projection(settings, [Stage("as made", recipe, made)])
    molal = {c.id: c.molality_mmol_per_kg / 1000.0 for c in made.components}
    # --- autoclaving: sucrose -> glucose + fructose, one water used per sucrose hydrolysed
    h = settings.autoclave_hydrolysis
    sucrose_ids = [cid for cid in molal if any(sp == "sucrose" for sp, _ in catalog.components[cid].species)]
    split = sum(molal[cid] for cid in sucrose_ids) * h  # mol hydrolysed per kg of the first water
    if h > 0 and split > 0:
        glc = catalog.resolve("glucose").component.id
        fru = catalog.resolve("fructose").component.id
        for cid in sucrose_ids:
            molal[cid] *= 1.0 - h
        molal[glc] = molal.get(glc, 0.0) + split
        molal[fru] = molal.get(fru, 0.0) + split
        water_left = 1.0 - split * M_WATER  # kg water per kg first present
        molal = {cid: m / water_left for cid, m in molal.items()}
    elif h > 0:
        proj.notes.append("no sucrose in the medium: autoclaving changes nothing here")
    after_ac = _molal_recipe(recipe, molal)
    proj.stages.append(Stage("after autoclaving", after_ac, evaluate(after_ac, catalog, **kw)))
    # --- culture: water lost, solutes kept
    L = settings.total_water_loss
    later = _molal_recipe(recipe, {cid: m / (1.0 - L) for cid, m in molal.items()})
    proj.stages.append(Stage(f"after {settings.weeks:g} weeks", later, evaluate(later, catalog, **kw)))
    if L == 0:
        proj.notes.append("no water loss set: the last column equals the autoclaved medium")
    return proj


__all__ = ["ProjectionSettings", "ProjectionRecord", "Projection", "Stage", "project", "settings_from", "parse_fraction", "GUIDANCE",
           "HYDROLYSIS_TYPICAL", "HYDROLYSIS_CHARCOAL_OR_LOW_PH", "DEFAULT_HYDROLYSIS"]
