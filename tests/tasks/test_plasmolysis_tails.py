"""The fit's tail probabilities and quantiles without scipy (mediaplan.tasks.plasmolysis.tails), against
scipy.special (what the fit called before) and against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import chdtrc, ndtri

from mediaplan.tasks.plasmolysis.fit import Z_95, critical_normal
from mediaplan.tasks.plasmolysis.tails import chi2_sf, normal_quantile


@pytest.mark.parametrize("df", [1, 2, 3, 4, 7, 14, 15, 40, 61, 150])
def test_chi2_sf_matches_scipy(df):
    xs = np.concatenate([np.geomspace(1e-4, 4 * df + 60, 60), [df - 0.5, df, df + 0.5]])
    got = np.array([chi2_sf(df, float(x)) for x in xs])
    ref = chdtrc(df, xs)
    keep = ref > 1e-250
    np.testing.assert_allclose(got[keep], ref[keep], rtol=2e-12, atol=0)


def test_chi2_sf_closed_forms_and_table_points():
    # df 2: exp(-x/2); df 1: erfc(sqrt(x/2)) (Abramowitz & Stegun 1964, eq. 26.4.4-26.4.5)
    for x in (0.01, 0.7, 3.0, 25.0, 300.0):
        assert chi2_sf(2, x) == pytest.approx(math.exp(-x / 2), rel=1e-15)
        assert chi2_sf(1, x) == pytest.approx(math.erfc(math.sqrt(x / 2)), rel=1e-15)
    # upper 5 % points: 3.841 on 1 df, 11.070 on 5 df, 18.307 on 10 df (Abramowitz & Stegun 1964, table 26.8)
    for df, x in ((1, 3.841459), (5, 11.070498), (10, 18.307038)):
        assert chi2_sf(df, x) == pytest.approx(0.05, abs=2e-8)
    # beyond exp's range the terms come from logarithms: still the scipy value
    assert chi2_sf(3000, 3100.0) == pytest.approx(float(chdtrc(3000, 3100.0)), rel=1e-11)
    assert chi2_sf(5, 1600.0) == pytest.approx(float(chdtrc(5, 1600.0)), rel=1e-11)


def test_chi2_sf_edges():
    assert chi2_sf(4, 0.0) == 1.0
    assert chi2_sf(4, -1.0) == 1.0
    assert chi2_sf(4, math.inf) == 0.0
    assert math.isnan(chi2_sf(0, 1.0))
    assert math.isnan(chi2_sf(3, math.nan))
    with pytest.raises(ValueError):
        chi2_sf(2.5, 1.0)


def test_normal_quantile_matches_scipy():
    ps = np.concatenate([np.linspace(0.0005, 0.9995, 401), [1e-12, 1e-5, 0.025, 0.975, 1 - 1e-9]])
    got = np.array([normal_quantile(float(p)) for p in ps])
    np.testing.assert_allclose(got, ndtri(ps), rtol=4e-15, atol=1e-15)
    assert normal_quantile(0.0) == -math.inf and normal_quantile(1.0) == math.inf
    assert math.isnan(normal_quantile(1.5))


def test_the_fits_critical_value_is_the_one_it_always_used():
    assert critical_normal(0.05) == Z_95 == float(ndtri(0.975))
    assert critical_normal(0.10) == pytest.approx(float(ndtri(0.95)), rel=1e-15)
