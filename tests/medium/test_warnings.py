"""Evaluation warnings (mediaplan.medium.warnings): one function per check, run in a fixed order.

The media are test inputs chosen to cross the thresholds (amounts are not from a source); the wording of
each warning is pinned by the CLI and screen snapshot tests, the order and the trigger of each check here.
"""

from __future__ import annotations

import pytest

from mediaplan.medium import warnings as checks
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe

#: a cold medium that crosses nearly every threshold at once (cell reference 400 mOsm/kg)
EVERYTHING = (Recipe(base="b5_1968", temperature="5 degC").with_amount("peg6000", "100 g/L")
              .with_amount("nicotinic_acid", "20 g/L").with_amount("mannitol", "200 g/kg")
              .with_amount("CaCl2", "20 mM").with_amount("MgSO4", "20 mM"))


def _context(catalog, recipe: Recipe, **kw) -> checks.Context:
    ev = evaluate(recipe, catalog, **kw)
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    return checks.Context(recipe, catalog, lines, model, model.solve(n[None], b[None]), ev, recipe.temperature_k)


def test_every_check_runs_in_its_place_and_says_what_it_checks(catalog):
    ctx = _context(catalog, EVERYTHING, cell_reference_mosmol=400.0)
    expected = ["neutral_validity", "ideal_fallback", "peg_validity", "peg_mixture", "pitzer_default",
                "pitzer_range", "pitzer_temperature", "precipitation", "solubility", "unverified_amounts",
                "reflection_unknown", "density_estimate"]
    assert [c.__name__ for c in checks.CHECKS] == expected
    per_check = [check(ctx) for check in checks.CHECKS]
    assert all(per_check), [c.__name__ for c, w in zip(checks.CHECKS, per_check, strict=True) if not w]
    assert all(c.__doc__ and c.__doc__.strip() for c in checks.CHECKS)
    # evaluate() shows them check by check, in this order
    assert ctx.evaluation.warnings == [w for ws in per_check for w in ws]
    assert [w.code for w in ctx.evaluation.warnings] == [
        "validity", "ideal_fallback", "validity", "peg_mixture", "pitzer_default", "validity", "temperature",
        "precipitation", "solubility", "unverified", "reflection_unknown", "density_estimate"]


def test_a_plain_medium_at_25_C_raises_none(catalog):
    ev = evaluate(Recipe().with_amount("sucrose", "30 g/L").with_amount("KNO3", "1 g/L"), catalog)
    assert ev.warnings == []


@pytest.mark.parametrize("recipe, check, code, component", [
    # mannitol's Norrish fit holds to 1.0 mol/kg (catalog neutral.yaml); 250 g/kg is 1.37 mol/kg
    (Recipe().with_amount("mannitol", "250 g/kg"), checks.neutral_validity, "validity", "mannitol"),
    # and is above its solubility (21.6 g/100 g water): it will not all dissolve
    (Recipe().with_amount("mannitol", "250 g/kg"), checks.solubility, "solubility", "mannitol"),
    # PEG 8000 equation to 0.8 g/g water (Michel 1983)
    (Recipe().with_amount("peg8000", "900 g/kg"), checks.peg_validity, "validity", "peg8000"),
    # 25 °C Pitzer parameters more than 10.5 K away from 25 °C
    (Recipe(temperature="40 degC").with_amount("NH4NO3", "1 g/L"), checks.pitzer_temperature, "temperature", None),
])
def test_single_checks(catalog, recipe, check, code, component):
    out = check(_context(catalog, recipe))
    assert [(w.code, w.component) for w in out] == [(code, component)]


def test_thresholds_are_where_the_checks_say(catalog):
    """The solubility margin: 80 % of saturation warns, 75 % does not (mannitol, 25 °C saturation from the
    catalog's solubility; the plan keeps the medium at 25 °C, so the cold-storage check does not apply: it
    is tested in tests/medium/test_solubility.py)."""
    m_sat = catalog.components["mannitol"].saturation_molality
    assert checks.SOLUBILITY_MARGIN == 0.8
    kept_warm = Recipe(storage_temperature="25 degC")
    warn = _context(catalog, kept_warm.with_amount("mannitol", f"{0.85 * m_sat:.6g} mol/kg"))
    quiet = _context(catalog, kept_warm.with_amount("mannitol", f"{0.75 * m_sat:.6g} mol/kg"))
    assert [w.code for w in checks.solubility(warn)] == ["solubility"]
    assert checks.solubility(quiet) == []
