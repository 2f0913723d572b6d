"""Numbers as people read them in every text view: no minus on zero, no exponent before %, no float noise."""

from __future__ import annotations

import re

import pytest

from mediaplan.cli.main import main
from mediaplan.views.safe_text import tidy_numbers
from mediaplan.views.table import Column, markdown_table, pairs_table, text_table

# (as formatted by a view, as shown) -- each case is the form itself, not a measured value (common practice)
CASES = [
    ("-0.0000 MPa", "0.0000 MPa"),  # pure water's potential (issue 12)
    ("\u22120.000 (\u22120.000 to \u22120.000) °C", "0.000 (0.000 to 0.000) °C"),
    ("-0", "0"),
    ("(-0.0000 MPa)", "(0.0000 MPa)"),
    ("1e+02 %", "100 %"),  # a 100 % share formatted with :.2g (issue 12)
    ("1e+06×", "1000000×"),
    ("0.30000000000000004", "0.3"),
    ("1.0000000000000002 L", "1 L"),  # volume_l float noise (issue 12)
    # left as they are: real values, ids and texts
    ("-0.05 MPa", "-0.05 MPa"),
    ("-0.0001", "-0.0001"),
    ("\u22120.4405 ± 0.0085", "\u22120.4405 ± 0.0085"),
    ("10.0 %", "10.0 %"),
    ("2.5e-05 %", "2.5e-05 %"),
    ("ms1962-0", "ms1962-0"),
    ("a-0.0", "a-0.0"),
    ("1e308 %", "1e308 %"),
    ("450 mOsm/kg", "450 mOsm/kg"),
]


@pytest.mark.parametrize("raw, shown", CASES)
def test_every_table_view_shows_the_number_as_read(raw, shown):
    assert tidy_numbers(raw) == shown
    assert text_table([Column("x")], [[raw]], header=False) == [shown]
    assert pairs_table([("value", raw)]) == [f"value  {shown}"]
    assert markdown_table(["x"], [[raw]])[-1] == f"| {shown} |"


@pytest.mark.parametrize("fmt", ["text", "md"])
def test_pure_water_prints_no_negative_zero(fmt, capsys, tmp_path):
    argv = ["calc", "agar=8 g/L"] + ([] if fmt == "text" else ["--format", "md", "-o", str(tmp_path / "r.md")])
    assert main(argv) == 0
    text = capsys.readouterr().out if fmt == "text" else (tmp_path / "r.md").read_text(encoding="utf-8")
    assert not re.search(r"(?<![\w.])[-\u2212]0(\.0+)?(?![\d.])", text), text
    assert "e+0" not in text
