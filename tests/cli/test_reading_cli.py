"""mediaplan reading and mediaplan osmometer: the JSON contract, exit codes, bad input in one line, --record
keeping every byte the author wrote, calibration in the user config, the facility report, check and diff."""

from __future__ import annotations

import json
import tomllib

import pytest

from mediaplan.cli.main import main
from mediaplan.files.catalog import get_catalog
from mediaplan.files.planfile import read
from mediaplan.medium.evaluate import evaluate

# an invented plan, with comments and odd spacing that a record must keep
PLAN = """[mediaplan]
format = "mediaplan-plan"
version = "1.0"

[plan]
title = "Wash for a demo batch (invented)"   # kept
notes = "invented scenario"

[medium]
volume = "500 mL"
temperature = "22 degC"

[medium.components]
# the osmoticum first
mannitol   = "0.5 mol/L"
"CaCl2.2H2O" = "10 mM"
"""

CONTRACT = {"predicted_mosmol_per_kg", "interval_mosmol_per_kg", "reading_mosmol_per_kg", "deviation_percent",
            "verdict", "instrument", "explanations"}
EXPLANATION = {"kind", "component_ids", "factor", "description", "predicted_mosmol_per_kg"}


@pytest.fixture
def plan(tmp_path):
    p = tmp_path / "wash.toml"
    p.write_bytes(PLAN.encode("utf-8"))
    return p


@pytest.fixture(scope="module")
def predicted():
    cat = get_catalog()
    from mediaplan.files.planfile import loads

    return evaluate(loads(PLAN, catalog=cat).recipe, cat).osmometer_mosmol_per_kg


def _json(capsys):
    return json.loads(capsys.readouterr().out)


def test_consistent_reading_exits_0_with_the_contract(plan, predicted, capsys):
    assert main(["reading", str(plan), f"{predicted:.1f} mOsm/kg", "--json"]) == 0
    d = _json(capsys)
    assert set(d) >= CONTRACT
    assert d["verdict"] == "consistent" and d["instrument"] == "freezing-point"
    assert d["predicted_mosmol_per_kg"] == pytest.approx(predicted, rel=1e-12)
    lo, hi = d["interval_mosmol_per_kg"]
    assert lo < predicted < hi
    assert d["explanations"] == []


def test_low_reading_exits_1_and_names_the_slips(plan, predicted, capsys):
    # mannitol at a tenth: the reading of that batch (full model, no noise)
    cat = get_catalog()
    made = read(plan, catalog=cat).recipe.with_amount("mannitol", "0.05 mol/L")
    value = evaluate(made, cat).osmometer_mosmol_per_kg
    assert main(["reading", str(plan), f"{value:.1f} mOsm/kg", "--json"]) == 1
    d = _json(capsys)
    assert d["verdict"] == "lower"
    assert d["deviation_percent"] == pytest.approx((value - predicted) / predicted * 100, abs=0.05)
    ex = d["explanations"]
    assert ex and all(set(e) >= EXPLANATION for e in ex)
    assert all(e["kind"] in ("omitted", "amount", "hydrate", "stock", "strength", "unlisted_solute") for e in ex)
    assert all(isinstance(e["component_ids"], list) for e in ex)
    assert ("amount", ["mannitol"], 0.1) in [(e["kind"], e["component_ids"], e["factor"]) for e in ex[:3]]


def test_text_output(plan, capsys):
    assert main(["reading", str(plan), "900 mOsm/kg"]) == 1
    out = capsys.readouterr().out
    assert "Verdict        higher" in out and "Predicted" in out and "95 % interval" in out


def test_vapour_pressure_at_its_chamber(plan, capsys):
    cat = get_catalog()
    at = read(plan, catalog=cat).recipe.with_settings(temperature="30 degC")
    value = evaluate(at, cat).osmolality_mosmol_per_kg
    assert main(["reading", str(plan), f"{value} mOsm/kg", "--instrument", "vapour-pressure", "--chamber", "30 degC",
                 "--json"]) == 0
    d = _json(capsys)
    assert d["instrument"] == "vapour-pressure" and d["chamber_temperature_c"] == pytest.approx(30.0)
    assert d["predicted_mosmol_per_kg"] == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("args,words", [
    (["-5 mOsm/kg"], "negative"),
    (["nan mOsm/kg"], "finite"),
    (["560"], "no unit"),
    (["560 g/L"], "not an osmolality"),
    (["560 mOsm/kg", "--chamber", "25 degC"], "--chamber"),
    (["560 mOsm/kg", "--instrument", "vapour-pressure", "--chamber", "90 degC"], "--chamber"),
    (["560 mOsm/kg", "--repeatability", "2 MPa"], "--repeatability"),
    (["560 mOsm/kg", "--operator", "someone"], "--record"),
    (["560 mOsm/kg", "--record", "--date", "5 Dec"], "--date"),
])
def test_bad_input_is_one_line_exit_2(plan, capsys, args, words):
    before = plan.read_bytes()
    assert main(["reading", str(plan), *args]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("mediaplan: ") and words in err
    assert plan.read_bytes() == before


def test_missing_plan_is_exit_2(tmp_path, capsys):
    assert main(["reading", str(tmp_path / "none.toml"), "300 mOsm/kg"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_record_appends_and_keeps_every_byte(plan, capsys):
    before = plan.read_bytes()
    assert main(["reading", str(plan), "570 mOsm/kg", "--record", "--operator", "demo", "--note", "batch 3 # one",
                 "--date", "2026-12-01"]) == 0
    once = plan.read_bytes()
    assert once.startswith(before)
    assert "reading recorded" in capsys.readouterr().err
    assert main(["reading", str(plan), "230 mOsm/kg", "--record", "--date", "2026-12-02", "--json"]) == 1
    twice = plan.read_bytes()
    assert twice.startswith(once)
    data = tomllib.loads(twice.decode())
    assert [r["value"] for r in data["readings"]] == ["570 mOsm/kg", "230 mOsm/kg"]
    assert data["readings"][0]["note"] == "batch 3 # one" and str(data["readings"][0]["date"]) == "2026-12-01"
    assert [r.value for r in read(plan).readings] == ["570 mOsm/kg", "230 mOsm/kg"]
    capsys.readouterr()
    assert main(["check", str(plan)]) == 0
    assert "2 readings recorded, last 2026-12-02: 230 mOsm/kg" in capsys.readouterr().out
    assert main(["check", str(plan), "--json"]) == 0
    assert [r["value"] for r in _json(capsys)[0]["readings"]] == ["570 mOsm/kg", "230 mOsm/kg"]


def test_a_misspelt_reading_key_is_named(plan, capsys):
    plan.write_text(PLAN + '\n[[readings]]\nvalue = "560 mOsm/kg"\ninstrumnet = "freezing-point"\n')
    assert main(["check", str(plan)]) == 1
    out = capsys.readouterr().out
    assert "unknown key instrumnet" in out and "instrument" in out


def test_diff_shows_readings(plan, tmp_path, capsys):
    other = tmp_path / "b.toml"
    other.write_text(PLAN)
    assert main(["reading", str(plan), "570 mOsm/kg", "--record", "--operator", "demo"]) == 0
    capsys.readouterr()
    main(["diff", str(plan), str(other)])
    out = capsys.readouterr().out
    assert "Osmometer readings recorded in" in out and "570 mOsm/kg" in out


def test_calibration_is_stored_and_applied(plan, predicted, capsys):
    # an instrument reading 10 mOsm/kg high (invented drift) on the usual standards (common practice)
    assert main(["osmometer", "calibrate", "100=110", "290=300", "1000=1010", "--date", "2026-11-01"]) == 0
    capsys.readouterr()
    shown = predicted + 10.0
    assert main(["reading", str(plan), f"{shown} mOsm/kg", "--json"]) == 0
    d = _json(capsys)
    assert d["reading_mosmol_per_kg"] == pytest.approx(predicted, abs=1e-6)
    assert d["displayed_mosmol_per_kg"] == pytest.approx(shown)
    assert any("calibration applied" in n for n in d["notes"])
    assert main(["reading", str(plan), f"{shown} mOsm/kg", "--raw", "--json"]) in (0, 1)
    assert _json(capsys)["reading_mosmol_per_kg"] == pytest.approx(shown)
    assert main(["osmometer", "forget"]) == 0
    assert main(["osmometer", "show"]) == 0
    assert "freezing-point: not calibrated" in capsys.readouterr().out


def test_bad_calibration_is_refused(capsys):
    assert main(["osmometer", "calibrate", "100=300", "290=100"]) == 2
    assert main(["osmometer", "calibrate", "290:300"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2 and all(e.startswith("mediaplan: ") for e in err)


@pytest.mark.parametrize("fmt,marks", [("md", ["| plan |", "consistent"]), ("csv", ["plan,date"]),
                                       ("html", ["<svg", "<table>", "measured (mOsm/kg)"])])
def test_facility_report(plan, tmp_path, capsys, fmt, marks):
    for value in ("565 mOsm/kg", "566 mOsm/kg", "300 mOsm/kg"):
        main(["reading", str(plan), value, "--record"])
    capsys.readouterr()
    out = tmp_path / f"report.{fmt}"
    assert main(["osmometer", "report", str(plan), "--format", fmt, "-o", str(out)]) == 0
    text = out.read_text()
    assert all(m in text for m in marks)
    assert text.count("565") >= 1 and text.count("lower") == 1


def test_api_gives_the_command_s_numbers(plan, capsys):
    from mediaplan import api

    assert main(["reading", str(plan), "300 mOsm/kg", "--json"]) == 1
    d = _json(capsys)
    assert api.check_reading(api.load_plan(plan), "300 mOsm/kg").to_dict() == d


def test_lab_repeatability_is_stored_and_used(plan, predicted, capsys):
    assert main(["reading", str(plan), f"{predicted} mOsm/kg", "--json"]) == 0
    default = _json(capsys)["repeatability_sd_mosmol_per_kg"]
    # freezing-point default: the larger of 2 mOsm/kg and 0.5 % (common practice)
    assert default == pytest.approx(max(2.0, 0.005 * predicted))
    assert main(["osmometer", "repeatability", "5 mOsm/kg"]) == 0  # an invented lab's figure
    assert main(["reading", str(plan), f"{predicted} mOsm/kg", "--json"]) == 0
    assert _json(capsys)["repeatability_sd_mosmol_per_kg"] == pytest.approx(5.0)
    assert main(["reading", str(plan), f"{predicted} mOsm/kg", "--repeatability", "1 mOsm/kg", "--json"]) == 0
    assert _json(capsys)["repeatability_sd_mosmol_per_kg"] == pytest.approx(max(1.0, 0.005 * predicted))
    assert main(["osmometer", "repeatability", "3 MPa"]) == 2


def test_a_plan_without_solutes(tmp_path, capsys):
    # pure water reads 0 (by definition); 12 mOsm/kg is an invented reading
    empty = tmp_path / "water.toml"
    empty.write_text('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n[medium]\nvolume = "1 L"\n')
    assert main(["reading", str(empty), "0 mOsm/kg"]) == 0
    assert main(["reading", str(empty), "12 mOsm/kg", "--record"]) == 1
    out = capsys.readouterr().out
    assert "Predicted      0.0 mOsm/kg" in out and "no single slip explains" in out
    assert main(["reading", str(empty), "12 mOsm/kg", "--json"]) == 1
    d = _json(capsys)
    assert d["deviation_percent"] is None and d["interval_mosmol_per_kg"][0] == 0.0
    assert main(["osmometer", "report", str(empty), "--json"]) == 0
    assert _json(capsys)[0]["deviation_percent"] is None
