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

import numpy as np
import pytest

from mediaplan.thermo import mixing
from tests.thermo.test_mixing import COMPOSITIONS, FIELDS, TEMPERATURES, _input

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

def test_zsr_osmolality_of_one_row_runs_the_row_loop(catalog, monkeypatch):
    """zsr_osmolality of one row takes the written-out loop (so the test above covers what users get)."""
    calls = []
    loop = mixing._newton_row
    monkeypatch.setattr(mixing, "_newton_row", lambda s, start: calls.append(1) or loop(s, start))
    mixing.zsr_osmolality(_input(catalog, "ms_with_sucrose", 298.15))
    assert calls == [1]
