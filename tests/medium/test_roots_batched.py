"""The vectorised bracketed root finder (roots.bracketed_roots) against Brent's method (roots.increasing_root)
on functions whose roots are known in closed form, and the batched ZSR residual (model.ZSRTargets,
sweep_residuals, sweep_line) against the one-row residual (model.ZSRResidual) it batches."""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.medium import roots
from mediaplan.medium.model import ZSRTargets, compiled, sweep_line, sweep_residuals
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import Amount

#: increasing test functions with their roots in closed form: c·x³ + x − d (one real root), exp(x) − d,
#: and a rational one shaped like the ZSR residual, (p + x/q)/(1 − x/w) − 1 (root q(1 − p)/(1 + q/w))
#: (made-up coefficients)
CUBIC_C = np.array([1.0, 0.5, 2.0, 1e-3, 4.0, 1.0, 3.0])
CUBIC_D = np.array([2.0, 10.0, 0.1, 5.0, 60.0, 1e-6, 0.7])


def _cubic(x, rows):
    return CUBIC_C[rows] * x**3 + x - CUBIC_D[rows]


def _cubic_roots() -> np.ndarray:
    out = []
    for c, d in zip(CUBIC_C, CUBIC_D, strict=True):
        r = np.roots([c, 0.0, 1.0, -d])
        out.append(float(r[np.argmin(np.abs(r.imag))].real))
    return np.array(out)


@pytest.mark.parametrize("k", [1, 3, 7])  # row by row in plain floats up to FLOAT_ROWS, vectorised above
def test_cubic_roots_as_brent_finds_them(k):
    truth = _cubic_roots()[:k]
    lo, hi = np.zeros(k), np.full(k, 10.0)
    steps: list[int] = []
    x = roots.bracketed_roots(_cubic, lo, hi, _cubic(lo, np.arange(k)), _cubic(hi, np.arange(k)), counter=steps)
    np.testing.assert_allclose(x, truth, rtol=1e-12, atol=1e-12)
    for i in range(k):
        b = roots.increasing_root(lambda t, i=i: float(_cubic(np.array([t]), np.array([i]))[0]), 0.0, 10.0)
        assert abs(x[i] - b) <= 2 * (roots.XTOL * 10.0 + roots.RTOL * abs(b))  # both within their bound
    assert steps and steps[0] <= 12 * k  # a handful of steps per row


def test_the_ends_are_computed_when_not_given_and_a_row_without_a_sign_change_is_nan():
    d = np.array([2.0, 50.0, 25.0, 3.0, 0.5])  # exp(x) = d on [0, 3]: 50 and 25 lie beyond exp(3) = 20.1,
    # 0.5 below exp(0)
    seen = []

    def f(x, rows):
        seen.append(np.size(x))
        return np.exp(x) - d[rows]

    x = roots.bracketed_roots(f, np.zeros(5), np.full(5, 3.0))
    assert np.isnan(x[1]) and np.isnan(x[2]) and np.isnan(x[4])
    ok = [0, 3]
    np.testing.assert_allclose(x[ok], np.log(d[ok]), rtol=1e-12)
    assert seen[0] == 10  # both ends of every row in the first batched call


def test_a_good_guess_with_a_window_takes_few_calls():
    """A rational function like the ZSR residual, and its root given to 1e-12: two or three calls."""
    p, q, w = 0.6, 500.0, 8000.0  # made-up coefficients

    def f(x, rows):
        return (p + x / q) / (1 - x / w) - 1

    truth = q * (1 - p) / (1 + q / w)
    steps: list[int] = []
    x = roots.bracketed_roots(f, np.zeros(1), np.array([7600.0]), first=[truth * (1 + 1e-12)], window=1e-9,
                              scale=[truth], counter=steps)
    assert x[0] == pytest.approx(truth, rel=1e-13)
    assert steps[0] <= 3
    plain: list[int] = []
    roots.bracketed_roots(f, np.zeros(1), np.array([7600.0]), counter=plain)
    assert plain[0] > steps[0]


def test_no_answer_inside_the_bracket_counts_as_past_the_root():
    """f has no value beyond x = 2 (a model past its range): the root below it is still found."""
    def f(x, rows):
        x = np.asarray(x, dtype=float)
        return np.where(x <= 2.0, x - 1.5, np.nan)

    for k in (1, 6):
        x = roots.bracketed_roots(f, np.zeros(k), np.full(k, 9.0), np.full(k, -1.5), np.full(k, np.inf))
        np.testing.assert_allclose(x, 1.5, rtol=1e-12)


# ---- the batched ZSR residual ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def ms_sweeps(catalog):
    """MS 1962 at half strength plus mannitol (ion proportions unchanged) or plus KCl (changed)."""
    rec = Recipe(base="ms1962", strength=0.5)
    lines = rec.lines(catalog)
    out = {}
    for osm in ("mannitol", "KCl"):
        comps = [ln.component for ln in lines] + [catalog.resolve(osm).component]
        model = compiled(catalog, comps, rec.temperature_k)
        n, b = model.amounts_to_arrays([ln.amount for ln in lines] + [Amount(0.0, "molar", "0 mM")])
        dn = np.zeros_like(n)
        dn[-1] = 1.0
        out[osm] = model.along(n, b, dn, np.zeros_like(b))
    return out


@pytest.mark.parametrize("osm", ["mannitol", "KCl"])
def test_batched_residual_equals_the_one_row_residual(ms_sweeps, osm):
    sweep = ms_sweeps[osm]
    ys = np.array([0.15, 0.4, 0.9])  # osmol/kg: about -0.37 to -2.2 MPa, the span of plasmolysis series (common practice)
    xs = np.array([5.0, 120.0, 300.0])  # mol/m^3 of the osmoticum (made-up points along the sweep)
    got = sweep_residuals(sweep, ys)(xs, np.arange(3))
    want = [sweep.residual_at(y)(x) for y, x in zip(ys, xs, strict=True)]
    np.testing.assert_allclose(got, want, rtol=1e-13, atol=1e-15)


@pytest.mark.parametrize("osm", ["mannitol", "KCl"])
def test_the_line_form_is_the_residual_when_the_ions_keep_their_proportions(ms_sweeps, osm):
    sweep = ms_sweeps[osm]
    ys = np.array([0.2, 0.6])  # osmol/kg (common practice range, as above)
    f = sweep_residuals(sweep, ys)
    line, exact = sweep_line(sweep, f)
    assert exact == (osm == "mannitol")  # KCl changes the ions' proportions along the sweep
    xs = np.array([10.0, 250.0])  # mol/m^3 (made-up)
    if exact:
        np.testing.assert_allclose(line(xs, np.arange(2)), f(xs, np.arange(2)), rtol=1e-12, atol=1e-14)
    x0 = line.root()
    assert np.all(np.isfinite(x0))
    # the closed-form root: the residual's root itself (mannitol), or a first guess within 10 % (KCl)
    brent = [roots.increasing_root(lambda x, i=i: float(f(np.array([x]), np.array([i]))[0]), 0.0, 2000.0)
             for i in range(2)]
    np.testing.assert_allclose(x0, brent, rtol=1e-12 if exact else 0.1)


def test_targets_reused_for_a_second_line_of_the_same_ions(ms_sweeps):
    """The electrolytes' phi at each target is worked out once per ion proportion (the stock's mixture
    reuses the levels' targets): a second call at the same proportions changes nothing."""
    sweep = ms_sweeps["mannitol"]
    eq = ZSRTargets(sweep.model, [0.3, 0.5])  # osmol/kg (common practice)
    m = sweep.molality(np.array([50.0, 90.0]))
    first = eq(m)
    assert np.array_equal(eq(m), first)
    assert math.isfinite(float(first.sum()))


def test_one_target_asked_at_several_compositions_in_one_call(ms_sweeps):
    """A row given more than once in one call (the finder's first call tries a window around its guess):
    each composition gets its own electrolyte phi, as when asked alone. With KCl added, the ion
    proportions differ from point to point."""
    sweep = ms_sweeps["KCl"]
    xs = np.array([50.0, 200.0, 400.0])  # mol/m^3 of KCl (made-up points)
    together = ZSRTargets(sweep.model, [0.6])(sweep.molality(xs), np.zeros(3, dtype=int))  # 0.6 osmol/kg (common practice)
    alone = [ZSRTargets(sweep.model, [0.6])(sweep.molality(np.array([x])))[0] for x in xs]
    np.testing.assert_allclose(together, alone, rtol=1e-13)
