"""The Python API (mediaplan/api.py, reached as ``import mediaplan as mp``): each function gives the same
numbers as the command line's JSON for the same input, the package exports what ``__all__`` says, the
import stays cheap, and the README's "Python API" session runs as printed.

Amounts and targets below are ordinary inputs (the README's and the demo plans' own examples), not
expected values: every expected value is the command line's answer to the same question.
"""

from __future__ import annotations

import csv
import importlib.metadata
import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

import mediaplan
import mediaplan as mp
from mediaplan import api
from mediaplan.cli import main as cli

ROOT = Path(__file__).resolve().parents[1]
PLANS = ROOT / "plans"


def cli_json(capsys, *argv) -> dict:
    """The JSON a command prints (run in this process, as the CLI tests do)."""
    code = cli.main([str(a) for a in argv])
    out = capsys.readouterr()
    assert code in (0, 1), out.err
    return json.loads(out.out)


def sheet_dict(sheet) -> dict:
    """``PrepSheet.to_dict()`` as ``prep --json`` prints it (through JSON: tuples become lists)."""
    return json.loads(json.dumps(sheet.to_dict()))


# ---- the package's public names -----------------------------------------------------------------------
def test_all_is_complete_and_every_name_resolves():
    assert sorted(mediaplan.__all__) == sorted(api.__all__)
    for name in mediaplan.__all__:
        assert getattr(mediaplan, name) is getattr(api, name), name
    functions = ["load_catalog", "load_plan", "evaluate", "solve_target", "design_series", "fit_counts",
                 "prep_sheet"]
    for name in functions:
        assert callable(getattr(mp, name)) and getattr(mp, name).__doc__, name
    for name in ("Recipe", "Plan", "Evaluation", "Solution", "SeriesDesign", "PlasmolysisFit", "PrepSheet"):
        assert name in mediaplan.__all__
    assert set(mediaplan.__all__) <= set(dir(mediaplan))
    assert mediaplan.__version__ == importlib.metadata.version("mediaplan")


def test_unknown_names_and_subpackages():
    with pytest.raises(AttributeError, match="no attribute 'nothing_here'"):
        mediaplan.nothing_here  # noqa: B018
    from mediaplan import cli as cli_package  # a subpackage, not an API name

    assert cli_package.__name__ == "mediaplan.cli"


def test_import_is_cheap_and_the_api_loads_on_first_use(tmp_path):
    cache = tmp_path / "cache"
    code = (
        "import sys\n"
        "import mediaplan\n"
        "heavy = [m for m in ('numpy', 'pint', 'yaml', 'scipy', 'textual', 'rich', 'mediaplan.api') if m in sys.modules]\n"
        "assert not heavy, heavy\n"
        "from mediaplan import *\n"
        "missing = [n for n in mediaplan.__all__ if n not in globals()]\n"
        "assert not missing, missing\n"
        "assert 'mediaplan.api' in sys.modules\n"
        "ev = evaluate(Recipe().with_amount('sucrose', '30 g/L'))\n"
        "from mediaplan.medium import units\n"
        "print(units._CACHE_FOLDER)\n"
    )
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    env["MEDIAPLAN_CACHE_DIR"] = str(cache)
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=tmp_path, env=env)
    assert r.returncode == 0, r.stderr
    # the API chose the user's cache folder for the unit registry on first use, as the command line does
    assert Path(r.stdout.strip()) == cache / "pint"


# ---- each function against the command line's JSON ------------------------------------------------------
def test_readme_example_evaluates(capsys):
    ev = mp.evaluate(mp.Recipe(base="ms1962").with_amount("sucrose", "30 g/L"))
    d = cli_json(capsys, "calc", "--base", "ms1962", "sucrose=30 g/L", "--json")
    assert ev.osmotic_potential_mpa == d["osmotic_potential_mpa"]
    d.pop("notes"), d.pop("title")
    assert ev.to_dict() == d


def test_evaluate_a_plan_uses_its_cell_reference(capsys):
    plan = mp.load_plan(PLANS / "protoplast_wash.toml")
    ev = mp.evaluate(plan)
    d = cli_json(capsys, "calc", "--plan", PLANS / "protoplast_wash.toml", "--json")
    assert ev.tonicity is not None and d["tonicity"] is not None
    d.pop("notes"), d.pop("title")
    assert ev.to_dict() == d


def test_evaluate_with_cells_tolerance_and_temperature(capsys):
    recipe = mp.Recipe(base="ms1962", strength=0.5, temperature="22 degC").with_amount("KNO3", "1900 mg/L")
    ev = mp.evaluate(recipe, cells="-1.1 MPa", tolerance="10 %")
    d = cli_json(capsys, "calc", "--base", "ms1962", "--strength", "0.5", "--temperature", "22 degC",
                 "KNO3=1900 mg/L", "--cells", "-1.1 MPa", "--tolerance", "10 %", "--json")
    d.pop("notes"), d.pop("title")
    assert ev.to_dict() == d


def test_solve_target_one_osmoticum(capsys):
    plan = mp.load_plan(PLANS / "shoot_multiplication.toml")
    sol = mp.solve_target(plan, "-0.8 MPa", "mannitol")
    d = cli_json(capsys, "solve", PLANS / "shoot_multiplication.toml", "--target", "-0.8 MPa", "--with", "mannitol",
                 "--json")
    assert sol.status == d["status"] == "added"
    d.pop("written")
    assert sol.to_dict() == d


@pytest.mark.parametrize("hold", ["sucrose=20 g/L", {"sucrose": "20 g/L"}])
def test_solve_target_two_osmotica_with_one_held(capsys, hold):
    plan = mp.load_plan(PLANS / "shoot_multiplication.toml")
    sol = mp.solve_target(plan, "-1.0 MPa", ["sucrose", "mannitol"], hold=hold)
    d = cli_json(capsys, "solve", PLANS / "shoot_multiplication.toml", "--target", "-1.0 MPa", "--with", "sucrose",
                 "--with", "mannitol", "--hold", "sucrose=20 g/L", "--json")
    d.pop("written")
    assert sol.to_dict() == d


@pytest.mark.parametrize("ratio", ["1:1", [1, 1]])
def test_solve_target_in_a_ratio_from_a_recipe(capsys, ratio):
    recipe = mp.load_plan(PLANS / "shoot_multiplication.toml").recipe
    sol = mp.solve_target(recipe, "450 mOsm/kg", ["sorbitol", "mannitol"], ratio=ratio)
    d = cli_json(capsys, "solve", PLANS / "shoot_multiplication.toml", "--target", "450 mOsm/kg", "--with",
                 "sorbitol", "--with", "mannitol", "--ratio", "1:1", "--json")
    d.pop("written")
    assert sol.to_dict() == d


def test_solve_target_toward_the_cells(capsys):
    plan = mp.load_plan(PLANS / "protoplast_wash.toml")
    sol = mp.solve_target(plan, "isotonic+10%", "sorbitol")
    d = cli_json(capsys, "solve", PLANS / "protoplast_wash.toml", "--target", "isotonic+10%", "--with", "sorbitol",
                 "--json")
    d.pop("written")
    assert sol.to_dict() == d and d["matched"] == "effective_osmolality"


def test_design_series_between_two_levels_with_a_stock(capsys):
    design = mp.design_series("mannitol", first="-0.2 MPa", last="-1.6 MPa", steps=8, stock="1 mol/kg")
    d = cli_json(capsys, "series", "--from", "-0.2 MPa", "--to", "-1.6 MPa", "--steps", "8", "--with", "mannitol",
                 "--stock", "1 mol/kg", "--json")
    assert design.to_dict() == d
    assert design.volume_ml == pytest.approx(50.0)  # the command line's default level volume


def test_design_series_around_a_level_in_a_medium(capsys):
    design = mp.design_series("mannitol", around="-1.0 MPa", step="0.1 MPa", steps=9,
                              background=mp.Recipe(base="ms1962", strength=0.5), volume="100 mL")
    d = cli_json(capsys, "series", "--around", "-1.0 MPa", "--step", "0.1 MPa", "--steps", "9", "--with", "mannitol",
                 "--base", "ms1962", "--strength", "0.5", "--volume", "100 mL", "--json")
    assert design.to_dict() == d


def test_design_series_in_a_plan_keeps_its_volume(capsys):
    design = mp.design_series("sorbitol", first="700 mOsm/kg", last="900 mOsm/kg", steps=5,
                              background=mp.load_plan(PLANS / "protoplast_wash.toml"))
    d = cli_json(capsys, "series", "--plan", PLANS / "protoplast_wash.toml", "--from", "700 mOsm/kg", "--to",
                 "900 mOsm/kg", "--steps", "5", "--with", "sorbitol", "--json")
    assert design.to_dict() == d
    assert design.volume_ml == pytest.approx(500.0)  # the plan's own volume


def test_fit_counts_from_a_csv_file(capsys):
    fit = mp.fit_counts(PLANS / "demo_plasmolysis_counts.csv", "probit")
    d = cli_json(capsys, "fit", PLANS / "demo_plasmolysis_counts.csv", "--link", "probit", "--json")
    assert fit.to_dict() == d


def test_fit_counts_from_a_plan_file_and_a_plan(capsys):
    d = cli_json(capsys, "fit", PLANS / "demo_plasmolysis_series.toml", "--json")
    assert mp.fit_counts(str(PLANS / "demo_plasmolysis_series.toml")).to_dict() == d
    assert mp.fit_counts(mp.load_plan(PLANS / "demo_plasmolysis_series.toml")).to_dict() == d


def test_fit_counts_from_rows_matches_the_same_counts_in_a_file(capsys):
    with (PLANS / "demo_plasmolysis_counts.csv").open(encoding="utf-8") as fh:
        rows = [(float(r["water_potential_mpa"]), int(r["plasmolysed"]), int(r["total"]))
                for r in csv.DictReader(line for line in fh if not line.startswith("#"))]
    fit = mp.fit_counts(rows, "logit")
    d = cli_json(capsys, "fit", PLANS / "demo_plasmolysis_counts.csv", "--json")
    got = fit.to_dict()
    assert got.pop("source") == "counts given as rows" and d.pop("source") != got.get("source")
    assert got == d


def test_prep_sheet_with_stocks(capsys):
    sheet = mp.prep_sheet(mp.load_plan(PLANS / "rooting_half_strength.toml"), volume="2 L", stocks=True)
    d = cli_json(capsys, "prep", PLANS / "rooting_half_strength.toml", "--volume", "2 L", "--stocks", "--json")
    assert sheet_dict(sheet) == d
    assert sheet.stocks and sheet.title == d["title"]


@pytest.mark.parametrize("forms, factors", [
    ({"calcium_chloride_dihydrate": "calcium_chloride_anhydrous"}, {"micro": 1000}),
    (["calcium_chloride_dihydrate=calcium_chloride_anhydrous"], ["micro=1000"]),
])
def test_prep_sheet_of_a_recipe_with_forms_and_factors(capsys, forms, factors):
    recipe = mp.Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    sheet = mp.prep_sheet(recipe, volume="1 L", stocks=True, forms=forms, factors=factors, stock_volume="500 mL")
    d = cli_json(capsys, "prep", "--base", "ms1962", "sucrose=30 g/L", "--volume", "1 L", "--stocks", "--form",
                 "calcium_chloride_dihydrate=calcium_chloride_anhydrous", "--factor", "micro=1000",
                 "--stock-volume", "500 mL", "--json")
    assert sheet_dict(sheet) == d


# ---- catalogs ---------------------------------------------------------------------------------------
def _facility_folder(tmp_path: Path) -> Path:
    (tmp_path / "components").mkdir()
    (tmp_path / "components" / "local.yaml").write_text(
        "components:\n  - {id: sucrose, name: sucrose (local lot), group: carbon, molar_mass: 360.0,"
        " species: {sucrose: 1}, source: {molar_mass: invented test value}}\n", encoding="utf-8")
    return tmp_path


def test_facility_folders_from_the_environment_count_as_on_the_command_line(capsys, tmp_path, monkeypatch):
    monkeypatch.setenv("MEDIAPLAN_CATALOG", str(_facility_folder(tmp_path)))
    ev = mp.evaluate(mp.Recipe().with_amount("sucrose", "30 g/L"))
    d = cli_json(capsys, "calc", "sucrose=30 g/L", "--json")
    d.pop("notes"), d.pop("title")
    assert ev.to_dict() == d
    assert any("sucrose" in s for s in mp.load_catalog().shadowed)
    bundled = mp.load_catalog(environment=False)
    assert bundled.shadowed == [] and bundled.components["sucrose"].molar_mass != 360.0
    away = mp.evaluate(mp.Recipe().with_amount("sucrose", "30 g/L"), catalog=bundled)
    assert away.osmolality_mosmol_per_kg > ev.osmolality_mosmol_per_kg  # 30 g of a lighter molecule


def test_extra_folders_and_a_given_catalog(capsys, tmp_path):
    folder = _facility_folder(tmp_path)
    cat = mp.load_catalog(folder, environment=False)
    assert any("sucrose" in s for s in cat.shadowed)
    ev = mp.evaluate(mp.Recipe().with_amount("sucrose", "30 g/L"), catalog=cat)
    d = cli_json(capsys, "--catalog", folder, "calc", "sucrose=30 g/L", "--json")
    d.pop("notes"), d.pop("title")
    assert ev.to_dict() == d
    with pytest.raises(TypeError, match="load_catalog"):
        mp.evaluate(mp.Recipe(), catalog=str(folder))


# ---- errors in the API's own words ---------------------------------------------------------------------
@pytest.mark.parametrize("call, field", [
    (lambda: mp.design_series("mannitol", first="-0.2 MPa"), "series.first"),
    (lambda: mp.design_series("mannitol", around="-1 MPa"), "series.step"),
    (lambda: mp.design_series("mannitol", first="-0.2 MPa", last="-1 MPa", around="-1 MPa", step="0.1 MPa"),
     "series.first"),
    (lambda: mp.design_series("mannitol", around="-1 MPa", step="5 g/L"), "series.step"),
    (lambda: mp.solve_target(mp.Recipe(), "-0.8 MPa", ["sucrose", "mannitol"], ratio="one to one"), "ratio"),
    (lambda: mp.solve_target(mp.Recipe(), "-0.8 MPa", ["sucrose", "mannitol"], hold="sucrose"), "hold"),
    (lambda: mp.fit_counts([(-0.4, 0, 50, 1)]), "counts"),
    (lambda: mp.evaluate(mp.Recipe().with_amount("sucrose", "30 parsecs")), "sucrose"),
])
def test_errors_name_domain_fields(call, field):
    with pytest.raises(mp.MediaplanError) as info:
        call()
    assert info.value.field == field
    assert "--" not in str(info.value)  # no command-line flag in a Python error


def test_a_plan_without_series_cannot_be_fitted():
    with pytest.raises(mp.MediaplanError, match=r"no \[series\] table"):
        mp.fit_counts(mp.load_plan(PLANS / "shoot_multiplication.toml"))


# ---- the README's session ---------------------------------------------------------------------------
def readme_session() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = re.search(r"^## Python API\n(.*?)(?=^## )", text, flags=re.M | re.S)
    assert section, "README.md has no '## Python API' section"
    block = re.search(r"^```python\n(.*?)^```", section.group(1), flags=re.M | re.S)
    assert block, "the Python API section has no python code block"
    return block.group(1)


def test_readme_python_api_session_runs(monkeypatch, capsys):
    code = readme_session()
    for name in mediaplan.__all__:  # the section lists every public name
        assert f"`{name}`" in (ROOT / "README.md").read_text(encoding="utf-8").split("## Python API")[1]
    monkeypatch.chdir(ROOT)  # the session opens the demo plans by their paths in the repository
    exec(compile(code, "README.md (Python API)", "exec"), {"__name__": "__readme__"})
    assert capsys.readouterr().out.strip()
