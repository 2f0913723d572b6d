"""mediaplan check and mediaplan diff on plans crafted in tmp_path."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main

HEAD = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n[plan]\ntitle = "{title}"\n'


def write(tmp_path, name, medium, title="Demo (invented)"):
    p = tmp_path / name
    p.write_text(HEAD.format(title=title) + medium, encoding="utf-8")
    return p


@pytest.fixture
def plans(tmp_path):
    a = write(tmp_path, "a.toml", '[medium]\nvolume = "1 L"\nbase = "ms1962"\n'
              '[medium.components]\nbap = "1 mg/L"\nagar = "8 g/L"\n', "Trial A")
    b = write(tmp_path, "b.toml", '[medium]\nvolume = "2 L"\nbase = "ms1962"\nstrength = 0.5\n'
              '[medium.components]\nbap = "2 mg/L"\nmannitol = "0.2 mol/kg"\n', "Trial B")
    bad_amount = write(tmp_path, "bad1.toml", '[medium]\n[medium.components]\nsucrose = "30 parsecs"\n')
    unknown = write(tmp_path, "bad2.toml", '[medium]\n[medium.components]\nunobtainium = "1 g/L"\n')
    broken = write(tmp_path, "bad3.toml", '[medium\n')
    return a, b, bad_amount, unknown, broken


def test_check_all_valid_exits_0(plans, capsys):
    a, b, *_ = plans
    assert main(["check", str(a), str(b)]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    assert [ln.split(": ")[1].split(" ")[0] for ln in lines] == ["ok", "ok"]


def test_check_reports_each_invalid_plan_on_one_line(plans, capsys):
    a, _, bad_amount, unknown, broken = plans
    assert main(["check", str(a), str(bad_amount), str(unknown), str(broken)]) == 1
    lines = capsys.readouterr().out.strip().splitlines()
    assert len(lines) == 4
    assert lines[0].startswith(f"{a}: ok")
    assert lines[1].startswith(f"{bad_amount}: invalid:") and "parsecs" in lines[1]
    assert lines[2].startswith(f"{unknown}: invalid:") and "unobtainium" in lines[2]
    assert lines[3].startswith(f"{broken}: invalid:") and "TOML" in lines[3]


def test_check_json_and_stamp(plans, capsys):
    a, *_ = plans
    assert main(["check", "--stamp", str(a)]) == 0
    assert "[provenance.components]" in a.read_text(encoding="utf-8")
    capsys.readouterr()
    assert main(["check", "--json", str(a)]) == 0
    (res,) = json.loads(capsys.readouterr().out)
    assert res["status"] == "ok" and res["differences"] == []
    # the figure check prints is the engine's evaluation of the same plan (value-tested in
    # tests/medium/test_figures.py and test_engine_published.py), to the last digit
    import mediaplan as mp

    assert res["osmolality_mosmol_per_kg"] == pytest.approx(mp.evaluate(mp.load_plan(a)).osmolality_mosmol_per_kg,
                                                            rel=1e-12)
    # MS + 30 g/L sucrose + 8 g/L agar: Kozai et al. report about -0.4 MPa for MS + sucrose (one figure:
    # -0.35 to -0.45 MPa, i.e. 142-182 mOsm/kg at 2.4716 MPa kg/osmol, R T rho_w at 25 °C)
    assert 142 < res["osmolality_mosmol_per_kg"] < 182


def test_check_strict_fails_on_catalog_differences(plans, tmp_path, capsys):
    a, *_ = plans
    main(["check", "--stamp", str(a)])
    text = a.read_text(encoding="utf-8")
    a.write_text(text.replace("bap = \"", "bap = \"", 1).replace(
        text.split("bap = ")[-1].split("\n")[0], '"0000000000000000"', 1), encoding="utf-8")
    capsys.readouterr()
    assert main(["check", str(a)]) == 0
    assert "catalog differs: component bap" in capsys.readouterr().out
    assert main(["check", "--strict", str(a)]) == 1


def test_diff_text_shows_components_settings_and_results(plans, capsys):
    a, b, *_ = plans
    assert main(["diff", str(a), str(b)]) == 1  # the plans differ: diff exits 1 (0 when they are the same)
    out = capsys.readouterr().out
    assert "~ strength: 1.0 → 0.5" in out and "~ volume: 1 L → 2 L" in out
    assert "+ D-mannitol (mannitol): 0.2 mol/kg" in out
    assert "- agar (agar): 8 g/L" in out
    assert "~ 6-benzylaminopurine (bap): 1 mg/L → 2 mg/L" in out
    assert "osmolality" in out and "→" in out


def test_diff_json_changes_add_up(plans, capsys):
    a, b, *_ = plans
    assert main(["diff", "--json", str(a), str(b)]) == 1  # the plans differ
    d = json.loads(capsys.readouterr().out)
    assert {c["id"]: c["change"] for c in d["components"]}["mannitol"] == "added"
    for r in d["results"]:
        assert r["b"] - r["a"] == pytest.approx(r["change"])
    osm = next(r for r in d["results"] if r["quantity"] == "osmolality_mosmol_per_kg")
    assert osm["change"] > 0  # 0.2 mol/kg mannitol outweighs halving the salts and sucrose


def test_diff_of_a_plan_with_itself_is_empty(plans, capsys):
    a, *_ = plans
    assert main(["diff", "--json", str(a), str(a)]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["same_medium"] and not d["components"] and not d["settings"]
