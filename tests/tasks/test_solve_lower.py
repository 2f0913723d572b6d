"""solve lowers an osmoticum the medium already holds before it speaks of dilution, and caps an addition at
the solubility of the colder of the culture and the plan's storage temperature, saying which."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.errors import InfeasibleError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.solve import solve_target

#: the solver's own round trip: the re-evaluated potential within 0.2 % of the target (tests/tasks/test_solve.py)
ROUND_TRIP = 0.002
#: a wash at 0.5 mol/L mannitol (common practice for protoplast work), about -1.3 MPa
WASH = Recipe().with_amount("mannitol", "0.5 mol/L")


@pytest.fixture(scope="module")
def lowered(catalog):
    return solve_target(WASH, catalog, "-0.6 MPa", ["mannitol"])


def test_a_wash_is_lowered_to_a_less_negative_target(catalog, lowered):
    assert evaluate(WASH, catalog).osmotic_potential_mpa < -0.6
    assert lowered.status == "added" and lowered.lowered == ["mannitol"]
    assert lowered.reduction is None
    (a,) = lowered.additions
    assert a.added_g_per_l < 0 and a.added_mol_per_l < 0
    assert lowered.evaluation.osmotic_potential_mpa == pytest.approx(-0.6, rel=ROUND_TRIP)
    # what is left is what the answer says: the start minus the removal
    assert a.total_mol_per_l == pytest.approx(0.5 + a.added_mol_per_l, rel=1e-3)
    assert "lower mannitol" in lowered.message and "dilut" not in lowered.message


def test_the_lowered_recipe_re_evaluates_from_its_own_text(catalog, lowered):
    again = Recipe().with_amount("mannitol", lowered.recipe.amount_of("mannitol").text)
    assert evaluate(again, catalog).osmotic_potential_mpa == pytest.approx(-0.6, rel=ROUND_TRIP)
    assert lowered.to_dict()["lowered"] == ["mannitol"]


def test_lowering_a_base_line_writes_an_override(catalog):
    """MS with its 30 g/L sucrose, asked for a potential between MS's salts alone and MS with sucrose."""
    ms = Recipe(base="ms1962")
    salts_only = evaluate(ms.with_amount("sucrose", "0 g/L"), catalog).osmotic_potential_mpa
    full = evaluate(ms, catalog).osmotic_potential_mpa
    target = (salts_only + full) / 2
    sol = solve_target(ms, catalog, f"{target:.4f} MPa", ["sucrose"])
    assert sol.lowered == ["sucrose"]
    assert 0 < sol.recipe.amount_of("sucrose").value < 30.0  # g/L in SI: kg/m^3
    assert sol.evaluation.osmotic_potential_mpa == pytest.approx(target, rel=ROUND_TRIP)


def test_when_even_none_of_it_is_enough_dilution_is_offered(catalog):
    """MS salts alone are near -0.2 MPa (the catalog's MS notes): no amount of mannitol reaches -0.1 MPa."""
    r = Recipe(base="ms1962").with_amount("mannitol", "10 g/L")
    sol = solve_target(r, catalog, "-0.1 MPa", ["mannitol"])
    assert sol.status == "too_concentrated" and sol.lowered == []
    assert "even without mannitol" in sol.message and sol.reduction is not None


def test_a_medium_without_the_osmoticum_is_not_lowered(catalog):
    sol = solve_target(Recipe(base="ms1962"), catalog, "-0.1 MPa", ["mannitol"])
    assert sol.status == "too_concentrated" and sol.lowered == []
    assert "even without" not in sol.message


def test_the_view_says_what_was_lowered(catalog, lowered):
    from mediaplan.views.solve import solution_text

    text = solution_text(lowered)
    assert "lowered: mannitol" in text


# ---- the solubility that caps an addition ------------------------------------------------------------

def test_a_plan_kept_at_4_C_is_not_offered_what_crystallises_there(catalog):
    """1.09 mol/kg mannitol dissolves at 25 °C (1.17 mol/kg, catalog table) but not at 4 °C (about
    0.59 mol/kg, rows from memory): a plan kept at 4 °C is refused, and the refusal names 4 °C and why."""
    m = 1.09
    target = evaluate(Recipe().with_amount("mannitol", f"{m} mol/kg"), catalog).osmotic_potential_mpa
    warm = solve_target(Recipe(), catalog, f"{target:.5f} MPa", ["mannitol"])
    assert warm.solubility_temperature_c == pytest.approx(25.0)
    assert warm.evaluation.component("mannitol").molality_mmol_per_kg == pytest.approx(m * 1000, rel=1e-3)
    with pytest.raises(InfeasibleError, match="at 4 °C, the stated storage temperature"):
        solve_target(Recipe(storage_temperature="4 degC"), catalog, f"{target:.5f} MPa", ["mannitol"])


def test_storage_warmer_than_the_culture_does_not_raise_the_cap(catalog):
    with pytest.raises(InfeasibleError, match="at 4 °C, the culture temperature"):
        solve_target(Recipe(temperature="4 degC", storage_temperature="20 degC"), catalog, "-2.5 MPa",
                     ["mannitol"])


def test_cli_solve_on_a_wash_lowers_it(tmp_path, catalog, capsys):
    path = tmp_path / "wash.toml"
    planfile.write(Plan(recipe=WASH, title="Wash (invented)"), path, catalog=catalog)
    assert main(["solve", str(path), "--target", "-0.6 MPa", "--with", "mannitol", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["status"] == "added" and d["lowered"] == ["mannitol"]
    assert d["additions"][0]["added_g_per_l"] < 0
    assert d["solubility_temperature_c"] == pytest.approx(25.0)


def test_cli_plan_kept_cold_caps_the_solve(tmp_path, catalog, capsys):
    """A plan that says it is kept at 4 °C: about -2.7 MPa (1.09 mol/kg mannitol) is refused in one line
    naming the temperature; the same plan without a storage temperature is solved."""
    warm, cold = tmp_path / "warm.toml", tmp_path / "cold.toml"
    planfile.write(Plan(recipe=Recipe(), title="Water (invented)"), warm, catalog=catalog)
    planfile.write(Plan(recipe=Recipe(storage_temperature="4 degC"), title="Water, cold (invented)"), cold,
                   catalog=catalog)
    assert main(["solve", str(warm), "--target", "-2.7 MPa", "--with", "mannitol"]) == 0
    capsys.readouterr()
    assert main(["solve", str(cold), "--target", "-2.7 MPa", "--with", "mannitol"]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "at 4 °C, the stated storage temperature" in err
