"""A minus sign typed as U+2212 or an en dash means the same as an ASCII hyphen in every signed option."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from mediaplan.cli.main import main

MINUSES = ["\u2212", "\u2013"]
PLAN = str(Path(__file__).resolve().parents[2] / "plans" / "shoot_multiplication.toml")


def _json(argv, capsys) -> dict:
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


@pytest.mark.parametrize("minus", MINUSES)
def test_series_around_and_step(minus, capsys):
    base = ["series", "--with", "mannitol", "--steps", "5", "--json"]
    ascii_ = _json([*base, "--around", "-0.8 MPa", "--step", "0.1 MPa"], capsys)
    typed = _json([*base, "--around", f"{minus}0.8 MPa", "--step", f"{minus}0.1 MPa"], capsys)
    assert typed["levels"] == ascii_["levels"]


@pytest.mark.parametrize("minus", MINUSES)
def test_a_temperature_below_zero_stays_below_zero(minus, capsys):
    # below the models' 0-40 °C range: refused, never computed at +5 °C
    assert main(["calc", "sucrose=30 g/L", "--temperature", f"{minus}5 degC", "--json"]) == 2
    err = capsys.readouterr().err
    assert "outside 0-40 °C" in err and "5 degC" in err


@pytest.mark.parametrize("minus", MINUSES)
def test_target_and_cells(minus, capsys):
    plan = ["solve", PLAN, "--with", "mannitol", "--json"]
    ascii_ = _json([*plan, "--target", "-0.8 MPa", "--cells", "-1.1 MPa"], capsys)
    typed = _json([*plan, "--target", f"{minus}0.8 MPa", "--cells", f"{minus}1.1 MPa"], capsys)
    assert typed == ascii_
