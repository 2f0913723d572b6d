"""Unit text as people type it: one normalising step, our own grammar before pint, never a hang.

Values of units come from their definitions: SI prefixes, the litre (1 L = 1 dm³) and the bar
(1 bar = 1e5 Pa) from the SI Brochure, 9th ed. (BIPM 2019), tables 7 and 8; the kelvin-Celsius relation
(T/K = t/°C + 273.15) from its section 2.3.1; the standard atmosphere (101325 Pa) from the 10th CGPM
(1954), Resolution 4; the osmole (1 Osm = 1000 mOsm) is an SI-prefixed unit of our own registry.
"""

from __future__ import annotations

import faulthandler
import gc
import json
import math
import subprocess
import sys
import textwrap
import time

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from mediaplan.medium.errors import AmountError
from mediaplan.medium.units import (
    MAX_TEXT,
    MAX_UNIT,
    MEASURE_SI_UNIT,
    SI_UNIT,
    UNIT_NAMES,
    convert,
    measure,
    normalise,
    parse_amount,
    parse_fraction,
    parse_target,
    parse_temperature,
    parse_volume,
    registry,
    unit_dimension,
)

# ---- step 1: one normalising step --------------------------------------------------------------

NORMALISED = [
    ("−5 degC", "-5 degC"),  # U+2212 minus sign
    ("–5 degC", "-5 degC"),  # U+2013 en dash
    ("1.5e−3 M", "1.5e-3 M"),  # minus as the exponent's sign
    ("2 µM", "2 uM"),  # U+00B5 micro sign
    ("2 μM", "2 uM"),  # U+03BC Greek small mu
    ("30\u00a0g/L", "30 g/L"),  # no-break space
    ("30\u2009g/L", "30 g/L"),  # thin space
    ("30\u202fg/L", "30 g/L"),  # narrow no-break space
    ("  30 \t  g/L  ", "30 g/L"),
    ("30 g·L⁻¹", "30 g*L^-1"),  # middle dot, superscript minus and one
    ("30 g⋅L⁻¹", "30 g*L^-1"),  # dot operator
    ("500 cm³", "500 cm^3"),
    ("25 °C", "25 degC"),
    ("25°C", "25degC"),
    ("25 ° C", "25 degC"),
    ("25 ℃", "25 degC"),
    ("77 °F", "77 degF"),
    ("30,5 g/L", "30,5 g/L"),  # a comma is never made into anything: it is refused later
    ("1 650 mg/L", "1 650 mg/L"),
]


@pytest.mark.parametrize("text, expected", NORMALISED)
def test_normalising_step(text, expected):
    assert normalise(text) == expected


# ---- the table of spellings and what they mean ----------------------------------------------------

# (text, read as a temperature, kind, SI value in MEASURE_SI_UNIT[kind]); sources in the module docstring
SPELLINGS = [
    ("30 g/L", False, "mass_conc", 30.0),
    ("30 g/l", False, "mass_conc", 30.0),
    ("30 g L-1", False, "mass_conc", 30.0),
    ("30 g L^-1", False, "mass_conc", 30.0),
    ("30 g*L**-1", False, "mass_conc", 30.0),
    ("30 g·L⁻¹", False, "mass_conc", 30.0),
    ("30\u00a0g/L", False, "mass_conc", 30.0),
    ("30\u2009g/L", False, "mass_conc", 30.0),
    ("30\u202fg L-1", False, "mass_conc", 30.0),
    ("30g/L", False, "mass_conc", 30.0),
    ("30 grams/litre", False, "mass_conc", 30.0),
    ("30 kg m-3", False, "mass_conc", 30.0),
    ("1650 mg/L", False, "mass_conc", 1.65),
    ("1650 mg l-1", False, "mass_conc", 1.65),
    ("3 % w/v", False, "mass_conc", 30.0),  # 1 % w/v = 1 g per 100 mL (definition)
    ("3 %(w/v)", False, "mass_conc", 30.0),
    ("20 mM", False, "molar", 20.0),
    ("0.4 mol/L", False, "molar", 400.0),
    ("0.4 mol L-1", False, "molar", 400.0),
    ("2 µM", False, "molar", 0.002),
    ("2 μM", False, "molar", 0.002),
    ("2 uM", False, "molar", 0.002),
    ("2 µmol/L", False, "molar", 0.002),
    ("1.5e-3 M", False, "molar", 1.5),
    ("1.5e−3 M", False, "molar", 1.5),
    ("1.5E-3 M", False, "molar", 1.5),
    ("0.5 mol/kg", False, "molal", 0.5),
    ("0.5 mol kg-1", False, "molal", 0.5),
    ("500 mmol kg⁻¹", False, "molal", 0.5),
    ("150 g/kg", False, "mass_per_water", 0.15),
    ("150 g kg-1", False, "mass_per_water", 0.15),
    ("50 mL/L", False, "vol_frac", 0.05),
    ("50 ml l-1", False, "vol_frac", 0.05),
    ("5 % v/v", False, "vol_frac", 0.05),
    ("-0.8 MPa", False, "pressure", -8e5),
    ("−0.8 MPa", False, "pressure", -8e5),  # U+2212: the sign is kept
    ("–0.8 MPa", False, "pressure", -8e5),  # en dash
    ("−1.1 MPa", False, "pressure", -1.1e6),
    ("−8 bar", False, "pressure", -8e5),
    ("-800 kPa", False, "pressure", -8e5),
    ("-1 atm", False, "pressure", -101325.0),
    ("450 mOsm/kg", False, "osmolality", 0.45),
    ("450 mosm/kg", False, "osmolality", 0.45),
    ("450 mOsm kg⁻¹", False, "osmolality", 0.45),
    ("0.45 Osm/kg", False, "osmolality", 0.45),
    ("0.45 osmol kg-1", False, "osmolality", 0.45),
    ("2 L", False, "volume", 2e-3),
    ("500 mL", False, "volume", 5e-4),
    ("500 ml", False, "volume", 5e-4),
    ("500 cm³", False, "volume", 5e-4),
    ("0.5 dm3", False, "volume", 5e-4),
    ("250 µL", False, "volume", 2.5e-7),
    ("25 degC", False, "temperature", 298.15),
    ("25 °C", False, "temperature", 298.15),
    ("25°C", False, "temperature", 298.15),
    ("25 ℃", False, "temperature", 298.15),
    ("25 C", True, "temperature", 298.15),  # a bare C is Celsius only where the text is a temperature
    ("−5 degC", False, "temperature", 268.15),
    ("–5 °C", False, "temperature", 268.15),
    ("298.15 K", False, "temperature", 298.15),
    ("77 degF", False, "temperature", 298.15),  # (77 - 32) x 5/9 = 25 °C
    ("10 %", False, "fraction", 0.1),
]


@pytest.mark.parametrize("text, temperature, kind, si", SPELLINGS)
def test_spellings_and_their_meaning(text, temperature, kind, si):
    m = measure(text, temperature=temperature)
    assert (m.kind, m.value) == (kind, pytest.approx(si, rel=1e-12))


@pytest.mark.parametrize("text, temperature, kind, si", [s for s in SPELLINGS if s[2] in SI_UNIT])
def test_amount_spellings_read_alike_by_parse_amount(text, temperature, kind, si):
    a = parse_amount(text)
    assert (a.kind, a.value) == (kind, measure(text).value)
    assert a.text == " ".join(text.split())  # written back as the user wrote it


def test_signs_survive_every_entry_point():
    """The minus sign U+2212 (as word processors and mediaplan's own output write it) is a minus."""
    with pytest.raises(AmountError, match="outside 0-40"):
        parse_temperature("−5 degC")  # 268.15 K, not +5 °C
    assert parse_temperature("+5 °C") == pytest.approx(278.15)  # 0 °C = 273.15 K (SI Brochure 2019, 2.3.1)
    t = parse_target("−0.8 MPa")
    assert (t.kind, t.value, t.text) == ("potential", pytest.approx(-8e5), "-0.8 MPa")
    assert parse_target("−1.1 MPa").value == pytest.approx(-1.1e6)  # SI prefix M = 1e6
    with pytest.raises(AmountError, match="is negative"):
        parse_amount("−3 g/L")
    with pytest.raises(AmountError, match="must be more than zero"):
        parse_volume("−1 L")


def test_every_accepted_name_is_a_unit_pint_knows():
    for name, pint_name in UNIT_NAMES.items():
        assert registry().parse_units(pint_name) is not None, name


def test_unit_dimension_and_convert():
    assert unit_dimension("bar") == "pressure"
    assert unit_dimension("mOsm/kg") == "osmolality"
    assert unit_dimension("mOsm kg⁻¹") == "osmolality"
    assert unit_dimension("mM") == "molar"
    assert unit_dimension("g L-1") == "mass_conc"
    assert unit_dimension("g") == "other"
    assert convert(-8.0, "bar", "MPa") == pytest.approx(-0.8)  # 1 bar = 1e5 Pa
    assert convert(450.0, "mOsm/kg", "osmol/kg") == pytest.approx(0.45)
    assert convert(25.0, "°C", "K") == pytest.approx(298.15)
    with pytest.raises(AmountError, match="cannot be converted to MPa"):
        convert(1.0, "mM", "MPa")


def test_fractions():
    assert parse_fraction("10 %", field="projection.water_loss") == pytest.approx(0.1)
    assert parse_fraction("10\u00a0%", field="projection.water_loss") == pytest.approx(0.1)
    assert parse_fraction("0.1", field="projection.water_loss") == pytest.approx(0.1)
    assert parse_fraction(0.25, field="projection.water_loss") == 0.25
    for bad in ("−10 %", "10 g/L", "10,5 %", "9**9**9 %", True):
        with pytest.raises(AmountError):
            parse_fraction(bad, field="projection.water_loss")


def test_counts_file_header_units(tmp_path):
    from mediaplan.files.counts import read_counts_csv

    rows = "1,40\n8,40\n20,40\n33,40\n39,40\n".splitlines()  # invented counts

    def levels(header, values):
        p = tmp_path / "c.csv"
        p.write_text(f"{header},plasmolysed,total\n" + "".join(f"{v},{r}\n" for v, r in zip(values, rows, strict=True)),
                     encoding="utf-8")
        return read_counts_csv(p).water_potential_mpa

    bars = levels("psi (bar)", [-4, -7, -10, -13, -16])
    assert bars.tolist() == pytest.approx([-0.4, -0.7, -1.0, -1.3, -1.6], rel=1e-12)  # 1 bar = 0.1 MPa
    assert levels("psi (kPa)", [-400, -700, -1000, -1300, -1600]).tolist() == pytest.approx(bars.tolist(), rel=1e-12)
    osm = levels("osmolality (mOsm/kg)", [150, 250, 400, 520, 650])
    assert levels("osmolality (mOsm kg⁻¹)", [150, 250, 400, 520, 650]).tolist() == osm.tolist()
    assert levels("osmolality (Osm/kg)", [0.15, 0.25, 0.4, 0.52, 0.65]).tolist() == pytest.approx(osm.tolist(),
                                                                                                 rel=1e-12)


# ---- refusals, each in one line naming what was not understood -----------------------------------

_AMOUNT_UNITS = 'use units such as mg/L, g/L, mM, mol/L, mol/kg or "% w/v"'
_POWERS = "powers go from -3 to 3, written L-1, L^-1 or L⁻¹"

REFUSALS = [
    (parse_amount, "30,5 g/L", "amount '30,5 g/L' has a decimal comma (write 30.5)"),
    (parse_amount, "0,500 g/L", "amount '0,500 g/L' has a decimal comma (write 0.500)"),
    (parse_amount, "1,650 mg/L", "amount '1,650 mg/L' has a comma in its number (write 1650 with no separator, "
                                 "or 1.650 if the comma marks decimals)"),
    (parse_amount, "1 650 mg/L", "amount '1 650 mg/L' has separators in its number (write the number with no "
                                 "thousands separators and a point for decimals: 1650)"),
    (parse_amount, "1\u202f650 mg/L", "amount '1\\u202f650 mg/L' has separators in its number (write the "
                                      "number with no thousands separators and a point for decimals: 1650)"),
    (parse_amount, "1,650,000 mg/L", "amount '1,650,000 mg/L' has separators in its number (write the number "
                                     "with no thousands separators and a point for decimals: 1650000)"),
    (parse_amount, "1.650.000 mg/L", "amount '1.650.000 mg/L' has separators in its number (write the number "
                                     "with no thousands separators and a point for decimals)"),
    (parse_amount, "30 g**9/L", f"unknown unit 'g**9' in '30 g**9/L' ({_POWERS}; {_AMOUNT_UNITS})"),
    (parse_amount, "30 g**9**9**9/L", f"unknown unit 'g**9**9**9' in '30 g**9**9**9/L' ({_POWERS}; {_AMOUNT_UNITS})"),
    (parse_amount, "30 g L-4", f"unknown unit 'L-4' in '30 g L-4' ({_POWERS}; {_AMOUNT_UNITS})"),
    (parse_amount, "30 g/L/L", f"unknown unit 'g/L/L' in '30 g/L/L' (one '/' at most, as in mol/kg; {_AMOUNT_UNITS})"),
    (parse_amount, "30 mol/kg L", "unknown unit 'kg L' in '30 mol/kg L' (one unit after '/', as in mol/kg, or "
                                  f"powers, as in g L-1; {_AMOUNT_UNITS})"),
    (parse_amount, "30 g/L-1", f"unknown unit 'g/L-1' in '30 g/L-1' (write g/L or g L-1, not both; {_AMOUNT_UNITS})"),
    (parse_amount, "30 g/(L)", "unknown unit '(L)' in '30 g/(L)' (a unit is names joined by '/', '·', '*' or "
                               f"spaces; {_AMOUNT_UNITS})"),
    (parse_amount, "5–10 g/L", f"unknown unit '-10' in '5–10 g/L' ({_POWERS}; {_AMOUNT_UNITS})"),
    (parse_amount, "3 kg/xyz", f"unknown unit in '3 kg/xyz' ({_AMOUNT_UNITS})"),  # the amount dialog's wording
    (parse_amount, "1e1000 g/L", "the number of amount '1e1000 g/L' has an exponent of more than 3 digits (write "
                                 "it like 1.5e-3; a number this size is a typing mistake)"),
    (parse_amount, "30 " + "g" * 100_000, "amount text is 100003 characters long (at most 100) (write a number "
                                          'and a unit, e.g. "30 g/L", "20 mM" or "0.5 mol/kg")'),
    (parse_volume, "2 parsecs", "unknown unit 'parsecs' in volume '2 parsecs' (write it like \"2 L\" or \"500 mL\")"),
    (parse_volume, "9**9**9 L", f"unknown unit '**9**9' in volume '9**9**9 L' ({_POWERS}; write it like \"2 L\" "
                                'or "500 mL")'),
    (parse_temperature, "9**9**9 K", f"unknown unit '**9**9' in temperature '9**9**9 K' ({_POWERS}; write it like "
                                     '"25 degC", "25 °C" or "298.15 K")'),
    (parse_temperature, "−5 degC", "temperature '−5 degC' is outside 0-40 °C (the models hold for liquid media "
                                   "between 0 and 40 °C)"),
    (parse_target, "-9**9**9 MPa", f"unknown unit '**9**9' in target '-9**9**9 MPa' ({_POWERS}; write \"-0.8 MPa\", "
                                   '"-8 bar" or "450 mOsm/kg")'),
    (parse_target, "−0,8 MPa", "target '−0,8 MPa' has a decimal comma (write -0.8)"),
    (unit_dimension, "9**9**9 bar", f"unknown unit '9**9**9' in '9**9**9 bar' ({_POWERS}; use units such as MPa, "
                                    "bar, mOsm/kg, mM, mol/kg or g/L)"),
    (unit_dimension, "xyz", "unknown unit 'xyz' (use units such as MPa, bar, mOsm/kg, mM, mol/kg or g/L)"),
]


@pytest.mark.parametrize("parse, text, message", REFUSALS, ids=lambda v: repr(v)[:30] if isinstance(v, str) else None)
def test_refusals_are_one_exact_line(parse, text, message):
    with pytest.raises(AmountError) as exc:
        parse(text)
    assert str(exc.value) == message


def test_length_limits():
    at_limit = "30." + "0" * (MAX_TEXT - len("30. g/L")) + " g/L"
    assert len(at_limit) == MAX_TEXT and parse_amount(at_limit).value == pytest.approx(30.0)
    with pytest.raises(AmountError, match=f"is {MAX_TEXT + 1} characters long"):
        parse_amount("3" + at_limit)
    long_unit = "kg" + "*g" * ((MAX_UNIT - 2) // 2)  # kg*g*g*...*g: read, measures nothing we use
    assert len(long_unit) == MAX_UNIT and unit_dimension(long_unit) == "other"
    with pytest.raises(AmountError, match=f"unit text is {MAX_UNIT + 1} characters long"):
        unit_dimension(long_unit + "*")
    with pytest.raises(AmountError, match=f"the unit of amount .* is {MAX_UNIT + 2} characters long"):
        parse_amount(f"1 {long_unit}/L")


def test_a_refusal_names_its_field():
    with pytest.raises(AmountError) as exc:
        parse_amount("30,5 g/L", field="medium.components.sucrose")
    assert str(exc.value) == "medium.components.sucrose: amount '30,5 g/L' has a decimal comma (write 30.5)"


# ---- the fuzzer: every draw reads to a sane value or is refused in one line, fast -----------------

PARSE_BUDGET_S = 0.05  # CPU time per parse; a pint power evaluation or a 100 KB name takes seconds to hours

TOKENS = [*"0123456789", "-", "+", "\u2212", "\u2013", ".", ",", "e", "E", "*", "**", "^", "/", "·", "⁻", "¹",
          "²", "³", "⁻¹", " ", "  ", "\u00a0", "\u2009", "\u202f", "\t", "(", ")", "%", "°", "°C", "C", "nan", "inf",
          "w/v", "v/v", "µ", "μ", "xyz", "9**9**9", *sorted(UNIT_NAMES)]
_NAMES = sorted(UNIT_NAMES)


def _number_text(x: float, minus: str, fmt: str) -> str:
    return fmt.format(x).replace("-", minus)


numbers = st.builds(_number_text, st.floats(allow_nan=True, allow_infinity=True, width=32),
                    st.sampled_from(["-", "\u2212", "\u2013"]), st.sampled_from(["{!r}", "{:g}", "{:.3e}", "{:.2f}"]))
factors = st.builds(lambda n, p: n + p, st.sampled_from(_NAMES + ["C", "xyz", "%"]),
                    st.sampled_from(["", "-1", "^-1", "**-1", "⁻¹", "3", "³", "^2", "**9", "-4", "^-3"]))
units = st.builds(lambda parts, seps: "".join(p + s for p, s in zip(parts, seps, strict=False)).strip(),
                  st.lists(factors, min_size=1, max_size=4),
                  st.lists(st.sampled_from([" ", "*", "·", "/", " / ", "**", "\u00a0"]), min_size=4, max_size=4))
texts = st.one_of(
    st.lists(st.sampled_from(TOKENS), max_size=16).map("".join),
    st.builds(lambda n, sp, u: n + sp + u, numbers, st.sampled_from(["", " ", "\u202f"]), units),
    st.builds(lambda n, u: f"{n} {u}", numbers, st.sampled_from(["% w/v", "% v/v", "%", "%(w/v)", "% m/v"])),
)


def _within_budget(parse, text):
    """parse(text) -> its result, or None when refused with an AmountError in one line; in CPU budget
    (garbage collection, which a long fuzzing run triggers at random, is held off while timing)."""
    gc.disable()
    t0 = time.process_time()
    try:
        out = parse(text)
    except AmountError as exc:
        assert "\n" not in str(exc) and len(str(exc)) < 600
        out = None
    finally:
        spent = time.process_time() - t0
        gc.enable()
    assert spent < PARSE_BUDGET_S, (text, spent)
    return out


@pytest.fixture(scope="module")
def watchdog():
    """A regression that makes pint evaluate a power would hang the suite: end the worker instead."""
    for warm in ("1 g/L", "1 mM", "1 mol/kg", "-1 MPa", "1 mOsm/kg", "25 degC", "1 L"):
        measure(warm)
    faulthandler.dump_traceback_later(600, exit=True)
    yield
    faulthandler.cancel_dump_traceback_later()


@settings(max_examples=600, deadline=None)
@given(texts)
def test_fuzzed_text_parses_to_a_sane_value_or_one_line_error(watchdog, text):
    a = _within_budget(parse_amount, text)
    if a is not None:
        assert a.kind in SI_UNIT and math.isfinite(a.value) and a.value >= 0
    v = _within_budget(parse_volume, text)
    if v is not None:
        assert 1e-9 <= v <= 100.0
    t = _within_budget(parse_temperature, text)
    if t is not None:
        assert 273.15 <= t <= 313.15
    g = _within_budget(parse_target, text)
    if g is not None:
        assert (g.kind == "potential" and -20e6 <= g.value <= 0) or (g.kind == "osmolality" and 0 <= g.value <= 10)
    m = _within_budget(measure, text)
    if m is not None:
        assert m.kind in MEASURE_SI_UNIT and math.isfinite(m.value)
    f = _within_budget(lambda s: parse_fraction(s, field="projection.water_loss"), text)
    if f is not None:
        assert 0.0 <= f <= 1.0
    d = _within_budget(unit_dimension, text)
    if d is not None:
        assert d in MEASURE_SI_UNIT or d == "other"


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=-20.0, max_value=-1e-6), st.sampled_from(["-", "\u2212", "\u2013"]),
       st.sampled_from([" ", "\u00a0", "\u2009", "\u202f"]))
def test_negative_potentials_keep_their_sign_whatever_the_minus(x, minus, space):
    t = parse_target(f"{x!r}".replace("-", minus) + space + "MPa")
    assert t.value == pytest.approx(x * 1e6, rel=1e-12)  # SI prefix M = 1e6


# ---- 100 KB units and pint powers, from every entry point, in a child process with a timeout ------

HANG_FORMS = {
    "amount": ["30 g**9**9**9/L", "9**9**9 g/L", "30 " + "g" * 100_000 + "/L", "30 g/" + "L" * 100_000],
    "volume": ["9**9**9 L", "2 " + "L" * 100_000],
    "temperature": ["9**9**9 K", "25 " + "K" * 100_000],
    "target": ["-9**9**9 MPa", "-0.8 " + "M" * 100_000 + "Pa"],
    "unit": ["9**9**9 bar", "bar**9**9**9", "b" * 100_000],
}

_CHILD = textwrap.dedent("""
    import json, sys, time
    from pathlib import Path
    from mediaplan.medium import units
    from mediaplan.medium.errors import MediaplanError
    from mediaplan.files.counts import read_counts_csv
    from mediaplan.files.catalog import load_catalog, bundled_folder

    forms = json.loads(sys.stdin.read())
    folder = Path(sys.argv[1])
    from mediaplan.files.catalog import get_catalog
    get_catalog()  # loaded once, as the counts reader does for named columns; not part of what is timed
    calls = []
    for kind, texts in forms.items():
        for text in texts:
            if kind == "amount":
                calls.append((kind, lambda t=text: units.parse_amount(t)))
            elif kind == "volume":
                calls.append((kind, lambda t=text: units.parse_volume(t)))
            elif kind == "temperature":
                calls.append((kind, lambda t=text: units.parse_temperature(t)))
            elif kind == "target":
                calls.append((kind, lambda t=text: units.parse_target(t)))
            else:
                calls.append((kind, lambda t=text: units.unit_dimension(t)))
                calls.append(("convert", lambda t=text: units.convert(1.0, t, "MPa")))
                csv = folder / f"counts{len(calls)}.csv"
                csv.write_text(f"psi ({text}),plasmolysed,total\\n-0.4,1,40\\n-0.8,20,40\\n-1.2,39,40\\n")
                calls.append(("csv header", lambda p=csv: read_counts_csv(p)))
    medium = folder / "catalog" / "media"
    medium.mkdir(parents=True)
    (medium / "testmed.yaml").write_text('id: testmed\\nname: test medium\\ncitation: "none"\\ncomponents:\\n'
                                         '  - {component: sucrose, amount: "30 g**9**9**9/L"}\\n')
    calls.append(("catalog medium", lambda: load_catalog([bundled_folder(), folder / "catalog"])))
    out = []
    for kind, call in calls:
        t0 = time.process_time()
        try:
            call()
            message = None
        except MediaplanError as exc:
            message = str(exc)
        out.append([kind, message, time.process_time() - t0])
    print(json.dumps(out))
""")


def test_long_units_and_powers_are_refused_quickly_everywhere(tmp_path):
    proc = subprocess.run([sys.executable, "-c", _CHILD, str(tmp_path)], input=json.dumps(HANG_FORMS),
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]
    results = json.loads(proc.stdout)
    assert len(results) == sum(len(v) for v in HANG_FORMS.values()) + 2 * len(HANG_FORMS["unit"]) + 1
    for kind, message, seconds in results:
        assert message is not None, kind  # refused...
        assert "\n" not in message, (kind, message[:200])  # ...in one line...
        if kind != "csv header":  # (the counts reader lists the headers it found, however long)
            assert len(message) < 600, (kind, message[:200])
        # ...quickly: CPU seconds of this process, so a busy machine does not count; each takes milliseconds,
        # a hang minutes to forever, and 10 s tells them apart on any machine
        assert seconds < 10.0, (kind, message, seconds)
    by_kind = {}
    for kind, message, _ in results:
        by_kind.setdefault(kind, []).append(message)
    assert "unknown unit 'g**9**9**9'" in by_kind["amount"][0]
    assert any("characters long (at most 100)" in m for m in by_kind["amount"])
    assert all("no level column" in m for m in by_kind["csv header"])
    assert "unknown unit 'g**9**9**9'" in by_kind["catalog medium"][0]


def _cli(args, cwd, timeout=60):
    return subprocess.run([sys.executable, "-m", "mediaplan", *args], capture_output=True, text=True,
                          timeout=timeout, cwd=cwd)


PLAN = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "{volume}"\n' \
       'temperature = "{temperature}"\n\n[medium.components]\nsucrose = "{sucrose}"\n'


@pytest.mark.parametrize("volume, temperature, sucrose, fragment", [
    ("1 L", "25 degC", "30 g**9**9**9/L", "medium.components.sucrose: unknown unit 'g**9**9**9'"),
    ("1 L", "9**9**9 K", "30 g/L", "temperature: unknown unit '**9**9' in temperature '9**9**9 K'"),
    ("1 L", "25 degC", "30 g/" + "L" * 100_000, "amount text is 100005 characters long (at most 100)"),
    ("1 " + "L" * 100_000, "25 degC", "30 g/L", "volume text is 100002 characters long (at most 100)"),
], ids=["power-amount", "power-temperature", "long-amount", "long-volume"])
def test_plan_file_through_the_cli_is_refused_quickly(tmp_path, volume, temperature, sucrose, fragment):
    plan = tmp_path / "p.toml"
    plan.write_text(PLAN.format(volume=volume, temperature=temperature, sucrose=sucrose), encoding="utf-8")
    t0 = time.perf_counter()
    proc = _cli(["calc", "--plan", str(plan)], tmp_path)
    assert time.perf_counter() - t0 < 30  # start-up included; a hang is killed by the timeout above
    assert proc.returncode == 2
    assert fragment in proc.stderr and proc.stderr.count("\n") == 1 and "Traceback" not in proc.stderr


def test_command_line_signs_and_powers(tmp_path):
    """--temperature "−5 degC" is refused as -5 °C (it once ran at +5 °C); targets keep their sign."""
    plan = tmp_path / "p.toml"
    plan.write_text(PLAN.format(volume="1 L", temperature="25 degC", sucrose="30 g/L"), encoding="utf-8")
    proc = _cli(["calc", "--temperature", "−5 degC", "sucrose=30 g/L"], tmp_path)
    assert proc.returncode == 2 and "outside 0-40 °C" in proc.stderr
    proc = _cli(["calc", "--cells", "−1.1 MPa", "sucrose=30 g/L", "--json"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    proc = _cli(["solve", str(plan), "--target", "−0.8 MPa", "--with", "mannitol", "--json"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["target"] == "-0.8 MPa"
    proc = _cli(["solve", str(plan), "--target", "-9**9**9 MPa", "--with", "mannitol"], tmp_path)
    assert proc.returncode == 2 and "unknown unit '**9**9'" in proc.stderr and proc.stderr.count("\n") == 1

