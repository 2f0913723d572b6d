"""The class of hostile numbers, through every numeric option of every command.

Each option gets NaN, infinities, zero, a negative number, 1e308 and a negative number typed with the
minus sign U+2212. Every run ends in exactly one of two ways: exit 2 with one ``mediaplan:`` line on
standard error and nothing on standard output, or exit 0 with an answer the case checks (never exit 0
with a figure nobody checked). numpy RuntimeWarnings are errors here: none may reach a user's terminal.
"""

from __future__ import annotations

import contextlib
import functools
import io
import json
import math
import warnings

import pytest

from mediaplan.cli import main as cli_main
from mediaplan.thermo.potential import osmolality_from_potential

VALUES = ("nan", "inf", "-inf", "0", "-1", "1e308", "\u22121")
T25 = 298.15


@pytest.fixture(scope="module", autouse=True)
def one_parser():
    """Build the argument parser once for the module (building it costs most of a refused run)."""
    mp = pytest.MonkeyPatch()
    mp.setattr(cli_main, "build_parser", functools.cache(cli_main.build_parser))
    yield
    mp.undo()


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("numeric")
    plan = d / "plan.toml"
    plan.write_text('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "1 L"\n\n'
                    '[medium.components]\nsucrose = "30 g/L"\n', encoding="utf-8")
    counts = d / "counts.csv"
    # invented counts, a clean rise of plasmolysis with mannitol (common practice for a fit test)
    counts.write_text("mannitol_mol_per_kg,plasmolysed,total\n0.1,0,30\n0.2,2,30\n0.3,10,30\n0.4,22,30\n"
                      "0.5,29,30\n0.6,30,30\n", encoding="utf-8")
    return {"plan": str(plan), "counts": str(counts)}


def run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        try:
            rc = cli_main.main(argv)
        except SystemExit as exc:
            rc = exc.code
    return rc, out.getvalue(), err.getvalue()


def osm_of(mpa: float, T: float = T25) -> float:
    """[mOsm/kg] of a water potential [MPa] at T [K], the same conversion every command states it uses."""
    return float(osmolality_from_potential(mpa * 1e6, T)) * 1000.0


def same_figures(base_argv):
    """The answer equals the one without the option (options that only widen intervals)."""
    def check(d, files):
        rc, out, _ = run([a.format(**files) for a in base_argv])
        assert rc == 0
        return d["osmolality_mosmol_per_kg"] == json.loads(out)["osmolality_mosmol_per_kg"]
    return check


# id -> (argv with {v} for the value, {value: check of the JSON answer} for the values that may be accepted)
CASES = {
    "calc --strength": (["calc", "--base", "ms1962", "--strength={v}", "--strength-scope=all", "--json"], {
        "0": lambda d, f: d["strength"] == 0 and d["osmolality_mosmol_per_kg"] == 0 and d["components"] == []}),
    "calc --temperature": (["calc", "sucrose=30 g/L", "--temperature={v} degC", "--json"], {
        "0": lambda d, f: d["temperature_c"] == 0}),
    "calc ID=AMOUNT": (["calc", "sucrose={v} g/L", "mannitol=10 g/L", "--json"], {
        "0": lambda d, f: [c["id"] for c in d["components"]] == ["mannitol"]}),
    "calc --cells (potential)": (["calc", "sucrose=30 g/L", "--cells={v} MPa", "--json"], {
        "-1": lambda d, f: d["tonicity"]["reference_mosmol_per_kg"] == pytest.approx(osm_of(-1.0), rel=1e-12),
        "\u22121": lambda d, f: d["tonicity"]["reference_mosmol_per_kg"] == pytest.approx(osm_of(-1.0), rel=1e-12)}),
    "calc --cells (osmolality)": (["calc", "sucrose=30 g/L", "--cells={v} mOsm/kg", "--json"], {}),
    "calc --tolerance": (["calc", "sucrose=30 g/L", "--cells=-1 MPa", "--tolerance={v}", "--json"], {
        "0": lambda d, f: d["tonicity"]["tolerance"] == 0}),
    "calc --hydrolysis": (["calc", "sucrose=30 g/L", "--project", "--hydrolysis={v}", "--json"], {
        "0": lambda d, f: d["projection"]["stages"][1]["osmolality_mosmol_per_kg"]
        == d["projection"]["stages"][0]["osmolality_mosmol_per_kg"]}),
    "calc --water-loss": (["calc", "sucrose=30 g/L", "--project", "--water-loss={v}", "--json"], {
        "0": lambda d, f: d["projection"]["stages"][2]["osmolality_mosmol_per_kg"]
        == d["projection"]["stages"][1]["osmolality_mosmol_per_kg"]}),
    "calc --water-loss-per-week": (["calc", "sucrose=30 g/L", "--project", "--water-loss-per-week={v}", "--json"], {
        "0": lambda d, f: d["projection"]["stages"][2]["osmolality_mosmol_per_kg"]
        == d["projection"]["stages"][1]["osmolality_mosmol_per_kg"]}),
    "calc --weeks": (["calc", "sucrose=30 g/L", "--project", "--water-loss-per-week=0.02", "--weeks={v}", "--json"], {
        "0": lambda d, f: d["projection"]["settings"]["weeks"] == 0
        and d["projection"]["stages"][-1]["osmolality_mosmol_per_kg"]
        == d["projection"]["stages"][1]["osmolality_mosmol_per_kg"]}),
    "calc --readability": (["calc", "sucrose=30 g/L", "--readability={v} g", "--json"], {
        "0": same_figures(["calc", "sucrose=30 g/L", "--json"])}),
    "calc --volume-tolerance": (["calc", "sucrose=30 g/L", "--volume-tolerance={v}", "--json"], {
        "0": same_figures(["calc", "sucrose=30 g/L", "--json"])}),
    "solve --target": (["solve", "{plan}", "--target={v} MPa", "--with", "mannitol", "--json"], {
        "-1": lambda d, f: json.dumps(d).count("mannitol") > 0,
        "\u22121": lambda d, f: json.dumps(d).count("mannitol") > 0}),
    "solve --ratio": (["solve", "{plan}", "--target=-1 MPa", "--with", "mannitol", "--with", "sorbitol",
                       "--ratio={v}:1", "--json"], {
        "0": lambda d, f: d["target_potential_mpa"] == pytest.approx(-1.0, abs=1e-6)
        and "add 0 g/L mannitol" in d["message"]}),
    "solve --hold": (["solve", "{plan}", "--target=-1 MPa", "--with", "mannitol", "--with", "sorbitol",
                      "--hold", "mannitol={v} g/L", "--json"], {
        "0": lambda d, f: "sorbitol" in json.dumps(d)}),
    "solve --cells": (["solve", "{plan}", "--target", "isotonic", "--with", "mannitol", "--cells={v} MPa",
                       "--json"], {
        "-1": lambda d, f: "mannitol" in json.dumps(d),
        "\u22121": lambda d, f: "mannitol" in json.dumps(d)}),
    "series --from": (["series", "--with", "mannitol", "--from={v} MPa", "--to=-1.2 MPa", "--steps", "3", "--json"], {
        "-1": lambda d, f: d["levels"][0]["water_potential_mpa"] == pytest.approx(-1.0, abs=5e-4),
        "\u22121": lambda d, f: d["levels"][0]["water_potential_mpa"] == pytest.approx(-1.0, abs=5e-4)}),
    "series --to": (["series", "--with", "mannitol", "--from=-0.2 MPa", "--to={v} MPa", "--steps", "3", "--json"], {
        "-1": lambda d, f: d["levels"][-1]["water_potential_mpa"] == pytest.approx(-1.0, abs=5e-4),
        "\u22121": lambda d, f: d["levels"][-1]["water_potential_mpa"] == pytest.approx(-1.0, abs=5e-4)}),
    "series --step": (["series", "--with", "mannitol", "--around=-0.8 MPa", "--step={v} MPa", "--steps", "3",
                       "--json"], {}),
    "series --steps": (["series", "--with", "mannitol", "--from=-0.2 MPa", "--to=-1.2 MPa", "--steps={v}",
                        "--json"], {}),
    "series --volume": (["series", "--with", "mannitol", "--from=-0.2 MPa", "--to=-1.2 MPa", "--steps", "3",
                         "--volume={v} mL", "--json"], {}),
    "series --stock": (["series", "--with", "mannitol", "--from=-0.2 MPa", "--to=-1.2 MPa", "--steps", "3",
                        "--stock={v} mol/kg", "--json"], {}),
    "series --strength": (["series", "--base", "ms1962", "--strength={v}", "--with", "mannitol", "--from=-0.2 MPa",
                           "--to=-1.2 MPa", "--steps", "3", "--json"], {
        "0": lambda d, f: d["background_potential_mpa"] == 0 or d["background_potential_mpa"] is None
        or abs(d["background_potential_mpa"]) < 1e-12}),
    "series --temperature": (["series", "--with", "mannitol", "--from=-0.2 MPa", "--to=-1.2 MPa", "--steps", "3",
                              "--temperature={v} degC", "--json"], {
        "0": lambda d, f: d["temperature_c"] == 0}),
    "fit --temperature": (["fit", "{counts}", "--temperature={v} degC", "--json"], {
        "0": lambda d, f: d["temperature_c"] == 0}),
    "fit --strength": (["fit", "{counts}", "--base", "ms1962", "--strength={v}", "--strength-scope=all", "--json"], {
        "0": lambda d, f: run(["fit", f["counts"], "--json"])[1] and d["water_potential_50_mpa"]
        == pytest.approx(json.loads(run(["fit", f["counts"], "--json"])[1])["water_potential_50_mpa"], rel=1e-9)}),
    "prep --strength": (["prep", "--base", "ms1962", "sucrose=30 g/L", "--strength={v}", "--strength-scope=all",
                        "--json"], {
        "0": lambda d, f: [r["id"] for r in d["rows"]] == ["sucrose"]}),
    "prep --volume": (["prep", "--base", "ms1962", "--volume={v} L", "--json"], {}),
    "prep --stock-volume": (["prep", "--base", "ms1962", "--stocks", "--stock-volume={v} mL", "--json"], {}),
    "prep --factor": (["prep", "--base", "ms1962", "--stocks", "--factor", "micro={v}", "--json"], {}),
    "prep --ph": (["prep", "--base", "ms1962", "--ph={v}", "--json"], {
        "0": lambda d, f: d["ph"] == "0"}),
}


@pytest.mark.parametrize("value", VALUES, ids=["nan", "inf", "-inf", "0", "neg", "1e308", "u2212neg"])
@pytest.mark.parametrize("case", list(CASES))
def test_a_hostile_number_is_refused_in_one_line_or_answered_right(case, value, files):
    template, accepted = CASES[case]
    argv = [a.replace("{v}", value).format(**files) for a in template]
    rc, out, err = run(argv)
    if rc == 2:
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("mediaplan: "), err
        assert "unexpected error" not in err and out == ""
        assert "nan" not in lines[0].lower().replace(repr(value).strip("'").lower(), "") or value == "nan"
        return
    assert rc == 0, (rc, err)
    assert value in accepted, f"exit 0 for {value!r} with no checked answer: {out[:300]}"
    d = json.loads(out)
    assert accepted[value](d, files), out[:500]
    # whatever is printed is finite: no NaN and no infinity reach a figure
    assert "NaN" not in out and "Infinity" not in out
    assert all(math.isfinite(x) for x in _numbers(d))


def _numbers(obj):
    if isinstance(obj, bool):
        return
    if isinstance(obj, (int, float)):
        yield obj
    elif isinstance(obj, dict):
        for v in obj.values():
            yield from _numbers(v)
    elif isinstance(obj, list):
        for v in obj:
            yield from _numbers(v)
