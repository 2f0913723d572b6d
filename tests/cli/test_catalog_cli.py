"""mediaplan catalog search / show / check, including a facility folder."""

from __future__ import annotations

import json

import yaml

from mediaplan.cli.main import main


def test_search_lists_id_name_formula_group(capsys):
    assert main(["catalog", "search", "calcium chloride"]) == 0
    first = capsys.readouterr().out.splitlines()[0].split()
    assert first[0] == "calcium_chloride_dihydrate" and "CaCl2·2H2O" in first and first[-1] == "macro"


def test_search_nothing_found_exits_1(capsys):
    assert main(["catalog", "search", "zzzzqqq"]) == 1


def test_show_prints_fields_sources_and_hazard(capsys):
    assert main(["catalog", "show", "KNO3"]) == 0
    out = capsys.readouterr().out
    assert "potassium_nitrate" in out and "Oxidiser" in out and "sources:" in out and "molar_mass:" in out
    assert main(["catalog", "show", "--json", "ms1962"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["kind"] == "medium" and d["components"][0]["amount"] == "1650 mg/L"


def test_show_unknown_id_exits_2(capsys):
    assert main(["catalog", "show", "unobtainium"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_bundled_catalog_checks_clean(capsys):
    assert main(["catalog", "check"]) == 0
    assert "0 problem(s)" in capsys.readouterr().out


def _entry(**over):
    e = {"id": "house_salt", "name": "house salt (invented)", "formula": "NaCl", "group": "salt",
         "molar_mass": 58.44, "species": {"Na[+]": 1, "Cl[-]": 1}, "solubility": 36.0,
         "source": {"molar_mass": "IUPAC 2021 atomic weights"}}
    e.update(over)
    return e


def test_facility_numbers_without_source_are_reported(tmp_path, capsys):
    (tmp_path / "components").mkdir()
    (tmp_path / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [_entry()]}), encoding="utf-8")
    assert main(["catalog", "--catalog", str(tmp_path), "check"]) == 1
    out = capsys.readouterr().out
    assert "house_salt: solubility = 36 has no source" in out and "ours.yaml" in out


def test_malformed_facility_catalog_is_reported(tmp_path, capsys, monkeypatch):
    (tmp_path / "components").mkdir()
    (tmp_path / "components" / "ours.yaml").write_text(
        yaml.safe_dump({"components": [_entry(group="rocks")]}), encoding="utf-8")
    monkeypatch.setenv("MEDIAPLAN_CATALOG", str(tmp_path))
    assert main(["catalog", "check"]) == 1
    assert "unknown group 'rocks'" in capsys.readouterr().out
