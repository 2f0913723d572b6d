"""The 95 % intervals on the command line: calc, solve, series and fit, in text and JSON."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from mediaplan.cli.main import main

PLANS = Path(__file__).resolve().parents[2] / "plans"
KEYS = ("osmolality_interval_mosmol_per_kg", "osmotic_potential_interval_mpa", "freezing_point_depression_interval_k",
        "osmometer_interval_mosmol_per_kg")


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_calc_json_gains_the_interval_keys_and_keeps_the_old_ones(capsys):
    code, out, _ = _run(capsys, "calc", "--base", "ms1962", "--json")
    d = json.loads(out)
    assert code == 0
    for key, value in zip(KEYS, ("osmolality_mosmol_per_kg", "osmotic_potential_mpa", "freezing_point_depression_k",
                                 "osmometer_mosmol_per_kg"), strict=True):
        lo, hi = d[key]
        assert lo < d[value] < hi, key
    u = d["uncertainty"]
    assert u["level"] == 0.95 and "linearised" in u["method"]
    assert {"volume", "balance", "temperature"} <= {s["source"] for s in u["sources"]}
    assert all(s["sd_osmolality_mosmol_per_kg"] >= 0 for s in u["sources"])


def test_calc_text_shows_plus_minus_and_the_sources_on_request(capsys):
    _, out, _ = _run(capsys, "calc", "--base", "ms1962")
    line = next(ln for ln in out.splitlines() if ln.strip().startswith("osmotic potential"))
    assert " ± " in line and line.split()[2].startswith("-0.4")
    assert "Uncertainty by source" not in out
    _, out, _ = _run(capsys, "calc", "--base", "ms1962", "--budget")
    assert "Uncertainty by source" in out and "model: electrolytes (Pitzer)" in out


def test_the_labs_tolerances_change_the_interval(capsys):
    _, out, _ = _run(capsys, "calc", "sucrose=30 g/L", "--json")
    wide = json.loads(out)["osmolality_interval_mosmol_per_kg"]
    _, out, _ = _run(capsys, "calc", "sucrose=30 g/L", "--volume-tolerance", "0.1 %", "--readability", "1 mg",
                     "--json")
    narrow = json.loads(out)["osmolality_interval_mosmol_per_kg"]
    assert narrow[1] - narrow[0] < wide[1] - wide[0]


def test_a_readability_that_is_no_mass_is_one_line_naming_the_flag(capsys):
    code, out, err = _run(capsys, "calc", "sucrose=30 g/L", "--readability", "2 mL")
    assert code == 2 and not out
    assert err.count("\n") == 1 and "--readability" in err and "Traceback" not in err


def test_csv_report_has_the_interval_columns(capsys):
    code, out, _ = _run(capsys, "calc", "--base", "ms1962", "--format", "csv")
    rows = list(csv.reader(io.StringIO(out)))
    header = rows.index(["quantity", "value", "unit", "95 % low", "95 % high"])
    psi = next(r for r in rows[header:] if r and r[0] == "osmotic potential")
    assert float(psi[3]) < float(psi[1]) < float(psi[4])


def test_solve_gives_the_range_of_the_addition(capsys):
    code, out, _ = _run(capsys, "solve", PLANS / "shoot_multiplication.toml", "--target", "-0.8 MPa", "--with",
                        "mannitol", "--json")
    d = json.loads(out)
    assert code == 0
    (r,) = d["addition_ranges"]
    lo, hi = r["interval_g_per_l"]
    assert lo < d["additions"][0]["added_g_per_l"] < hi
    lo, hi = d["result"]["osmotic_potential_interval_mpa"]
    assert lo < d["result"]["osmotic_potential_mpa"] < hi
    code, out, _ = _run(capsys, "solve", PLANS / "shoot_multiplication.toml", "--target", "-0.8 MPa", "--with",
                        "mannitol")
    assert "95 % range g/L" in out and " ± " in out


def test_series_levels_have_intervals(capsys):
    code, out, _ = _run(capsys, "series", "--from", "-0.4 MPa", "--to", "-1.2 MPa", "--steps", "3", "--with",
                        "mannitol", "--json")
    d = json.loads(out)
    for lv in d["levels"]:
        lo, hi = lv["water_potential_interval_mpa"]
        assert lo < lv["water_potential_mpa"] < hi
    _, out, _ = _run(capsys, "series", "--from", "-0.4 MPa", "--to", "-1.2 MPa", "--steps", "3", "--with", "mannitol")
    assert "± MPa" in out
    _, out, _ = _run(capsys, "series", "--from", "-0.4 MPa", "--to", "-1.2 MPa", "--steps", "3", "--with", "mannitol",
                     "--csv")
    assert "interval" not in out.splitlines()[0]  # the counting sheet keeps its columns


@pytest.mark.parametrize("argv", [[PLANS / "demo_plasmolysis_series.toml"],
                                  [PLANS / "demo_plasmolysis_counts.csv", "--with", "mannitol"]])
def test_fit_carries_the_levels_error_into_the_50_percent_point(capsys, argv):
    code, out, _ = _run(capsys, "fit", *argv, "--json")
    d = json.loads(out)
    assert code == 0 and d["level_sd_mpa"] > 0
    lo, hi = d["ci95_with_levels_mpa"]
    assert lo < d["ci95_mpa"][0] < d["water_potential_50_mpa"] < d["ci95_mpa"][1] < hi


def test_fit_without_the_osmoticum_says_the_levels_error_is_left_out(capsys):
    code, out, _ = _run(capsys, "fit", PLANS / "demo_plasmolysis_counts.csv", "--json")
    d = json.loads(out)
    assert d["ci95_with_levels_mpa"] is None and any("not included" in n for n in d["notes"])
