"""Amount, volume, temperature and target parsing."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.units import format_amount, parse_amount, parse_target, parse_temperature, parse_volume


@pytest.mark.parametrize(
    "text, kind, si",
    [
        ("30 g/L", "mass_conc", 30.0),
        ("1650 mg/L", "mass_conc", 1.65),
        ("3 % w/v", "mass_conc", 30.0),  # 1 % w/v = 1 g per 100 mL (definition)
        ("20 mM", "molar", 20.0),
        ("0.4 mol/L", "molar", 400.0),
        ("2 µM", "molar", 0.002),
        ("2 uM", "molar", 0.002),
        ("0.5 mol/kg", "molal", 0.5),
        ("500 mmol/kg", "molal", 0.5),
        ("150 g/kg", "mass_per_water", 0.15),
        ("50 mL/L", "vol_frac", 0.05),
        ("5 % v/v", "vol_frac", 0.05),
        ("0 g/L", "mass_conc", 0.0),
        ("30 g L-1", "mass_conc", 30.0),  # the forms below are the same units written otherwise
        ("30 g·L⁻¹", "mass_conc", 30.0),
        ("1650 mg l-1", "mass_conc", 1.65),
        ("0.4 mol L-1", "molar", 400.0),
        ("2 μM", "molar", 0.002),  # Greek mu
        ("0.5 mol kg⁻¹", "molal", 0.5),
    ],
)
def test_amount_forms(text, kind, si):
    a = parse_amount(text)
    assert a.kind == kind
    assert a.value == pytest.approx(si, rel=1e-12)
    assert a.text == text


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("30 g", "not a concentration"),
        ("5 MPa", "not a concentration"),
        ("-1 g/L", "negative"),
        ("nan g/L", "finite"),
        ("inf mM", "finite"),
        ("1e300 g/L", "far beyond"),
        ("1e-300 M", "vanishingly small"),
        ("abc", "cannot read"),
        ("3 %", "which percent"),
        ("30", "no unit"),
        ("30 blorps/L", "unknown unit"),
        ("", "cannot read"),
        ("30,5 g/L", "has a decimal comma (write 30.5)"),
        ("1,650 mg/L", "has a comma in its number"),
        ("30 g**9/L", "unknown unit 'g**9'"),
        ("30 g**9**9**9/L", "unknown unit 'g**9**9**9'"),
        ("−1 g/L", "negative"),  # U+2212
        ("30 " + "g" * 100_000, "characters long (at most 100)"),
    ],
)
def test_amount_errors_are_one_line(text, fragment):
    with pytest.raises(AmountError) as exc:
        parse_amount(text)
    msg = str(exc.value)
    assert fragment in msg
    assert "\n" not in msg


def test_format_round_trip_keeps_unit_family():
    for text in ("1650 mg/L", "20 mM", "0.5 mol/kg", "3 % w/v"):
        a = parse_amount(text)
        b = parse_amount(format_amount(a.value, a.kind, like=text))
        assert b.value == pytest.approx(a.value, rel=1e-3)
        assert b.kind == a.kind


def test_volume_temperature_target():
    assert parse_volume("500 mL") == pytest.approx(5e-4)
    assert parse_temperature("25 °C") == pytest.approx(298.15)
    assert parse_temperature("298.15 K") == pytest.approx(298.15)
    assert parse_temperature("4 degC") == pytest.approx(277.15)
    t = parse_target("-0.8 MPa")
    assert (t.kind, t.value) == ("potential", pytest.approx(-8e5))
    assert parse_target("-8 bar").value == pytest.approx(-8e5)
    t = parse_target("450 mOsm/kg")
    assert (t.kind, t.value) == ("osmolality", pytest.approx(0.45))
    for bad in ("0 L", "2 kg", "-1 L"):
        with pytest.raises(AmountError):
            parse_volume(bad)
    for bad in ("60 degC", "-5 degC", "25 MPa"):
        with pytest.raises(AmountError):
            parse_temperature(bad)
    for bad in ("0.8 MPa", "30 g/L", "-300 MPa"):
        with pytest.raises(AmountError):
            parse_target(bad)


def test_minus_signs_as_typed():
    """U+2212 (minus sign) and U+2013 (en dash) are minus signs, never dropped."""
    for text in ("−5 degC", "–5 °C", "-5 °C"):
        with pytest.raises(AmountError, match="outside 0-40"):
            parse_temperature(text)
    assert parse_temperature("25 C") == pytest.approx(298.15)  # 0 °C = 273.15 K (SI Brochure, BIPM 2019)
    for text in ("−0.8 MPa", "–0.8 MPa", "−8 bar", "−800 kPa"):
        t = parse_target(text)
        assert (t.kind, t.value) == ("potential", pytest.approx(-8e5))  # 1 bar = 1e5 Pa (SI Brochure table 8)


@settings(max_examples=1000, deadline=None)
@given(st.text(max_size=30))
def test_amount_parser_never_crashes(text):
    """Any text ends in an Amount with a finite, non-negative value or in a MediaplanError."""
    try:
        a = parse_amount(text)
    except MediaplanError:
        return
    assert math.isfinite(a.value) and a.value >= 0


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=1e-6, max_value=150), st.sampled_from(["mg/L", "g/L", "mM", "mol/kg", "uM"]))
def test_amount_parser_numbers(x, unit):
    a = parse_amount(f"{x!r} {unit}")
    assert a.value > 0
    # the value in the SI unit of its kind: kg/m^3 (= g/L), mol/m^3 (= mM), mol/kg; exact scaling
    kind, factor = {"mg/L": ("mass_conc", 1e-3), "g/L": ("mass_conc", 1.0), "mM": ("molar", 1.0),
                    "mol/kg": ("molal", 1.0), "uM": ("molar", 1e-3)}[unit]
    assert a.kind == kind and a.value == pytest.approx(x * factor, rel=1e-12)
