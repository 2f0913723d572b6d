"""Water density and molar volume (mediaplan.thermo.water) against IAPWS-95."""

from __future__ import annotations

import iapws  # the reference library for water properties, required (tests/conftest.py)
import numpy as np
import pytest

from mediaplan.thermo.constants import M_WATER, T0
from mediaplan.thermo.water import density, molar_volume

TEMPS_C = list(range(0, 41, 5))


@pytest.mark.parametrize("t", TEMPS_C)
def test_density_vs_iapws95(t):
    # IAPWS-95 via the iapws package at 0.101325 MPa. Tanaka et al. (2001) agree with it to
    # about 1e-6; 5e-5 leaves room for SMOW vs. ordinary water and 0.1 vs 0.101325 MPa.
    ref = iapws.IAPWS95(T=T0 + t, P=0.101325).rho
    assert density(T0 + t) == pytest.approx(ref, rel=5e-5)


@pytest.mark.parametrize("t", TEMPS_C)
def test_molar_volume_vs_iapws97(t):
    # IAPWS-IF97 region 1 via the iapws package, 0.101325 MPa
    ref = M_WATER / iapws.IAPWS97(T=T0 + t, P=0.101325).rho
    assert molar_volume(T0 + t) == pytest.approx(ref, rel=5e-5)


@pytest.mark.parametrize(
    ("t", "v_cm3"),
    [
        (20.0, 18.0476),  # IAPWS-95, 0.1 MPa, as given in shared/reference.md
        (25.0, 18.0686),  # same
        (30.0, 18.0940),  # same
    ],
)
def test_molar_volume_reference_values(t, v_cm3):
    assert molar_volume(T0 + t) * 1e6 == pytest.approx(v_cm3, rel=1e-4)


def test_density_maximum_near_4C():
    # Tanaka et al. 2001: maximum density 999.975 kg/m3 at 3.983 degC (the a1, a5 of the equation)
    t = np.linspace(0.0, 10.0, 100001)
    rho = density(T0 + t)
    assert t[np.argmax(rho)] == pytest.approx(3.983, abs=1e-3)
    assert rho.max() == pytest.approx(999.975, abs=1e-3)


def test_vectorised_and_validated():
    T = np.array([[T0 + 5, T0 + 25], [T0 + 30, T0 + 35]])
    assert density(T).shape == (2, 2)
    assert np.ndim(molar_volume(T0 + 25)) == 0
    for bad in (np.nan, -1.0, 0.0):
        with pytest.raises(ValueError):
            density(bad)
