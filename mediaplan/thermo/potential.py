"""Conversions among osmolality, water activity, water (osmotic) potential and freezing point.

    ln a_w = -M_w * Osm                    (Osm: osmolality [osmol/kg], the definition used here)
    psi_s  = (R T / V_w) ln a_w            [Pa]  (V_w: molar volume of pure water at T)
    van't Hoff:  psi_s ≈ -c R T            (c: osmolarity [osmol/m^3]; the ideal, dilute limit)

Freezing point: for a solution whose water activity at its freezing point is a_w,
-ln a_w = 0.009687 θ + 4.8e-6 θ² (θ = freezing-point depression [K]); the relation follows from the
enthalpy of fusion of ice and its temperature dependence (Robinson & Stokes, Electrolyte Solutions,
2nd ed. 1959, ch. 8; coefficients as commonly quoted — from memory, unverified). A freezing-point
osmometer reports θ / 1.858 K kg/mol as the osmolality.
"""

from __future__ import annotations

import numpy as np

from mediaplan.thermo import water
from mediaplan.thermo.constants import K_F_OSMOMETER, M_WATER, R

_FP_A = 0.009687
_FP_B = 4.8e-6


def water_activity(osmolality):
    """a_w [-] from osmolality [osmol/kg]."""
    if type(osmolality) is float:  # one figure: numpy's exp of it, without making an array first
        return np.exp(-M_WATER * osmolality)
    return np.exp(-M_WATER * np.asarray(osmolality, dtype=float))


def osmolality_from_aw(aw):
    """Osmolality [osmol/kg] from water activity [-]."""
    return -np.log(np.asarray(aw, dtype=float)) / M_WATER


def potential_from_aw(aw, T):
    """Water (solute) potential psi_s [Pa] = R T / V_w(T) * ln a_w; T [K]."""
    return R * T / water.molar_volume(T) * np.log(aw if type(aw) is float else np.asarray(aw, dtype=float))


def potential_from_osmolality(osmolality, T):
    """psi_s [Pa] from osmolality [osmol/kg] at T [K]."""
    return -R * T * M_WATER / water.molar_volume(T) * np.asarray(osmolality, dtype=float)


def osmolality_from_potential(psi, T):
    """Osmolality [osmol/kg] that has potential psi [Pa] at T [K]."""
    return -np.asarray(psi, dtype=float) * water.molar_volume(T) / (R * T * M_WATER)


def vant_hoff_potential(osmolarity, T):
    """The van't Hoff potential -c R T [Pa] of an ideal solution; osmolarity c [osmol/m^3]."""
    if type(osmolarity) is float:
        return -osmolarity * R * T
    return -np.asarray(osmolarity, dtype=float) * R * T


def freezing_point_depression(aw_at_freezing):
    """θ [K] from the water activity at the freezing point (positive root of the quadratic)."""
    L = -np.log(aw_at_freezing if type(aw_at_freezing) is float else np.asarray(aw_at_freezing, dtype=float))
    return (-_FP_A + np.sqrt(_FP_A**2 + 4 * _FP_B * L)) / (2 * _FP_B)


def osmometer_reading(theta):
    """Osmolality [osmol/kg] a freezing-point osmometer displays for a depression θ [K]."""
    if type(theta) is float:
        return theta / K_F_OSMOMETER
    return np.asarray(theta, dtype=float) / K_F_OSMOMETER
