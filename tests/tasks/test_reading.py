"""Osmometer readings against their plans: batches made with a known slip (the changed recipe re-evaluated,
plus instrument noise with a fixed seed) get the right verdict and the true slip among the first three;
a faithful batch is consistent; the slips' predictions are full re-evaluations; calibration; bad input."""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.medium.errors import AmountError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.reading import (
    Calibration,
    Instrument,
    _reading_of,
    check_reading,
    fit_calibration,
    parse_reading,
    predict,
    stock_groups,
)

# invented demo media (common practice compositions, no published figures)
MS_SUCROSE = (Recipe(base="ms1962").with_amount("sucrose", "30 g/L").with_amount("bap", "1 mg/L")
              .with_amount("agar", "7 g/L"))
WASH = (Recipe(volume="500 mL", temperature="22 degC").with_amount("mannitol", "0.5 mol/L")
        .with_amount("calcium_chloride_dihydrate", "10 mM").with_amount("mes", "3 mM"))
EPSOM = Recipe().with_amount("magnesium_sulfate_heptahydrate", "2.5 g/L").with_amount("sucrose", "10 g/L")


def _measured(recipe: Recipe, catalog, instrument: Instrument, seed: int) -> float:
    """What the instrument shows for a batch made as ``recipe``: the full model plus one draw of its noise."""
    ev = evaluate(recipe, catalog)
    true = ev.osmometer_mosmol_per_kg if instrument.kind == "freezing-point" else ev.osmolality_mosmol_per_kg
    return float(true + np.random.default_rng(seed).normal(0.0, instrument.sd(true)))


def _scaled(recipe: Recipe, f: float) -> Recipe:
    """The whole batch at ``f`` times the plan (made up to 1/f of the volume)."""
    out = recipe.with_settings(strength=recipe.strength * f)
    for cid, a in recipe.amounts:
        out = out.with_amount(cid, a.scaled(f))
    return out


# (name, plan, batch as made, expected verdict, kind of the true slip, its component ids)
CASES = [
    ("sucrose forgotten", MS_SUCROSE, MS_SUCROSE.with_amount("sucrose", "0 g/L"), "lower", "omitted", ["sucrose"]),
    ("mannitol a tenth", WASH, WASH.with_amount("mannitol", "0.05 mol/L"), "lower", "amount", ["mannitol"]),
    ("calcium chloride ten times", WASH, WASH.with_amount("calcium_chloride_dihydrate", "100 mM"), "higher",
     "amount", ["calcium_chloride_dihydrate"]),
    ("KNO3 twice", MS_SUCROSE, MS_SUCROSE.with_amount("potassium_nitrate", "3800 mg/L"), "higher", "amount",
     ["potassium_nitrate"]),
    ("anhydrous for the heptahydrate", EPSOM,
     EPSOM.without("magnesium_sulfate_heptahydrate").with_amount("magnesium_sulfate_anhydrous", "2.5 g/L"),
     "higher", "hydrate", ["magnesium_sulfate_heptahydrate", "magnesium_sulfate_anhydrous"]),
    ("made up to 1.25 times the volume", WASH, _scaled(WASH, 0.8), "lower", "strength", []),
    ("glucose from a wrong bottle", WASH, WASH.with_amount("glucose", "36 g/L"), "higher",
     "unlisted_solute", []),
]


@pytest.mark.parametrize("seed,name,plan,made,verdict,kind,ids", [(i, *c) for i, c in enumerate(CASES)],
                         ids=[c[0] for c in CASES])
def test_known_slip_is_named(catalog, seed, name, plan, made, verdict, kind, ids):
    inst = Instrument()
    reading = _measured(made, catalog, inst, seed)
    res = check_reading(plan, catalog, reading, instrument=inst)
    assert res.verdict == verdict
    top = [(e.kind, e.component_ids) for e in res.explanations[:3]]
    assert (kind, ids) in top, top
    assert not res.none_explains


def test_stock_left_out_is_named(catalog):
    groups = dict(stock_groups(MS_SUCROSE, catalog))
    macro = next(ids for label, ids in groups.items() if "macro" in label.lower())
    assert {"potassium_nitrate", "ammonium_nitrate"} <= set(macro)
    made = MS_SUCROSE
    for cid in macro:
        made = made.with_amount(cid, "0 g/L")
    res = check_reading(MS_SUCROSE, catalog, _measured(made, catalog, Instrument(), 3))
    assert res.verdict == "lower"
    assert ("stock", macro) in [(e.kind, e.component_ids) for e in res.explanations[:3]]


@pytest.mark.parametrize("recipe", [MS_SUCROSE, WASH, EPSOM], ids=["ms", "wash", "epsom"])
@pytest.mark.parametrize("kind", ["freezing-point", "vapour-pressure"])
def test_faithful_batch_is_consistent(catalog, recipe, kind):
    inst = Instrument(kind, chamber_temperature_k=298.15 if kind == "vapour-pressure" else None)
    at = recipe.with_settings(temperature="25 degC") if kind == "vapour-pressure" else recipe
    for seed in (14, 15):
        res = check_reading(recipe, catalog, _measured(at, catalog, inst, seed), instrument=inst)
        assert res.verdict == "consistent"
        assert res.explanations == []
        lo, hi = res.interval_mosmol_per_kg
        assert lo < res.predicted_mosmol_per_kg < hi


def test_prediction_is_the_evaluation(catalog):
    ev = evaluate(MS_SUCROSE, catalog)
    pred = predict(MS_SUCROSE, catalog, Instrument())
    assert pred.value == ev.osmometer_mosmol_per_kg
    vp = predict(MS_SUCROSE, catalog, Instrument("vapour-pressure", chamber_temperature_k=310.15))
    assert vp.value == evaluate(MS_SUCROSE.with_settings(temperature="37 degC"), catalog).osmolality_mosmol_per_kg
    # the batched path of the slips gives the evaluation's figure for the unchanged recipe
    lines = MS_SUCROSE.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], MS_SUCROSE.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    assert float(_reading_of(model, n, b, "freezing-point")[0]) == pytest.approx(ev.osmometer_mosmol_per_kg,
                                                                                 rel=1e-10)


def test_slips_are_full_re_evaluations(catalog):
    """Each enumerated slip's prediction is the osmometer figure of the changed recipe (to the ZSR solver's
    tolerance)."""
    res = check_reading(MS_SUCROSE, catalog, 20.0, explain_always=True)
    by = {(e.kind, tuple(e.component_ids), e.factor): e.predicted_mosmol_per_kg for e in
          check_reading(MS_SUCROSE, catalog, 400.0).explanations + res.explanations}
    assert res.verdict == "lower"
    made = {("omitted", ("sucrose",), None): MS_SUCROSE.with_amount("sucrose", "0 g/L"),
            ("amount", ("potassium_nitrate",), 10.0): MS_SUCROSE.with_amount("potassium_nitrate", "19000 mg/L")}
    for key, recipe in made.items():
        if key in by:
            assert by[key] == pytest.approx(evaluate(recipe, catalog).osmometer_mosmol_per_kg, rel=1e-9)


def test_no_single_slip_is_said(catalog):
    # 3x the plan: the whole-batch factor lies far from any volume slip, nothing else comes near
    res = check_reading(WASH, catalog, 4000.0)
    assert res.verdict == "higher"
    assert all(e.kind in ("strength", "unlisted_solute") or not e.explains for e in res.explanations)


def test_calibration_corrects_and_is_noted(catalog):
    # an instrument that reads 2 % high plus 3 mOsm/kg (invented drift)
    cal = fit_calibration("freezing-point", [(n, 3.0 + 1.02 * n) for n in (100.0, 290.0, 1000.0)],
                          date="2026-11-01")
    assert cal.slope == pytest.approx(1 / 1.02, rel=1e-9)
    assert cal.corrected(3.0 + 1.02 * 290.0) == pytest.approx(290.0, rel=1e-9)
    ev = evaluate(WASH, catalog)
    shown = 3.0 + 1.02 * ev.osmometer_mosmol_per_kg
    raw = check_reading(WASH, catalog, shown)
    fixed = check_reading(WASH, catalog, shown, calibration=cal)
    assert fixed.reading_mosmol_per_kg == pytest.approx(ev.osmometer_mosmol_per_kg, rel=1e-9)
    assert fixed.verdict == "consistent" and raw.verdict == "higher"
    assert any("calibration applied" in n for n in fixed.notes)
    one = fit_calibration("freezing-point", [(290.0, 294.0)])
    assert (one.offset_mosmol, one.slope) == (-4.0, 1.0)
    with pytest.raises(AmountError):
        fit_calibration("freezing-point", [(100.0, 300.0), (290.0, 100.0)])
    with pytest.raises(AmountError):
        check_reading(WASH, catalog, 500.0, instrument=Instrument("vapour-pressure"),
                      calibration=Calibration("freezing-point", 1.0, 1.0))


@pytest.mark.parametrize("text", ["-5 mOsm/kg", "nan mOsm/kg", "inf mOsm/kg", "182", "182 g/L", "", "9e9 mOsm/kg",
                                  "x" * 300])
def test_bad_readings_are_refused(text):
    with pytest.raises(AmountError) as err:
        parse_reading(text)
    assert err.value.field == "reading"
    assert "\n" not in str(err.value)


def test_reading_units():
    assert parse_reading("182 mOsm/kg") == pytest.approx(182.0)
    assert parse_reading("0.182 Osm/kg") == pytest.approx(182.0)
    assert math.isclose(parse_reading("0 mOsm/kg"), 0.0)
