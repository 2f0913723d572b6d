"""The command line's reading of typed amounts and temperatures, fuzzed through the in-process entry
point: never a traceback, exit 2 with one line on refusal, and on success the figures the user reads
carry exactly the amount typed (grams per litre, mmol per litre or per kg as written).

Unit values from their definitions (SI Brochure, 9th ed., BIPM 2019, tables 7 and 8: SI prefixes,
1 L = 1 dm³); T/K = t/°C + 273.15 (same, 2.3.1); 1 % w/v = 10 g/L (common practice).
"""

from __future__ import annotations

import json
from datetime import timedelta

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from mediaplan.cli.main import main
from mediaplan.files.paths import log_file
from mediaplan.medium.errors import AmountError
from mediaplan.medium.units import parse_amount

#: one calc is tens of milliseconds; a hang (a pint power, a pathological pattern) is seconds to hours
CLI_FUZZ = settings(max_examples=40, deadline=timedelta(seconds=5),
                    suppress_health_check=[HealthCheck.function_scoped_fixture])

MINUSES = ["-", "\u2212", "\u2013"]
OTHER_DASHES = ["\u2012", "\u2010", "\u2014", "\uff0d"]
SPACES = [" ", "", "\u00a0", "\u202f"]
# unit -> (kind, JSON key of the component that shows the amount, that key's value for 1 unit)
UNITS = {
    "g/L": ("mass_conc", "grams_per_litre", 1.0),
    "mg/L": ("mass_conc", "grams_per_litre", 1e-3),
    "mg l-1": ("mass_conc", "grams_per_litre", 1e-3),
    "g·L⁻¹": ("mass_conc", "grams_per_litre", 1.0),
    "% w/v": ("mass_conc", "grams_per_litre", 10.0),
    "mM": ("molar", "molarity_mmol_per_l", 1.0),
    "mmol/L": ("molar", "molarity_mmol_per_l", 1.0),
    "µM": ("molar", "molarity_mmol_per_l", 1e-3),
    "mol/L": ("molar", "molarity_mmol_per_l", 1e3),
    "mol/kg": ("molal", "molality_mmol_per_kg", 1e3),
    "mmol kg⁻¹": ("molal", "molality_mmol_per_kg", 1.0),
}
PIECES = [*"0123456789.eE+-/* %^", "\u2212", "\u00a0", "·", "⁻¹", "³", "**9", "mg", "g", "L", "mol", "kg", "M",
          "mM", "MPa", "degC", "w/v", "nan", "inf", ",", "(", ")", "=", "\x7f", "\u202e"]


def _calc(capsys, *argv):
    try:
        code = main(["calc", *argv, "--json"])
    except SystemExit as exc:  # the argument parser's own refusals (usage errors) exit 2 in one line
        code = exc.code
    out = capsys.readouterr()
    assert "Traceback" not in out.err, out.err
    if code != 0:
        assert code == 2, (argv, code, out.err)
        lines = out.err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("mediaplan:"), out.err
        return None, lines[0]
    return json.loads(out.out), out.err


@pytest.fixture(scope="module", autouse=True)
def _warm():
    """The first calc imports the engine, loads the catalog and compiles the model (seconds on a busy
    machine): done once before the deadline counts."""
    assert main(["calc", "KNO3=1 g/L", "sucrose=30 g/L", "--temperature", "20 degC", "--json"]) == 0


@pytest.fixture(autouse=True)
def _no_crash_logged():
    yield
    assert not log_file().exists(), log_file().read_text(encoding="utf-8")[-2000:]


@CLI_FUZZ
@given(st.sampled_from(["", "+", *MINUSES]), st.integers(1, 99999), st.integers(0, 3), st.sampled_from(SPACES),
       st.sampled_from(sorted(UNITS)))
@example("", 1900, 0, " ", "mg/L")  # KNO3 of MS 1962 (catalog/media/ms1962.yaml)
@example("\u2212", 5, 0, " ", "g/L")
def test_a_typed_amount_is_the_amount_computed_or_exit_2(capsys, sign, digits, shift, space, unit):
    number = f"{digits / 10 ** shift:.{shift}f}"
    text = f"{sign}{number}{space}{unit}"
    d, err = _calc(capsys, f"KNO3={text}")
    try:
        expected = parse_amount(text)
    except AmountError:
        assert d is None and ("KNO3" in err or "amount" in err), err
        return
    if d is None:  # read, but refused later (more than dissolves): named in one line
        assert "KNO3" in err or "potassium" in err, err
        return
    assert sign not in MINUSES, text  # a negative amount is never computed
    (c,) = [c for c in d["components"] if c["id"] == "potassium_nitrate"]
    kind, key, per_unit = UNITS[unit]
    assert (expected.kind, c["amount"]) == (kind, " ".join(text.split()))
    assert c[key] == pytest.approx(float(number) * per_unit, rel=1e-9), (text, c)


@CLI_FUZZ
@given(st.sampled_from(OTHER_DASHES), st.integers(1, 999), st.sampled_from(sorted(UNITS)))
def test_an_unknown_dash_before_an_amount_exits_2(capsys, dash, number, unit):
    d, err = _calc(capsys, f"KNO3={dash}{number} {unit}")
    assert d is None, (dash, number, unit)


@CLI_FUZZ
@given(st.lists(st.sampled_from(PIECES), min_size=1, max_size=10).map("".join))
def test_any_amount_text_exits_0_or_2_in_one_line(capsys, text):
    d, err = _calc(capsys, f"KNO3={text}")
    if d is not None:
        assert all(c["osmolality_mosmol_per_kg"] is None or c["osmolality_mosmol_per_kg"] >= 0
                   for c in d["components"])


@settings(max_examples=30, deadline=timedelta(seconds=5), suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.sampled_from(["", "+", *MINUSES]), st.integers(0, 45), st.sampled_from(SPACES),
       st.sampled_from(["degC", "°C", "℃", "C"]))
@example("\u2212", 5, " ", "degC")  # −5 °C: refused as below 0 °C, never computed at +5 °C
def test_a_typed_temperature_keeps_its_sign(capsys, sign, t, space, unit):
    celsius = -t if sign in MINUSES else t
    # '--temperature=TEXT': a separate argument starting with '-' and holding a space is an option to the
    # argument parser (a usage error, exit 2), whatever follows
    d, err = _calc(capsys, "sucrose=30 g/L", f"--temperature={sign}{t}{space}{unit}")
    if 0 <= celsius <= 40:
        assert d is not None, err
        assert d["temperature_c"] == pytest.approx(celsius, abs=1e-9)
    else:
        assert d is None and "outside 0-40 °C" in err, err
