"""Water potential of polyethylene glycol (PEG 6000 / PEG 8000) solutions.

Empirical equations of Michel & Kaufmann (1973) for PEG 6000 and Michel (1983) for PEG 8000.
Both are quadratic in concentration with no constant term,

    psi = A(T) c^2 + B(T) c,

with c in g PEG per g water here (the 1973 equation is written in g per kg water and
converted). Pure numpy; SI units: psi [Pa], T [K].

Concentration unit of the 1973 equation
---------------------------------------
Michel & Kaufmann (1973) give psi_s [bar] = -1.18e-2 C - 1.18e-4 C^2 + 2.67e-4 C T
+ 8.39e-7 C^2 T (T in °C). Secondary copies disagree on C: g per kg water, or g per litre.
We take g per kg water, because Michel (1983) states that PEG 8000 is the former PEG 6000
and re-evaluates the published data (including 1973) in g PEG per g water: with C in
g/kg water the two equations agree to within about 5 % over 0.1-0.3 g/g and 15-35 °C,
while reading C as g/L (0.2 g/g water is about 170 g/L of solution) would make the 1973
equation 25-30 % less negative than the 1983 one, far outside the 1983 equation's
stated +/-5 %. The test module checks this agreement.

Mixtures: Michel (1983) reports that PEG + mannitol and PEG + NaCl give psi significantly
lower than additive; these functions describe binary PEG-water solutions only. His mixed-solute
tables and the linear relation he reports (abstract: "the synergism of MAN-PEG and of NaCl-PEG are
related linearly to the concentration of solute added with PEG") were sought again and could not be
read here (only the abstract could be reached), so no mixed-solute relation of his is implemented: a figure for PEG with other solutes carries the span
from the additive to the ZSR answer (:func:`mediaplan.thermo.mixing.mixing_span`).
"""

from __future__ import annotations

import numpy as np

from mediaplan.thermo.constants import T0, R
from mediaplan.thermo.water import density

#: 1 bar [Pa]
BAR = 1.0e5

#: Validity of each equation as published: c [g PEG / g water], T [K]; accuracy as stated.
#: Both as ranges (``c_range``, ``T_range``) and as flat bounds (``c_max``, ``T_min``, ``T_max``).
PEG_VALIDITY: dict[int, dict] = {
    6000: {
        "c_range": (0.0, 0.6),
        "T_range": (T0 + 15.0, T0 + 35.0),
        "c_max": 0.6,
        "T_min": T0 + 15.0,
        "T_max": T0 + 35.0,
        "accuracy": "not stated as a single figure; psychrometer data",
        "source": "Michel BE, Kaufmann MR (1973) The osmotic potential of polyethylene glycol 6000. "
        "Plant Physiol 51:914-916. doi:10.1104/pp.51.5.914",
        "note": "C of the published equation taken as g per kg water (see module notes); "
        "the upper c limit 0.6 g/g is the range of the 1983 re-evaluation, not a "
        "published limit of the 1973 equation (unverified)",
    },
    8000: {
        "c_range": (0.0, 0.8),
        "T_range": (T0 + 5.0, T0 + 40.0),
        "c_max": 0.8,
        "T_min": T0 + 5.0,
        "T_max": T0 + 40.0,
        "accuracy": "about +/-5 % (Michel 1983, abstract)",
        "source": "Michel BE (1983) Evaluation of the water potentials of solutions of polyethylene "
        "glycol 8000 both in the absence and presence of other solutes. Plant Physiol "
        "72:66-70. doi:10.1104/pp.72.1.66",
        "note": "PEG 8000 is the former PEG 6000 (Michel 1983)",
    },
}


def _coefficients(T, grade) -> tuple[np.ndarray, np.ndarray]:
    """A(T) [bar (g/g)^-2] and B(T) [bar (g/g)^-1] of psi = A c^2 + B c, c in g/g water."""
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise ValueError("temperature must be finite and positive [K]")
    t = T - T0
    if grade == 8000:
        # Michel 1983: psi[bar] = 1.29 C^2 t - 140 C^2 - 4.0 C, C in g/g water, t in °C
        return 1.29 * t - 140.0, np.full_like(t, -4.0)
    if grade == 6000:
        # Michel & Kaufmann 1973 with C' = 1000 c [g/kg water]:
        # psi = (-1.18e-4 + 8.39e-7 t) C'^2 + (-1.18e-2 + 2.67e-4 t) C'
        return (-1.18e-4 + 8.39e-7 * t) * 1.0e6, (-1.18e-2 + 2.67e-4 * t) * 1.0e3
    raise ValueError(f"PEG grade {grade!r}: equations exist for 6000 and 8000 only")


def _concentration(c) -> np.ndarray:
    c = np.asarray(c, dtype=float)
    if not np.all(np.isfinite(c)) or np.any(c < 0.0):
        raise ValueError("PEG concentration must be finite and non-negative [g/g water]")
    return c


def peg_potential(c, T, grade) -> np.ndarray:
    """Water potential of a binary PEG solution.

    Parameters
    ----------
    c : float or array_like, concentration [g PEG / g water], >= 0
    T : float or array_like, temperature [K]
    grade : int, 6000 (Michel & Kaufmann 1973) or 8000 (Michel 1983)

    Returns
    -------
    numpy.ndarray, water potential psi [Pa] (negative), broadcast shape of ``c`` and ``T``

    Notes
    -----
    PEG 8000: psi [bar] = 1.29 C^2 t - 140 C^2 - 4.0 C, C [g/g water], t [°C]; stated valid
    for 0-0.8 g/g and 5-40 °C within about +/-5 %.
    PEG 6000: psi [bar] = -1.18e-2 C - 1.18e-4 C^2 + 2.67e-4 C t + 8.39e-7 C^2 t with
    C [g/kg water] (unit decision: module notes), 15-35 °C.
    Values outside :data:`PEG_VALIDITY` are extrapolations, returned unchanged; the
    caller warns. 1 bar = 1e5 Pa.

    References
    ----------
    Michel BE, Kaufmann MR (1973) Plant Physiol 51:914-916.
    Michel BE (1983) Plant Physiol 72:66-70.
    """
    c = _concentration(c)
    A, B = _coefficients(T, grade)
    return (A * c * c + B * c) * BAR


def peg_osmolality(c, T, grade) -> np.ndarray:
    """Equivalent osmolality of a binary PEG solution.

    Parameters
    ----------
    c : float or array_like, concentration [g PEG / g water]
    T : float or array_like, temperature [K]
    grade : int, 6000 or 8000

    Returns
    -------
    numpy.ndarray, osmolality -ln(a_w)/M_w [osmol/kg]

    Notes
    -----
    ln a_w = psi V_w / (R T) with V_w = M_w / rho_w(T) (:mod:`mediaplan.thermo.water`), so
    Osm = -psi / (R T rho_w). This is the osmolality of an ideal-reference solution with the
    same water activity; it is not a count of PEG molecules (PEG is far from ideal).
    """
    T = np.asarray(T, dtype=float)
    return -peg_potential(c, T, grade) / (R * T * density(T))


def peg_osmolality_dc(c, T, grade) -> np.ndarray:
    """Derivative of :func:`peg_osmolality` with respect to concentration.

    Parameters
    ----------
    c : float or array_like, concentration [g PEG / g water]
    T : float or array_like, temperature [K]
    grade : int, 6000 or 8000

    Returns
    -------
    numpy.ndarray, d(Osm)/dc [osmol/kg per (g/g)]
    """
    c = _concentration(c)
    T = np.asarray(T, dtype=float)
    A, B = _coefficients(T, grade)
    return -(2.0 * A * c + B) * BAR / (R * T * density(T))


def peg_concentration_at_osmolality(y, T, grade) -> np.ndarray:
    """PEG concentration that gives a required equivalent osmolality (inverse of
    :func:`peg_osmolality`).

    Parameters
    ----------
    y : float or array_like, osmolality [osmol/kg], >= 0
    T : float or array_like, temperature [K]
    grade : int, 6000 or 8000

    Returns
    -------
    numpy.ndarray, concentration [g PEG / g water]; 0 where ``y`` is 0

    Raises
    ------
    ValueError for negative ``y`` or where the equation has no positive root (it has one
    whenever A < 0 and B < 0, i.e. below about 44 °C for PEG 6000 and 108 °C for PEG 8000).

    Notes
    -----
    Closed form: with psi = -y R T rho_w and A c^2 + B c = psi (A < 0, B < 0),
    c = 2 (-psi) / (sqrt(B^2 + 4 A psi) - B), the cancellation-free form of the positive root.
    """
    y = np.asarray(y, dtype=float)
    if not np.all(np.isfinite(y)) or np.any(y < 0.0):
        raise ValueError("osmolality must be finite and non-negative [osmol/kg]")
    T = np.asarray(T, dtype=float)
    A, B = _coefficients(T, grade)
    if np.any(A >= 0.0) or np.any(B >= 0.0):
        raise ValueError(f"PEG {grade}: the equation is not monotonic at this temperature")
    psi_bar = -y * R * T * density(T) / BAR
    return 2.0 * (-psi_bar) / (np.sqrt(B * B + 4.0 * A * psi_bar) - B)
