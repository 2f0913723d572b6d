"""The ZSR solver's step loop written out for one row gives the bits of the generic loop on floats.

``mediaplan.thermo.mixing._newton_row`` is ``_newton`` with the arithmetic ``_FLOATS`` spelled out (no
``ops`` indirection, the clips written as comparisons, the factors of the electrolyte scale made once per
step). Here both run on the same systems, cold and warm started, and every field of their answers must be
the same float, bit for bit (NaN where both have none). The compositions are the test inputs of
tests/thermo/test_mixing.py (not published values), scaled down and up so that the dilute, the
concentrated and the past-range (φ <= 0) cases are all met.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from mediaplan.thermo import mixing
from tests.thermo.test_mixing import COMPOSITIONS, FIELDS, TEMPERATURES, _input, _stacked

#: amounts times these factors [-] (test inputs: from none to far past Pitzer's range, where PEG in salt has no
#: answer (NaN) and strong salts run to the clips)
SCALES = (0.0, 1e-4, 1.0, 12.0, 30.0, 1000.0)


def _bits(result) -> list:
    """Every figure of a MixtureResult (and its state), as floats or None: compared with ``==`` and NaN
    counted equal to NaN."""
    out = []
    for name in FIELDS:
        v = getattr(result, name)
        out.append(None if v is None else [float(x) for x in np.asarray(v, dtype=float).reshape(-1)])
    state = result.state
    out.append(None if state is None else [state[0], list(state[1]), state[2], state[3]])
    return out


def _same(a, b) -> bool:
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b, strict=True))
    if isinstance(a, float) and isinstance(b, float):
        return (math.isnan(a) and math.isnan(b)) or (a == b and math.copysign(1, a) == math.copysign(1, b))
    return a == b


def _outcome(loop, inp, start, light=False):
    """The figures of ``loop`` on the system of inp. Neither loop may raise: far past every model's range
    (Pitzer's φ <= 0 where the steps start, cold or warm) the answer is NaN, never a power of a negative
    number (complex on Python floats) or a square root of one."""
    try:
        with np.errstate(all="ignore"):
            if loop == "generic":
                return _bits(mixing._newton(mixing._FLOATS, _system(inp, start, light), start))
            return _bits(mixing._newton_row(_system(inp, start, light), start))
    except (ValueError, ZeroDivisionError, OverflowError, TypeError) as e:
        raise AssertionError(f"the {loop} loop raised {type(e).__name__}: {e}") from e


def _system(inp, start, light=False):
    s = mixing._one_row(inp, start)
    s.light = light
    return s


@pytest.mark.parametrize("scale", SCALES)
@pytest.mark.parametrize("comp", list(COMPOSITIONS))
def test_row_loop_is_the_generic_loop_on_floats(catalog, comp, scale):
    for T in TEMPERATURES.values():
        inp = _input(catalog, comp, T, scale)
        generic = _outcome("generic", inp, None)
        assert _same(_outcome("row", inp, None), generic), (comp, scale, T)
        if isinstance(generic, tuple) or generic[-1] is None:
            continue  # no answer, so no state to start from
        y, x, g, s_c = generic[-1]
        state = (y, tuple(x), g, s_c)
        # warm start at every temperature from this one's state, full and osmolality only
        for T2 in TEMPERATURES.values():
            inp2 = _input(catalog, comp, T2, scale)
            for light in (False, True):
                assert _same(_outcome("row", inp2, state, light), _outcome("generic", inp2, state, light)), \
                    (comp, scale, T, T2, light)

@pytest.mark.parametrize("scale", SCALES)
@pytest.mark.parametrize("comp", list(COMPOSITIONS))
def test_zsr_at_is_a_warm_light_solve_at_the_other_temperature(catalog, comp, scale):
    """zsr_at (the composition solved again at another temperature, its amounts not read again) gives the
    bits of zsr_osmolality of the same amounts at that temperature, warm-started from the first answer's
    state (cold where it has none) with only the osmolality asked for: every composition, scale and pair
    of temperatures of the tables. Both use one Pitzer system, as a compiled medium does at both of its
    temperatures (its full pass of the last composition serves each)."""
    for T in TEMPERATURES.values():
        inp = _input(catalog, comp, T, scale)
        with np.errstate(all="ignore"):
            first = mixing.zsr_osmolality(inp)
            for T2 in TEMPERATURES.values():
                again = mixing.zsr_at(first, T2)
                direct = mixing.zsr_osmolality(replace(inp, T=T2), start=first.state, osmolality_only=True)
                assert _same(_bits(again), _bits(direct)), (comp, scale, T, T2)
                assert _same(_bits(mixing.zsr_at(again, T)), _bits(mixing.zsr_osmolality(
                    inp, start=again.state, osmolality_only=True))), (comp, scale, T2, T)


def test_zsr_at_refuses_a_batch(catalog):
    with pytest.raises(ValueError, match="one composition"):
        mixing.zsr_at(mixing.zsr_osmolality(_stacked(_input(catalog, "ms_with_sucrose", 298.15), 2)), 273.15)


def test_zsr_osmolality_of_one_row_runs_the_row_loop(catalog, monkeypatch):
    """zsr_osmolality of one row takes the written-out loop (so the test above covers what users get)."""
    calls = []
    loop = mixing._newton_row
    monkeypatch.setattr(mixing, "_newton_row", lambda s, start: calls.append(1) or loop(s, start))
    mixing.zsr_osmolality(_input(catalog, "ms_with_sucrose", 298.15))
    assert calls == [1]


@pytest.mark.parametrize("comp", [c for c, v in COMPOSITIONS.items() if v[0]])
def test_ions_past_pitzer_range_never_read_as_pure_water(catalog, comp):
    """Where the ions' own Pitzer φ is zero or negative (far past the parameters' range) the ZSR answer is
    NaN on the row path and in a batch alike: never 0 (the sum M_e·φ made zero or negative was once read as
    pure water, and a medium of 37 mol/kg solutes evaluated to 0 mOsm/kg with exit status 0), never a
    negative or a finite number built on that φ. Scales from 1 to 1e4 of each composition with ions, at
    every temperature of the table; the compositions are test inputs."""
    met = 0
    for T in TEMPERATURES.values():
        for scale in (1.0, 30.0, 100.0, 300.0, 1000.0, 1e4):
            inp = _input(catalog, comp, T, scale)
            phi_own = inp.pitzer.scaled(np.asarray(inp.ion_m)[0], T)(1.0)
            with np.errstate(all="ignore"):
                row = mixing.zsr_osmolality(inp)
                batch = mixing.zsr_osmolality(_stacked(inp, 2))
            y_row, y_batch = float(row.osmolality[0]), batch.osmolality.tolist()
            if not phi_own > 0:
                met += 1
                assert math.isnan(y_row) and all(math.isnan(v) for v in y_batch), (comp, T, scale, y_row, y_batch)
            else:
                assert math.isnan(y_row) or y_row > 0, (comp, T, scale, y_row)
    assert met or comp in ("kcl_trace",), "the table should reach past Pitzer's range"
