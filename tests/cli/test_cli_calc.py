"""The calc command: text, JSON contract, report formats, notes."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli import main as cli


def run(capsys, *argv):
    code = cli.main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_contract(capsys):
    code, out, err = run(capsys, "calc", "--plan", "plans/shoot_multiplication.toml", "--json")
    assert code == 0
    d = json.loads(out)
    for key in ("osmolality_mosmol_per_kg", "osmolality_ideal_mosmol_per_kg", "water_activity",
                "osmotic_potential_mpa", "freezing_point_depression_k", "temperature_c", "components", "warnings"):
        assert key in d
    for c in d["components"]:
        assert {"id", "molality_mmol_per_kg", "osmolality_mosmol_per_kg"} <= set(c)
    assert d["temperature_c"] == pytest.approx(25.0)


def test_inline_amounts_and_alias_note(capsys):
    code, out, err = run(capsys, "calc", "calcium chloride=440 mg/L", "sucrose=30 g/L")
    assert code == 0
    assert "note:" in err and "calcium_chloride_dihydrate" in err  # says which form it chose
    assert "osmolality" in out


def test_text_names_both_values(capsys):
    code, out, _ = run(capsys, "calc", "--base", "ms1962", "--strength", "0.5")
    assert code == 0
    assert "van't Hoff" in out and "MPa" in out and "0.5" in out


@pytest.mark.parametrize("fmt, marker", [("md", "# "), ("csv", ","), ("html", "<table")])
def test_report_formats(capsys, tmp_path, fmt, marker):
    out_file = tmp_path / f"r.{fmt}"
    code, _, err = run(capsys, "calc", "--plan", "plans/rooting_half_strength.toml", "--format", fmt,
                       "-o", str(out_file))
    assert code == 0 and "wrote" in err
    assert marker in out_file.read_text()


def test_facility_catalog_shadowing_is_reported(capsys, tmp_path):
    (tmp_path / "components").mkdir()
    (tmp_path / "components" / "local.yaml").write_text(
        "components:\n  - {id: sucrose, name: sucrose (local lot), group: carbon, molar_mass: 342.297,"
        " species: {sucrose: 1}, source: {molar_mass: local}}\n")
    code, _, err = run(capsys, "--catalog", str(tmp_path), "calc", "sucrose=30 g/L")
    assert code == 0
    assert "facility catalog entry in force" in err and "sucrose" in err


@pytest.mark.parametrize("argv, fragment", [
    (["calc", "sucrose=30 g"], "not a concentration"),
    (["calc", "sucrse=30 g/L"], "unknown component"),
    (["calc", "sucrose"], "is not ID=AMOUNT"),
    (["calc", "--base", "nosuch"], "unknown base medium"),
    (["calc", "--temperature", "90 degC", "sucrose=1 g/L"], "outside 0-40"),
    (["calc", "--strength", "-1", "--base", "ms1962"], "0 or more"),
])
def test_bad_input_one_line_exit_2(capsys, argv, fragment):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert fragment in err and err.count("\n") == 1 and "Traceback" not in err


def test_locate_names_the_user_folders(capsys, tmp_path, monkeypatch):
    monkeypatch.setenv("MEDIAPLAN_CONFIG_DIR", str(tmp_path / "cfg"))
    code, out, _ = run(capsys, "locate", "--json")
    d = json.loads(out)
    assert code == 0 and d["user_catalog"] == str(tmp_path / "cfg" / "catalog")
