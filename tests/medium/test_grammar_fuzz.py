"""Structured fuzzing of every text grammar: the texts are built from the grammar's own pieces (signs,
digits, exponents, spaces, units, powers, operators) and each reading is checked for its VALUE, not only
for the absence of a traceback.

Values of units come from their definitions: SI prefixes, the litre (1 L = 1 dm³) and the bar (1e5 Pa)
from the SI Brochure, 9th ed. (BIPM 2019), tables 5, 7 and 8; T/K = t/°C + 273.15 (same, 2.3.1);
t/°F = 9/5 t/°C + 32 (definition); the standard atmosphere 101325 Pa (10th CGPM 1954, Resolution 4);
1 % w/v = 1 g per 100 mL and 1 % v/v = 1 mL per 100 mL (common practice). The acceptance limits are
mediaplan's own (mediaplan.medium.units), imported, not restated.

Properties: the number written is the number read, times the unit's factor; a sign written with any
minus the grammar knows (ASCII, U+2212, U+2013) survives, and any other dash is refused, never read as +;
fullwidth digits read as their ASCII digits; 2x reads as twice x; equivalent units read alike; every
refusal is a one-line MediaplanError; no example takes longer than the hypothesis deadline.
"""

from __future__ import annotations

import math
from datetime import timedelta

import pytest
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st

from mediaplan.files import planfile
from mediaplan.medium import units
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.units import (
    measure,
    normalise,
    parse_amount,
    parse_fraction,
    parse_target,
    parse_temperature,
    parse_volume,
    unit_dimension,
)
from mediaplan.tasks.cells import cell_reference
from mediaplan.tasks.prep.options import MAX_STOCK_FACTOR, parse_factors

#: a pint power evaluation or a pathological regex takes seconds to hours; a reading takes microseconds.
#: One second is generous for a shared 2-core machine and still catches a hang.
DEADLINE = timedelta(seconds=1)
FUZZ = settings(max_examples=60, deadline=DEADLINE)  # ~60 examples a second here: the suite stays short

# ---- pieces of the texts ----------------------------------------------------------------------------

KNOWN_MINUS = ["-", "\u2212", "\u2013"]  # ASCII hyphen-minus, minus sign, en dash (units.normalise)
#: dashes the grammar does not know: figure dash, hyphen, non-breaking hyphen, em dash, small and
#: fullwidth hyphen-minus. They must be refused: read as nothing, a minus can only become a plus.
OTHER_DASHES = ["\u2012", "\u2010", "\u2011", "\u2014", "\ufe63", "\uff0d"]
SPACES = ["", " ", "  ", "\u00a0", "\u2009", "\u202f", "\t"]
_FULLWIDTH = str.maketrans("0123456789", "０１２３４５６７８９")


@st.composite
def numbers(draw, *, max_int=5, exponent=True, minus=tuple(KNOWN_MINUS)):
    """(text without sign, value): digits, an optional fraction, an optional exponent with a signed
    power of ten; digits ASCII or fullwidth."""
    whole = draw(st.integers(0, 10**max_int - 1))
    frac = draw(st.one_of(st.just(""), st.integers(0, 999).map(lambda f: f"{f:03d}"[: 1 + f % 3])))
    text = str(whole) + ("." + frac if frac else "")
    if draw(st.booleans()) and frac == "":
        text += "."  # "5." is a number too
    value = float(text)
    if exponent and draw(st.booleans()):
        e = draw(st.integers(-3, 3))
        text += draw(st.sampled_from(["e", "E"])) + draw(st.sampled_from(minus if e < 0 else ["", "+"])) + \
            str(abs(e))
        value = float(f"{value}e{e}")
    if draw(st.integers(0, 4)) == 0:
        text = text.translate(_FULLWIDTH)
    return text, value


def _ascii(text: str) -> str:
    return text.translate({ord(c): ord("0") + i for i, c in enumerate("０１２３４５６７８９")})


signs = st.sampled_from([("", 1.0), ("+", 1.0)] + [(m, -1.0) for m in KNOWN_MINUS])

# unit name -> value in a base unit of its family, from the definitions in the module docstring
MASS_G = {"g": 1.0, "gram": 1.0, "grams": 1.0, "mg": 1e-3, "milligram": 1e-3, "ug": 1e-6, "µg": 1e-6, "μg": 1e-6,
          "kg": 1e3}
SUBSTANCE_MOL = {"mol": 1.0, "mole": 1.0, "moles": 1.0, "mmol": 1e-3, "umol": 1e-6, "µmol": 1e-6}
# volumes: (name, power it carries, litres per unit of that power)
VOLUME_L = [("L", 1, 1.0), ("l", 1, 1.0), ("litre", 1, 1.0), ("liter", 1, 1.0), ("mL", 1, 1e-3),
            ("ml", 1, 1e-3), ("uL", 1, 1e-6), ("µL", 1, 1e-6), ("ℓ", 1, 1.0), ("dm", 3, 1.0), ("cm", 3, 1e-3),
            ("m", 3, 1e3)]
MOLAR_MM = {"M": 1e3, "mM": 1.0, "uM": 1e-3, "µM": 1e-3, "μM": 1e-3, "nM": 1e-6}  # -> mol/m³ (= mmol/L)
PRESSURE_PA = {"Pa": 1.0, "kPa": 1e3, "MPa": 1e6, "bar": 1e5, "atm": 101325.0}
OSMOL = {"osmol": 1.0, "Osm": 1.0, "mOsm": 1e-3, "mosm": 1e-3, "mOsmol": 1e-3, "mosmol": 1e-3}
SUPER = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


@st.composite
def per(draw, name: str, power: int):
    """``name`` to the power -``power`` as a divisor, in one of the grammar's spellings, to be put after
    a numerator: '/L', ' L-1', ' L^-1', '*L**-1', '·L⁻¹', ' / dm3', ' dm⁻³'..."""
    up = "" if power == 1 else draw(st.sampled_from([str(power), f"^{power}", str(power).translate(SUPER)]))
    down = f"-{power}"
    return draw(st.sampled_from([
        f"/{name}{up}", f" / {name}{up}", f" {name}{down}", f" {name}^{down}", f"*{name}**{down}",
        f"·{name}{down.translate(SUPER)}", f" {name}{down.translate(SUPER)}", f"⋅{name}^{down}",
    ]))


@st.composite
def amount_units(draw):
    """(unit text, kind, SI value of one unit [units.SI_UNIT[kind]])."""
    family = draw(st.sampled_from(["mass_conc", "molar_per", "molar", "molal", "mass_per_water", "vol_frac",
                                   "percent"]))
    if family == "molar":
        name = draw(st.sampled_from(sorted(MOLAR_MM)))
        return name, "molar", MOLAR_MM[name]
    if family == "percent":
        text, kind, si = draw(st.sampled_from([("% w/v", "mass_conc", 10.0), ("%w/v", "mass_conc", 10.0),
                                               ("% (w/v)", "mass_conc", 10.0), ("% W/V", "mass_conc", 10.0),
                                               ("% v/v", "vol_frac", 0.01), ("%(v/v)", "vol_frac", 0.01)]))
        return text, kind, si
    if family in ("molal", "mass_per_water"):
        below = draw(st.sampled_from([("kg", 1.0), ("g", 1e-3)]))  # kg of water
        top = draw(st.sampled_from(sorted(SUBSTANCE_MOL if family == "molal" else MASS_G)))
        size = (SUBSTANCE_MOL if family == "molal" else MASS_G)[top] * (1.0 if family == "molal" else 1e-3)
        return top + draw(per(below[0], 1)), ("molal" if family == "molal" else "mass_per_water"), size / below[1]
    name, power, litres = draw(st.sampled_from(VOLUME_L))
    below = draw(per(name, power))
    if family == "vol_frac":
        top, _, top_l = draw(st.sampled_from([v for v in VOLUME_L if v[1] == 1]))
        return top + below, "vol_frac", top_l / litres
    if family == "mass_conc":
        top = draw(st.sampled_from(sorted(MASS_G)))
        return top + below, "mass_conc", MASS_G[top] / litres  # g/L = kg/m³
    top = draw(st.sampled_from(sorted(SUBSTANCE_MOL)))
    return top + below, "molar", SUBSTANCE_MOL[top] / litres * 1e3  # mol/L -> mol/m³


def _refusal_is_one_line(exc: BaseException) -> None:
    assert isinstance(exc, MediaplanError), type(exc)
    msg = str(exc)
    assert msg and "\n" not in msg and "Traceback" not in msg and len(msg) < 600, msg


def _read(parse, text):
    """parse(text), or None when it refuses in one line (anything else fails the test)."""
    try:
        return parse(text)
    except AmountError as exc:
        _refusal_is_one_line(exc)
        return None


def _clear_of(x: float, *edges: float) -> bool:
    """x not within rounding of any acceptance edge (a reading 1 ulp over an edge may go either way)."""
    return all(not math.isclose(x, e, rel_tol=1e-9, abs_tol=1e-300) for e in edges)


@pytest.fixture(scope="module", autouse=True)
def _warm():
    """The registry is built on the first reading (~0.3 s); build it before the deadline counts."""
    for text in ("1 g/L", "1 mM", "1 mol/kg", "-1 MPa", "1 mOsm/kg", "25 degC", "1 L", "1 mL/L"):
        measure(text)


# ---- amounts --------------------------------------------------------------------------------------


@FUZZ
@given(signs, numbers(), st.sampled_from(SPACES), amount_units())
@example(("", 1.0), ("1650", 1650.0), " ", ("mg/L", "mass_conc", 1e-3))  # MS 1962 NH4NO3, as in the catalog
@example(("", 1.0), ("３０", 30.0), "\u00a0", ("g L⁻¹", "mass_conc", 1.0))
@example(("\u2212", -1.0), ("3", 3.0), " ", ("g/L", "mass_conc", 1.0))
def test_an_amount_reads_as_written_or_is_refused_for_its_value(sign, number, space, unit):
    (s, sgn), (digits, value), (utext, kind, si_per_unit) = sign, number, unit
    text = f"{s}{digits}{space}{utext}"
    assume(len(text.strip()) <= units.MAX_TEXT)
    si = sgn * value * si_per_unit
    high = units._ABSURD_HIGH[kind]
    assume(_clear_of(si, high, units._ABSURD_LOW))
    a = _read(parse_amount, text)
    must_refuse = si < 0 or si > high or 0 < si < units._ABSURD_LOW
    if must_refuse:
        assert a is None, (text, a)
        return
    assert a is not None, text
    assert a.kind == kind, (text, a)
    assert a.value == pytest.approx(si, rel=1e-12, abs=0.0), text
    assert a.text == " ".join(text.split())  # written back as typed


@FUZZ
@given(st.sampled_from(OTHER_DASHES), numbers(), amount_units())
def test_an_unknown_dash_before_an_amount_is_refused(dash, number, unit):
    text = f"{dash}{number[0]} {unit[0]}"
    with pytest.raises(AmountError) as exc:
        parse_amount(text)
    _refusal_is_one_line(exc.value)


@FUZZ
@given(numbers(max_int=3, exponent=False), amount_units())
def test_twice_the_number_is_twice_the_amount(number, unit):
    digits, value = number
    one = _read(parse_amount, f"{digits} {unit[0]}")
    two = _read(parse_amount, f"{value * 2!r} {unit[0]}")
    assume(one is not None and two is not None)
    assert two.value == pytest.approx(2 * one.value, rel=1e-12)
    assert two.kind == one.kind


EQUIVALENT = [  # each row: texts that are one amount (definitions in the module docstring)
    ["1000 mg/L", "1 g/L", "1 g L-1", "1 g·L⁻¹", "1 kg/m3", "1 mg/mL", "1000000 ug/L", "0.1 % w/v", "1 g/dm3",
     "1e3 mg/L", "1E+3 mg L^-1", "１０００ mg/L"],
    ["20 mM", "20 mmol/L", "0.02 M", "0.02 mol/L", "20000 uM", "20000 µM", "20 mol/m3", "20 mmol dm-3",
     "20 umol/mL"],
    ["0.5 mol/kg", "500 mmol/kg", "500 mmol kg⁻¹", "0.5 mmol/g", "0.5 mol·kg⁻¹"],
    ["150 g/kg", "0.15 kg/kg", "150 mg/g", "150 g kg-1"],
    ["50 mL/L", "5 % v/v", "0.05 L/L", "50 ml l-1", "50 uL/mL", "5 %(v/v)"],
]


@pytest.mark.parametrize("row", EQUIVALENT, ids=lambda r: r[0])
def test_equivalent_units_read_alike(row):
    first = parse_amount(row[0])
    for text in row[1:]:
        a = parse_amount(text)
        assert (a.kind, a.value) == (first.kind, pytest.approx(first.value, rel=1e-12)), text


# ---- temperatures ---------------------------------------------------------------------------------

TEMPERATURE_UNITS = [  # (spelling, K of t in it)
    *[(u, lambda t: t + 273.15) for u in ("degC", "°C", "° C", "ºC", "℃", "C")],
    ("K", lambda t: t),
    *[(u, lambda t: (t - 32.0) * 5.0 / 9.0 + 273.15) for u in ("degF", "°F", "℉")],
]


@FUZZ
@given(signs, numbers(max_int=3), st.sampled_from(SPACES), st.sampled_from(TEMPERATURE_UNITS))
@example(("\u2212", -1.0), ("5", 5.0), " ", TEMPERATURE_UNITS[0])  # −5 degC is −5 °C, never +5
@example(("\u2013", -1.0), ("5", 5.0), " ", TEMPERATURE_UNITS[1])
def test_a_temperature_keeps_its_sign_and_its_range(sign, number, space, unit):
    (s, sgn), (digits, value), (utext, to_k) = sign, number, unit
    text = f"{s}{digits}{space}{utext}"
    kelvin = to_k(sgn * value)
    assume(_clear_of(kelvin, 273.15, 313.15))
    m = _read(lambda t: measure(t, temperature=True), text)
    assert m is not None and m.kind == "temperature", text
    assert m.value == pytest.approx(kelvin, rel=1e-12, abs=1e-9), text  # the sign survived
    t = _read(parse_temperature, text)
    if 273.15 <= kelvin <= 313.15:
        assert t == pytest.approx(kelvin, rel=1e-12, abs=1e-9), text
    else:
        assert t is None, (text, t)


@FUZZ
@given(st.sampled_from(OTHER_DASHES), numbers(max_int=2), st.sampled_from(TEMPERATURE_UNITS))
def test_an_unknown_dash_before_a_temperature_is_refused(dash, number, unit):
    assert _read(lambda t: measure(t, temperature=True), f"{dash}{number[0]} {unit[0]}") is None


OFFSET_IN_COMPOSITES = ["25 degC*degC/K", "25 degC^2/degC", "25 K^2/degC", "25 degC*K/K", "300 degC*degC/K",
                        "25 degF*degC/degC", "25 degC*mol/mol", "25 degC^2/K", "-0.8 MPa*degC/K", "2 L*degC/degC",
                        "30 g*degC/degC/L"]


@pytest.mark.parametrize("text", OFFSET_IN_COMPOSITES)
def test_a_celsius_or_fahrenheit_degree_inside_a_product_is_refused(text):
    """°C and °F have an offset: '25 degC*degC/K' has no one meaning (pint read it as 25 K while
    '25 degC*K/K' read 298.15 K, and '300 degC*degC/K' passed as 26.85 °C). Only a degree alone is read."""
    for parse in (lambda t: measure(t, temperature=True), parse_temperature, parse_target, parse_volume,
                  parse_amount):
        assert _read(parse, text) is None, (text, parse)


# ---- volumes --------------------------------------------------------------------------------------


@FUZZ
@given(signs, numbers(), st.sampled_from(SPACES), st.sampled_from(VOLUME_L),
       st.sampled_from(["", "^", "**"]), st.booleans())
def test_a_volume_reads_as_written_or_is_refused(sign, number, space, vol, caret, superscript):
    (s, sgn), (digits, value), (name, power, litres) = sign, number, vol
    up = "" if power == 1 else (str(power).translate(SUPER) if superscript else f"{caret}{power}")
    text = f"{s}{digits}{space}{name}{up}"
    m3 = sgn * value * litres * 1e-3
    assume(_clear_of(m3, 1e-9, 100.0))
    v = _read(parse_volume, text)
    if 1e-9 <= m3 <= 100.0:
        assert v == pytest.approx(m3, rel=1e-12), text
    else:
        assert v is None, (text, v)


# ---- targets and cell references --------------------------------------------------------------------


@st.composite
def targets(draw):
    """(text, kind, SI value [Pa or osmol/kg])."""
    (s, sgn), (digits, value), space = draw(signs), draw(numbers(max_int=4)), draw(st.sampled_from(SPACES))
    if draw(st.booleans()):
        name = draw(st.sampled_from(sorted(PRESSURE_PA)))
        return f"{s}{digits}{space}{name}", "potential", sgn * value * PRESSURE_PA[name]
    top = draw(st.sampled_from(sorted(OSMOL)))
    below, kg = draw(st.sampled_from([("kg", 1.0), ("g", 1e-3)]))
    return f"{s}{digits}{space}{top}{draw(per(below, 1))}", "osmolality", sgn * value * OSMOL[top] / kg


@FUZZ
@given(targets())
@example(("\u22120.8 MPa", "potential", -8e5))
@example(("\u2212 0.8 MPa", "potential", float("nan")))  # a sign parted from its number: refused
@example(("0.8 MPa", "potential", 8e5))
def test_a_target_keeps_its_sign(target):
    text, kind, si = target
    t = _read(parse_target, text)
    if math.isnan(si):
        assert t is None, text
        return
    assume(_clear_of(si, 0.0, -20e6, 10.0))
    ok = (kind == "potential" and -20e6 <= si <= 0) or (kind == "osmolality" and 0 <= si <= 10)
    if not ok:
        assert t is None, (text, t)
        return
    assert t is not None and t.kind == kind, text
    assert t.value == pytest.approx(si, rel=1e-12, abs=0.0), text
    assert t.text == normalise(text)


@FUZZ
@given(st.sampled_from(OTHER_DASHES), numbers(max_int=2), st.sampled_from(sorted(PRESSURE_PA)))
def test_an_unknown_dash_before_a_potential_is_refused(dash, number, unit):
    assert _read(parse_target, f"{dash}{number[0]} {unit}") is None


#: potential per osmolality at 25 °C [Pa per osmol/kg]: R T ρw = 8.314462618 J/(mol K) (CODATA 2018)
#: × 298.15 K × 997.047 kg/m³ (IAPWS-95 at 25 °C and 0.1 MPa, Wagner & Pruß 2002) = 2.4716e6
PA_PER_OSMOL_25C = 8.314462618 * 298.15 * 997.047


@FUZZ
@given(st.floats(min_value=1e-3, max_value=9.0), st.sampled_from(KNOWN_MINUS), st.sampled_from(SPACES),
       st.sampled_from([("MPa", 1.0), ("bar", 10.0), ("kPa", 1000.0)]))
def test_a_cell_reference_from_a_potential_is_its_osmolality(mpa, minus, space, unit):
    name, per_mpa = unit
    text = f"{minus}{mpa * per_mpa!r}{space}{name}"
    mosm = cell_reference(text, None, 298.15)
    # ψ = -R T ρw · osmolality (the model's own definition); its ρw from IAPWS-95 to 1e-5
    assert mosm == pytest.approx(mpa * 1e6 / PA_PER_OSMOL_25C * 1000.0, rel=2e-5), text
    twice = cell_reference(f"-{mpa * 2 * per_mpa!r} {name}", None, 298.15)
    assert twice == pytest.approx(2 * mosm, rel=1e-12)
    with pytest.raises(AmountError):  # a positive potential is no cell's
        cell_reference(f"{mpa * per_mpa!r} {name}", None, 298.15)


@FUZZ
@given(numbers(max_int=3), st.sampled_from([("mOsm/kg", 1.0), ("mOsm kg⁻¹", 1.0), ("Osm/kg", 1e3),
                                            ("osmol kg-1", 1e3)]))
def test_a_cell_reference_in_osmoles_is_read_as_written(number, unit):
    digits, value = number
    mosm = value * unit[1]
    assume(_clear_of(mosm, 0.0, 1e4))
    got = _read(lambda t: cell_reference(t, None, 298.15), f"{digits} {unit[0]}")
    if 0 < mosm <= 1e4:
        assert got == pytest.approx(mosm, rel=1e-12)
    else:
        assert got is None


# ---- fractions (water loss, isotonic band) --------------------------------------------------------


@FUZZ
@given(signs, numbers(max_int=3), st.sampled_from(["", " %", "%", "\u00a0%", "\u202f%"]),
       st.sampled_from([1.0, 0.5]))
@example(("\u2212", -1.0), ("10", 10.0), " %", 1.0)  # −10 % is refused, never read as 10 %
def test_a_fraction_is_the_number_or_its_percent(sign, number, percent, upper):
    (s, sgn), (digits, value) = sign, number
    text = f"{s}{digits}{percent}"
    expected = sgn * value / (100.0 if percent else 1.0)
    assume(_clear_of(expected, 0.0, upper))
    got = _read(lambda t: parse_fraction(t, field="projection.water_loss", upper=upper), text)
    if 0 <= expected <= upper:
        assert got == pytest.approx(expected, rel=1e-12, abs=1e-15), text
    else:
        assert got is None, (text, got)


# ---- stock factors ----------------------------------------------------------------------------------


@FUZZ
@given(st.sampled_from([("", 1.0), ("+", 1.0), ("-", -1.0)]), numbers(max_int=4, minus=("-",)),
       st.sampled_from(["", "x", "X", "×"]), st.sampled_from(["", " "]))
def test_a_stock_factor_is_the_number_written(sign, number, suffix, space):
    """Read as written when it is a factor a stock can have (1 to MAX_STOCK_FACTOR), else refused."""
    (s, sgn), (digits, value) = sign, number
    expected = sgn * value
    assume(_clear_of(expected, 1.0, MAX_STOCK_FACTOR))
    got = _read(parse_factors, [f"macro={space}{s}{digits}{suffix}{space}"])
    if 1.0 <= expected <= MAX_STOCK_FACTOR:
        assert got == {"macro": pytest.approx(expected, rel=1e-12)}
    else:
        assert got is None, (digits, got)


@FUZZ
@given(st.sampled_from(["\u2212", "\u2013", *OTHER_DASHES]), numbers(max_int=3))
def test_a_stock_factor_with_another_minus_is_refused_never_positive(dash, number):
    """A minus typed as U+2212 or an en dash is a minus (so the factor is below 1 and refused); any other
    dash is no number: no minus can turn into a factor of the same size."""
    got = _read(parse_factors, [f"macro={dash}{number[0]}"])
    assert got is None or got["macro"] < 0


@FUZZ
@given(st.lists(st.sampled_from([*"0123456789.eE+-x×= _a", "\u2212", "\u00a0", "nan", "inf", "１"]),
               max_size=10).map("".join))
def test_any_stock_factor_text_is_a_number_or_one_line(text):
    got = _read(parse_factors, [f"macro={text}"])
    if got is not None:
        assert set(got) == {"macro"} and isinstance(got["macro"], float)


# ---- plan-file amounts, temperatures and volumes --------------------------------------------------------

PLAN = """[mediaplan]
format = "mediaplan-plan"
version = "1.0"

[medium]
volume = {volume}
temperature = {temperature}

[medium.components]
sucrose = {amount}
"""


def _toml_string(text: str) -> str:
    """A TOML basic string holding ``text`` exactly (\\uXXXX escapes for everything outside printable ASCII)."""
    return '"' + "".join(c if (" " <= c <= "~" and c not in '"\\') else f"\\u{ord(c):04x}" if ord(c) < 0x10000
                         else f"\\U{ord(c):08x}" for c in text) + '"'


@FUZZ
@given(signs, numbers(), st.sampled_from(SPACES), amount_units(), st.sampled_from(["1 L", "500 mL", "2 dm3"]),
       st.sampled_from(["25 degC", "25 °C", "298.15 K", "\u22125 degC", "+5 °C", "77 degF"]))
def test_a_plan_file_reads_amounts_as_the_grammar_does(sign, number, space, unit, volume, temperature):
    text = f"{sign[0]}{number[0]}{space}{unit[0]}"
    assume(len(text.strip()) <= units.MAX_TEXT)
    plan_text = PLAN.format(volume=_toml_string(volume), temperature=_toml_string(temperature),
                            amount=_toml_string(text))
    direct = _read(parse_amount, text)
    t_direct = _read(parse_temperature, temperature)
    try:
        plan = planfile.loads(plan_text, file="fuzz.toml")
    except MediaplanError as exc:
        _refusal_is_one_line(exc)
        assert exc.file == "fuzz.toml"
        if direct is None:
            assert exc.line == 10 and exc.field == "medium.components.sucrose", str(exc)
        else:
            assert t_direct is None and exc.line == 7, str(exc)  # the temperature line
        return
    assert direct is not None and t_direct is not None, (text, temperature)
    ((cid, amount),) = plan.recipe.amounts
    assert (cid, amount.kind, amount.value, amount.text) == ("sucrose", direct.kind, direct.value, direct.text)
    assert plan.recipe.temperature_k == t_direct
    assert plan.recipe.volume_m3 == parse_volume(volume)


# ---- unit texts alone (counts headers, conversions) --------------------------------------------------


@FUZZ
@given(st.one_of(amount_units().map(lambda u: u[0]),
                 st.sampled_from(sorted(PRESSURE_PA)),
                 st.builds(lambda o, b: o + b, st.sampled_from(sorted(OSMOL)), per("kg", 1))))
def test_a_unit_alone_measures_what_it_measures_with_a_number(unit):
    kind = unit_dimension(unit)
    m = measure(f"1 {unit}")
    assert kind == ("other" if m.kind == "fraction" else m.kind)
    if kind in ("pressure", "osmolality"):
        to = units.MEASURE_SI_UNIT[kind]
        assert units.convert(-3.0, unit, to) == pytest.approx(-3.0 * m.value, rel=1e-12)  # sign and scale


OPERATORS = ["*", "**", "^", "/", "·", "⋅", "×", " ", "(", ")", "+", "-", "\u2212", "%", ",", "."]


@settings(max_examples=120, deadline=DEADLINE)
@given(st.lists(st.one_of(st.sampled_from(sorted(units.UNIT_NAMES)), st.sampled_from(OPERATORS),
                          st.integers(-12, 12).map(str), st.sampled_from(["²", "³", "⁻¹", "⁻⁴", "⁹"])),
                min_size=1, max_size=10).map("".join), numbers(max_int=3))
def test_operator_soup_reads_consistently_or_is_refused(unit, number):
    """Any mixture of unit names, operators and powers: every entry point answers fast, in one line, and
    when two entry points both read it they agree on the value."""
    text = f"{number[0]} {unit}"
    m = _read(measure, text)
    kind = _read(unit_dimension, unit)
    if m is not None and kind is not None and kind != "other":
        assert kind == m.kind
    a = _read(parse_amount, text)
    if a is not None:
        assert m is not None and (m.kind, m.value) == (a.kind, pytest.approx(a.value, rel=1e-12))
    g = _read(parse_target, text)
    if g is not None:
        assert m is not None and g.value == pytest.approx(m.value, rel=1e-12)
    v = _read(parse_volume, text)
    if v is not None:
        assert m is not None and m.kind == "volume" and v == pytest.approx(m.value, rel=1e-12)
