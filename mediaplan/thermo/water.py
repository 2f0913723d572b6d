"""Properties of liquid water at atmospheric pressure: density and molar volume.

Pure numpy; temperatures in kelvin, SI units throughout.
"""

from __future__ import annotations

import numpy as np

from mediaplan.thermo.constants import M_WATER, T0

# Tanaka, Girard, Davis, Peuto & Bignell (2001), eq. 1 and Table 1: density of air-free
# Standard Mean Ocean Water at 101.325 kPa, t in degrees Celsius, 0-40 °C.
_TANAKA_A1 = -3.983035  # [°C]
_TANAKA_A2 = 301.797  # [°C]
_TANAKA_A3 = 522528.9  # [°C^2]
_TANAKA_A4 = 69.34881  # [°C]
_TANAKA_A5 = 999.974950  # [kg/m^3]

#: temperature range of the density equation [K]
T_RANGE = (T0 + 0.0, T0 + 40.0)


def density(T) -> np.ndarray:
    """Density of liquid water at atmospheric pressure.

    Parameters
    ----------
    T : float or array_like, temperature [K]

    Returns
    -------
    numpy.ndarray, density [kg/m^3], same shape as ``T``

    Raises
    ------
    ValueError if any temperature is not finite or not positive.

    Notes
    -----
    The equation of Tanaka et al. (2001) for air-free Standard Mean Ocean Water at
    101.325 kPa:

        rho = a5 [1 - (t + a1)^2 (t + a2) / (a3 (t + a4))],   t = T - 273.15 K in °C.

    It is fitted to 0-40 °C and agrees with IAPWS-95 there to about 1e-6 relative. Outside
    0-40 °C the value is an extrapolation (it is returned, not refused; callers check
    :data:`T_RANGE`). The difference between 0.1 MPa and 101.325 kPa (about 6e-7 relative)
    and between SMOW and laboratory water (about 1e-6) is far below the accuracy of any
    osmotic model in this package.

    References
    ----------
    Tanaka M, Girard G, Davis R, Peuto A, Bignell N (2001) Recommended table for the density
    of water between 0 °C and 40 °C based on recent experimental reports. Metrologia 38:301-309.
    doi:10.1088/0026-1394/38/4/3
    """
    if type(T) is float:  # one temperature: the figure of a few temperatures in use, kept (same bits)
        rho = _DENSITY_OF.get(T)
        if rho is None:
            rho = _density(np.asarray(T))
            if len(_DENSITY_OF) >= 64:
                _DENSITY_OF.clear()
            _DENSITY_OF[T] = rho
        return rho
    return _density(np.asarray(T, dtype=float))


#: T [K] (a Python float) -> density [kg/m^3] (a numpy float): the temperatures a session uses
_DENSITY_OF: dict[float, np.floating] = {}


def _density(T: np.ndarray) -> np.ndarray:
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise ValueError("temperature must be finite and positive [K]")
    t = T - T0
    return _TANAKA_A5 * (1.0 - (t + _TANAKA_A1) ** 2 * (t + _TANAKA_A2) / (_TANAKA_A3 * (t + _TANAKA_A4)))


def molar_volume(T) -> np.ndarray:
    """Molar volume of liquid water at atmospheric pressure.

    Parameters
    ----------
    T : float or array_like, temperature [K]

    Returns
    -------
    numpy.ndarray, molar volume M_w / rho [m^3/mol]

    Notes
    -----
    M_w = 0.018015268 kg/mol (IAPWS-95), rho from :func:`density` (Tanaka et al. 2001).
    About 18.068e-6 m^3/mol at 25 °C.

    References
    ----------
    Tanaka M et al. (2001) Metrologia 38:301-309.
    """
    return M_WATER / density(T)
