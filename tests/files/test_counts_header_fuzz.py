"""Structured fuzzing of counts-file headers (and the level cells under them): the level column's name
and unit are built from the grammar's pieces, and the levels read are checked for their values.

Unit values from their definitions: 1 bar = 1e5 Pa, SI prefixes (SI Brochure, 9th ed., BIPM 2019, tables
7 and 8); 1 atm = 101325 Pa (10th CGPM 1954, Resolution 4); 1 Osm = 1000 mOsm (SI prefix). The counts
below are invented test inputs (40 cells a level), not measurements.
"""

from __future__ import annotations

import csv
import io
from datetime import timedelta

import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from mediaplan.files.counts import read_counts_csv
from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.units import UNIT_NAMES, convert, unit_dimension

FUZZ = settings(max_examples=60, deadline=timedelta(seconds=2))  # a read is milliseconds; 2 s catches a hang

COUNTS = [(1, 40), (8, 40), (20, 40), (33, 40), (39, 40)]  # invented
PRESSURE_MPA = {"MPa": 1.0, "kPa": 1e-3, "Pa": 1e-6, "bar": 0.1, "atm": 0.101325}
OSMOLALITY_MOSM = {"mOsm/kg": 1.0, "mosm/kg": 1.0, "mOsmol/kg": 1.0, "mOsm kg-1": 1.0, "mOsm kg⁻¹": 1.0,
                   "mOsm·kg⁻¹": 1.0, "Osm/kg": 1e3, "osmol/kg": 1e3, "osmol kg^-1": 1e3, "mOsm/g": 1e3}
NAMES = ["psi", "potential", "Ψ", "water potential", "level", "ψs", "osmolality", "tonicity"]
BRACKETS = [("(", ")"), ("[", "]"), (" (", ")"), ("(", " )"), ("( ", ")")]


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """The folder the examples write to; one read first, so that loading the catalog (a header that is
    not water_potential_mpa may name an osmoticum) happens before the deadline counts."""
    path = tmp_path_factory.mktemp("counts_fuzz")
    read_counts_csv(_write(path, ["psi (bar)", "plasmolysed", "total"], ["-4", "-7", "-10", "-13", "-16"]))
    return path


def _write(folder, header: list[str], levels: list[str]):
    """A counts file with ``header`` (the level column first) and one row per invented count."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for level, (pl, tot) in zip(levels, COUNTS, strict=True):
        w.writerow([level, pl, tot][: len(header)] + [""] * (len(header) - 3))
    path = folder / "counts.csv"
    path.write_text(buf.getvalue(), encoding="utf-8")
    return path


def _read(path):
    """The counts, or None when refused in one line naming the file (anything else fails the test)."""
    try:
        return read_counts_csv(path)
    except MediaplanError as exc:
        msg = str(exc)
        assert "\n" not in msg and "Traceback" not in msg and len(msg) < 800, msg
        assert exc.file == str(path), msg
        return None


def _minus(x: float, minus: str) -> str:
    return repr(x).replace("-", minus)


@FUZZ
@given(st.sampled_from(NAMES), st.sampled_from(BRACKETS), st.sampled_from(sorted(PRESSURE_MPA)),
       st.lists(st.floats(min_value=0.05, max_value=3.0), min_size=5, max_size=5, unique=True),
       st.sampled_from(["-", "\u2212"]))
@example("psi", ("(", ")"), "bar", [4.0, 7.0, 10.0, 13.0, 16.0], "-")  # as in tests/medium/test_unit_text.py
def test_a_potential_column_in_any_pressure_unit_reads_in_mpa(folder, name, brackets, unit, mpa, minus):
    """Levels written in ``unit`` are read as the same potentials in MPa; a minus sign U+2212 in a cell is
    refused (a cell is a plain number), never read as a positive level."""
    per_unit = PRESSURE_MPA[unit]
    cells = [repr(-v / per_unit) for v in mpa]
    header = [f"{name}{brackets[0]}{unit}{brackets[1]}", "plasmolysed", "total"]
    counts = _read(_write(folder, header, [c.replace("-", minus) for c in cells]))
    if minus != "-":
        assert counts is None
        return
    assert counts is not None, header
    assert counts.water_potential_mpa.tolist() == pytest.approx([-v for v in mpa], rel=1e-12)


@FUZZ
@given(st.sampled_from(NAMES), st.sampled_from(BRACKETS), st.sampled_from(sorted(OSMOLALITY_MOSM)),
       st.lists(st.floats(min_value=20.0, max_value=1500.0), min_size=5, max_size=5, unique=True))
def test_an_osmolality_column_in_any_unit_reads_as_mosmol_per_kg(folder, name, brackets, unit, mosm):
    per_unit = OSMOLALITY_MOSM[unit]
    plain = _read(_write(folder, ["osmolality_mosmol_per_kg", "plasmolysed", "total"], [repr(v) for v in mosm]))
    header = [f"{name}{brackets[0]}{unit}{brackets[1]}", "plasmolysed", "total"]
    counts = _read(_write(folder, header, [repr(v / per_unit) for v in mosm]))
    assert plain is not None and counts is not None, header
    assert counts.water_potential_mpa.tolist() == pytest.approx(plain.water_potential_mpa.tolist(), rel=1e-12)
    assert all(x < 0 for x in counts.water_potential_mpa)  # an osmolality is a negative potential


PIECES = [*sorted(UNIT_NAMES), "/", "*", "**", "^", "·", " ", "-", "\u2212", "\u2013", "(", ")", "[", "]", "%",
          "⁻¹", "²", "9", "-1", ",", "psi", "osmolality", "plasmolysed", "total", "water_potential_mpa", "_mm", "_m",
          "\u00a0", "\ufeff", "\"", "'"]


@settings(max_examples=120, deadline=timedelta(seconds=2))
@given(st.lists(st.sampled_from(PIECES), min_size=1, max_size=8).map("".join))
def test_any_level_header_reads_consistently_or_is_refused_in_one_line(folder, head):
    """Whatever the level column is called: one line naming the file, or levels that are what its unit
    says (a pressure unit in brackets converts as convert() does; anything read is a potential <= 0)."""
    cells = ["-4", "-7", "-10", "-13", "-16"]
    counts = _read(_write(folder, [head, "plasmolysed", "total"], cells))
    if counts is None:
        return
    assert all(x <= 0 for x in counts.water_potential_mpa)
    inner = head.strip()
    if inner.lower() == "water_potential_mpa":
        assert counts.water_potential_mpa.tolist() == [-4.0, -7.0, -10.0, -13.0, -16.0]
    elif sum(inner.count(b) for b in "([") == 1 and sum(inner.count(b) for b in ")]") == 1 and \
            inner[-1] in ")]" and inner.find("(") + inner.find("[") + 1 < len(inner) - 1:
        unit = inner[max(inner.find("("), inner.find("[")) + 1:-1].strip()
        try:
            kind = unit_dimension(unit)
        except MediaplanError:
            kind = None
        if kind == "pressure":
            expected = convert([-4.0, -7.0, -10.0, -13.0, -16.0], unit, "MPa")
            assert counts.water_potential_mpa.tolist() == pytest.approx(list(expected), rel=1e-12)


@FUZZ
@given(st.sampled_from(["-", "\u2212", "\u2013", "\u2012", "\uff0d"]), st.sampled_from(["", " ", "\u00a0"]),
       st.sampled_from(sorted(PRESSURE_MPA)))
def test_a_signed_unit_in_a_header_is_no_level_column(folder, minus, space, unit):
    """'psi (−bar)' names no unit the grammar reads: the file is refused for want of a level column, its
    levels are never read in bar with a sign turned round."""
    counts = _read(_write(folder, [f"psi ({minus}{space}{unit})", "plasmolysed", "total"],
                          ["-4", "-7", "-10", "-13", "-16"]))
    assert counts is None
