"""The strength scope a plan records: "salts" for a new recipe, "all" for a plan file that states none (its
numbers stay), recorded by the writer and the in-place editor, chosen on the command line."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import DEFAULT_STRENGTH_SCOPE, Recipe

# an invented half-strength plan as releases before the scope was recorded wrote it (common practice)
OLD = """# our rooting medium
[mediaplan]
format = "mediaplan-plan"
version = "1.0"

[plan]
title = "half MS"

[medium]
volume = "1 L"
temperature = "25 degC"
base = "ms1962"   # published
strength = 0.5
{scope}
[medium.components]
sucrose = "15 g/L"  # half the sugar, typed
"""


def _plan(tmp_path, scope: str | None, name="p.toml"):
    p = tmp_path / name
    p.write_text(OLD.format(scope=f'strength_scope = "{scope}"\n' if scope else ""), encoding="utf-8")
    return p


def _calc(argv, capsys) -> tuple[str, str]:
    assert main(["calc", *argv, "--json"]) == 0
    out = capsys.readouterr()
    return out.out, out.err


def _expected(catalog, scope: str) -> float:
    r = Recipe(base="ms1962", strength=0.5, strength_scope=scope).with_amount("sucrose", "15 g/L")
    return evaluate(r, catalog).osmolality_mosmol_per_kg


# (plan key, --strength-scope, scope used)
CASES = [
    (None, None, "all"),        # a plan that states none: what its author's release computed
    (None, "salts", "salts"),   # the command line chooses
    ("macro", None, "macro"),   # the plan's record
    ("macro", "all", "all"),    # the command line over the plan
    ("salts", None, "salts"),
]


@pytest.mark.parametrize(("key", "flag", "used"), CASES)
def test_the_scope_in_force_from_plan_and_command_line(tmp_path, capsys, catalog, key, flag, used):
    argv = ["--plan", str(_plan(tmp_path, key))] + (["--strength-scope", flag] if flag else [])
    out, _ = _calc(argv, capsys)
    assert json.loads(out)["osmolality_mosmol_per_kg"] == pytest.approx(_expected(catalog, used), rel=1e-12)


@pytest.mark.parametrize(("flag", "used"), [(None, "salts"), ("all", "all"), ("macro", "macro")])
def test_without_a_plan_a_new_recipe_scales_the_salts(capsys, catalog, flag, used):
    argv = ["--base", "ms1962", "--strength", "0.5", "sucrose=15 g/L"] + (["--strength-scope", flag] if flag else [])
    out, err = _calc(argv, capsys)
    assert json.loads(out)["osmolality_mosmol_per_kg"] == pytest.approx(_expected(catalog, used), rel=1e-12)
    assert "scales" in err  # the note that says how many lines the strength scaled stays


def test_the_python_api_recipe_scales_the_salts(catalog):
    assert Recipe().strength_scope == DEFAULT_STRENGTH_SCOPE == "salts"
    salts, every = _expected(catalog, "salts"), _expected(catalog, "all")
    assert salts > every  # the MS vitamins, inositol and glycine kept as published add osmoles
    r = Recipe(base="ms1962", strength=0.5).with_amount("sucrose", "15 g/L")
    assert evaluate(r, catalog).osmolality_mosmol_per_kg == salts


def test_an_old_plan_gives_the_same_json_bytes_as_one_stating_all(tmp_path, capsys):
    old, _ = _calc(["--plan", str(_plan(tmp_path, None, "old.toml"))], capsys)
    stated, _ = _calc(["--plan", str(_plan(tmp_path, "all", "stated.toml"))], capsys)
    assert old.replace("old.toml", "X") == stated.replace("stated.toml", "X")


@pytest.mark.parametrize("scope", ["all", "salts", "macro"])
@pytest.mark.parametrize("base", [None, "ms1962"])
def test_the_scope_round_trips_through_the_writer(catalog, scope, base):
    plan = planfile.Plan(recipe=Recipe(base=base, strength=0.5, strength_scope=scope,
                                       amounts=()).with_amount("sucrose", "15 g/L"))
    text = planfile.dumps(plan)
    back = planfile.loads(text, catalog=catalog)
    assert back.recipe.strength_scope == scope
    # the key is written only where the file's default would read otherwise
    assert ("strength_scope" in text) == (scope != ("all" if base else "salts"))


def test_the_editor_adds_and_removes_the_key_keeping_every_other_byte(tmp_path, catalog):
    path = _plan(tmp_path, None)
    before = path.read_text(encoding="utf-8")
    plan = planfile.read(path, catalog=catalog)
    assert plan.recipe.strength_scope == "all"
    planfile.write(plan.with_recipe(plan.recipe.with_settings(strength_scope="salts")), path, catalog=catalog)
    after = path.read_text(encoding="utf-8")
    assert after == before.replace("strength = 0.5\n", 'strength = 0.5\nstrength_scope = "salts"\n')
    again = planfile.read(path, catalog=catalog)
    assert again.recipe.strength_scope == "salts"
    planfile.write(again.with_recipe(again.recipe.with_settings(strength_scope="all")), path, catalog=catalog)
    assert path.read_text(encoding="utf-8") == before


@pytest.mark.parametrize("bad", ['"sugars"', "1", "true"])
def test_a_bad_scope_is_one_line_naming_the_line(tmp_path, capsys, bad):
    p = tmp_path / "bad.toml"
    p.write_text(OLD.format(scope=f"strength_scope = {bad}\n"), encoding="utf-8")
    assert main(["calc", "--plan", str(p)]) == 2
    err = capsys.readouterr().err
    assert f"{p}:14" in err and "strength_scope" in err and len(err.strip().splitlines()) == 1


def test_a_misspelt_scope_key_is_refused(tmp_path, capsys):
    p = tmp_path / "typo.toml"
    p.write_text(OLD.format(scope='strength_scop = "salts"\n'), encoding="utf-8")
    assert main(["calc", "--plan", str(p)]) == 2
    assert "strength_scope" in capsys.readouterr().err  # the nearest known name


@pytest.mark.parametrize("scope", ["all", "salts", "macro"])
def test_solve_lowers_the_strength_on_the_lines_of_the_scope(catalog, scope):
    from mediaplan.tasks.solve import solve_target

    r = Recipe(base="ms1962", strength_scope=scope).with_amount("sucrose", "30 g/L")
    red = solve_target(r, catalog, "-0.3 MPa", ["mannitol"]).reduction
    # the strength is rounded to 4 digits; the dilution is exact (ψ within 0.1 % of the target; common practice)
    assert red.strength_evaluation.osmotic_potential_mpa == pytest.approx(-0.3, rel=1e-3)
    assert red.dilution_evaluation.osmotic_potential_mpa == pytest.approx(-0.3, rel=1e-3)
    kept = {ln.component.id: ln.amount.value for ln in red.strength_recipe.lines(catalog) if not ln.scaled}
    assert kept["sucrose"] == pytest.approx(30.0)  # the typed 30 g/L stays (common practice)
