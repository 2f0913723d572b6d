"""Osmotic coefficient of mixed electrolyte solutions by the Pitzer ion-interaction model.

The model is the multicomponent Pitzer equation for the molal osmotic coefficient in the form of
Harvie, Møller & Weare (1984), with the unsymmetric-mixing terms of Pitzer (1975):

.. math::

    \\phi - 1 = \\frac{2}{\\sum_i m_i}\\Big[ -\\frac{A_\\phi I^{3/2}}{1 + b\\sqrt I}
        + \\sum_c\\sum_a m_c m_a (B^\\phi_{ca} + Z C_{ca})
        + \\sum_{c<c'} m_c m_{c'} (\\Phi^\\phi_{cc'} + \\sum_a m_a \\psi_{cc'a})
        + \\sum_{a<a'} m_a m_{a'} (\\Phi^\\phi_{aa'} + \\sum_c m_c \\psi_{aa'c}) \\Big]

with :math:`B^\\phi = \\beta_0 + \\beta_1 e^{-\\alpha_1\\sqrt I} + \\beta_2 e^{-\\alpha_2\\sqrt I}`,
:math:`C_{ca} = C^\\phi_{ca} / (2\\sqrt{|z_c z_a|})`, :math:`Z = \\sum_i |z_i| m_i` and
:math:`\\Phi^\\phi_{ij} = \\theta_{ij} + {}^E\\theta_{ij}(I) + I\\,{}^E\\theta'_{ij}(I)`.

Everything here is pure numpy: no file I/O, no units library. Parameters arrive as
:class:`~mediaplan.thermo.params.PitzerParams`, built from the parsed YAML mapping of
``catalog/pitzer.yaml`` by :func:`pitzer_params_from_dict`.

References
----------
Pitzer KS (1975) Thermodynamics of electrolytes. V. Effects of higher-order electrostatic terms.
    J Solution Chem 4:249–265, doi:10.1007/BF00646562.
Harvie CE, Møller N, Weare JH (1984) The prediction of mineral solubilities in natural waters: the
    Na-K-Mg-Ca-H-Cl-SO4-OH-HCO3-CO3-CO2-H2O system to high ionic strengths at 25 °C.
    Geochim Cosmochim Acta 48:723–751, doi:10.1016/0016-7037(84)90098-X.
Møller N (1988) The prediction of mineral solubilities in natural waters: a chemical equilibrium
    model for the Na-Ca-Cl-SO4-H2O system, to high temperature and concentration.
    Geochim Cosmochim Acta 52:821–837, doi:10.1016/0016-7037(88)90354-7.
Pitzer KS (1991) Ion interaction approach: theory and data correlation. In: Pitzer KS (ed.)
    Activity Coefficients in Electrolyte Solutions, 2nd ed., CRC Press, ch. 3.
May PM, Rowland D, Hefter G, Königsberger E (2011) A generic and updatable Pitzer characterization of
    aqueous binary electrolyte solutions at 1 bar and 25 °C. J Chem Eng Data 56:5066–5077,
    doi:10.1021/je2009329.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from .constants import M_WATER
from .ions import parse_species
from .params import BinaryPitzer, PitzerParams

__all__ = [
    "MOLLER1988_COEFFS",
    "PitzerSystem",
    "a_phi",
    "default_alphas",
    "j_function",
    "pitzer_params_from_dict",
]

#: Coefficients a0..a7 of Møller (1988) eq. 13 for A_phi(T) (same as ``PitzerParams.a_phi_coeffs``).
MOLLER1988_COEFFS: tuple[float, ...] = PitzerParams.__dataclass_fields__["a_phi_coeffs"].default

# Pitzer (1975) eq. 47 empirical form of the unsymmetric-mixing integral J(x).
_J_C1, _J_C2, _J_C3, _J_C4 = 4.581, 0.7237, 0.0120, 0.528
#: temperatures [K] whose parameter matrices and A_phi a system keeps at once (a medium is solved at its own
#: temperature and at 0 °C; a handful more costs nothing; a sweep over temperatures starts the cache afresh)
_T_CACHE_SIZE = 8


# ---------------------------------------------------------------------------------------------------------
# Debye–Hückel slope
# ---------------------------------------------------------------------------------------------------------
def a_phi(T: float | np.ndarray, coeffs: Sequence[float] | None = None) -> float | np.ndarray:
    """Debye–Hückel osmotic slope A_phi [kg^1/2 mol^-1/2] at temperature T [K].

    Parameters
    ----------
    T : float or array, temperature [K]
    coeffs : optional sequence of the 8 coefficients a0..a7 [-]; default :data:`MOLLER1988_COEFFS`
        (the values held by ``PitzerParams.a_phi_coeffs``).

    Returns
    -------
    A_phi [kg^1/2 mol^-1/2], a float for a scalar T, else an array of T's shape.

    Notes
    -----
    Møller (1988) eq. 13:
    A_phi = a0 + a1 T + a2/T + a3 ln T + a4/(T - 263) + a5 T^2 + a6/(680 - T) + a7/(T - 227),
    fitted for 273–573 K at 1 atm (saturation pressure above 373 K). It gives 0.39148 at 298.15 K,
    against 0.3915 tabulated by Pitzer (1991).

    References
    ----------
    Møller N (1988) Geochim Cosmochim Acta 52:821, eq. 13.
    """
    a = MOLLER1988_COEFFS if coeffs is None else tuple(coeffs)
    if len(a) != 8:
        raise ValueError(f"A_phi fit needs 8 coefficients, got {len(a)}")
    if np.ndim(T) == 0:
        t = float(T)
        return (a[0] + a[1] * t + a[2] / t + a[3] * math.log(t) + a[4] / (t - 263.0) + a[5] * t * t
                + a[6] / (680.0 - t) + a[7] / (t - 227.0))
    t = np.asarray(T, dtype=float)
    return (a[0] + a[1] * t + a[2] / t + a[3] * np.log(t) + a[4] / (t - 263.0) + a[5] * t * t
            + a[6] / (680.0 - t) + a[7] / (t - 227.0))


# ---------------------------------------------------------------------------------------------------------
# Unsymmetric mixing
# ---------------------------------------------------------------------------------------------------------
def j_function(x: float | np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Unsymmetric-mixing integral J(x) and its derivative dJ/dx (Pitzer 1975, eq. 47 form).

    Parameters
    ----------
    x : float or array, x = 6 z_i z_j A_phi sqrt(I) [-], x >= 0

    Returns
    -------
    (J, J') : arrays of x's shape [-]

    Notes
    -----
    J(x) = x / (4 + C1 x^-C2 exp(-C3 x^C4)), C1 = 4.581, C2 = 0.7237, C3 = 0.0120, C4 = 0.528.
    Pitzer (1975) fitted this form to the exact integral
    J(x) = x/4 - 1 + (1/x) ∫_0^∞ [1 - exp(-(x/y) e^-y)] y² dy; the difference is small against the
    size of the E-theta terms in dilute media. Harvie's Chebyshev approximation (used e.g. by
    PHREEQC) would be the more accurate choice at high ionic strength. J(0) = J'(0) = 0.

    References
    ----------
    Pitzer KS (1975) J Solution Chem 4:249, eq. 47.
    """
    x = np.asarray(x, dtype=float)
    pos = x > 0.0
    xs = np.where(pos, x, 1.0)
    ex = _J_C1 * xs ** (-_J_C2) * np.exp(-_J_C3 * xs ** _J_C4)
    d = 4.0 + ex
    j = np.where(pos, xs / d, 0.0)
    dj = np.where(pos, (4.0 + ex * (1.0 + _J_C2 + _J_C3 * _J_C4 * xs ** _J_C4)) / (d * d), 0.0)
    return j, dj


def _x_dj(x: np.ndarray) -> np.ndarray:
    """x * J'(x) for x > 0 (no masking; callers pass x > 0). Same algebra as :func:`j_function`."""
    lx = np.log(x)
    c3xc4 = _J_C3 * np.exp(_J_C4 * lx)                  # C3 x^C4
    ex = _J_C1 * np.exp(-_J_C2 * lx - c3xc4)            # C1 x^-C2 exp(-C3 x^C4)
    d = 4.0 + ex
    return x * (4.0 + ex * (1.0 + _J_C2 + _J_C4 * c3xc4)) / (d * d)


# ---------------------------------------------------------------------------------------------------------
# Parameters from the catalog mapping
# ---------------------------------------------------------------------------------------------------------
T_REF = 298.15


def temperature_basis(T: float) -> np.ndarray:
    """The five functions of T [K] multiplying A1..A5 of a parameter's temperature terms:
    (1/T - 1/Tr, ln(T/Tr), T - Tr, T^2 - Tr^2, 1/T^2 - 1/Tr^2), Tr = 298.15 K (the analytical form of
    PHREEQC's Pitzer database; Parkhurst & Appelo 2013, USGS Techniques and Methods 6-A43)."""
    Tr = T_REF
    return np.array([1.0 / T - 1.0 / Tr, math.log(T / Tr), T - Tr, T * T - Tr * Tr, 1.0 / T**2 - 1.0 / Tr**2])


def default_alphas(z_cation: int, z_anion: int) -> tuple[float, float]:
    """alpha1, alpha2 [kg^1/2 mol^-1/2] by charge type.

    Notes
    -----
    2.0 (alpha2 unused) for any pair with a univalent ion; 1.4 / 12 for 2:2 pairs (Pitzer & Mayorga
    1974; Harvie, Møller & Weare 1984); 2.0 / 50 for 3:2 and 4:2 pairs (rule of May et al. 2011).
    """
    zc, za = abs(int(z_cation)), abs(int(z_anion))
    if zc >= 2 and za >= 2:
        if zc >= 3 or za >= 3:
            return 2.0, 50.0
        return 1.4, 12.0
    return 2.0, 12.0


def _num(entry: Mapping[str, Any], key: str, where: str, default: float | None = None) -> float:
    if key not in entry or entry[key] is None:
        if default is None:
            raise ValueError(f"{where}: missing {key!r}")
        return float(default)
    v = entry[key]
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise ValueError(f"{where}: {key!r} must be a number, got {v!r}")
    v = float(v)
    if not math.isfinite(v):
        raise ValueError(f"{where}: {key!r} is not finite")
    return v


def _ion(name: Any, where: str) -> int:
    if not isinstance(name, str):
        raise ValueError(f"{where}: ion id must be a string, got {name!r}")
    try:
        z = parse_species(name).charge
    except ValueError as exc:
        raise ValueError(f"{where}: {exc}") from None
    if z == 0:
        raise ValueError(f"{where}: {name!r} is not an ion")
    return z


def pitzer_params_from_dict(data: Mapping[str, Any]) -> PitzerParams:
    """Build :class:`PitzerParams` from the parsed YAML mapping of ``catalog/pitzer.yaml``.

    Parameters
    ----------
    data : mapping with keys ``binary`` (list of pair entries), optional ``theta`` and ``psi`` (lists),
        optional ``b`` [kg^1/2 mol^-1/2] and ``a_phi`` (``{coefficients: [8 numbers]}``).
        A binary entry has ``cation``, ``anion``, ``beta0``, ``beta1``, ``beta2`` [kg/mol],
        ``cphi`` [kg^2/mol^2], optional ``alpha1``, ``alpha2`` [kg^1/2 mol^-1/2] (default by charge type,
        :func:`default_alphas`), ``max_m`` [mol/kg] and ``source``.
        A theta entry has ``ions`` (two like-charged ions) and ``value`` [kg/mol]; a psi entry has
        ``ions`` (two like-charged ions and one of opposite sign, any order) and ``value`` [kg^2/mol^2].

    Returns
    -------
    PitzerParams

    Raises
    ------
    ValueError naming the list, the entry's index and its ions, for a malformed entry, a bad ion id,
    wrong charge signs or a duplicate.
    """
    if not isinstance(data, Mapping):
        raise ValueError("Pitzer parameters: expected a mapping at top level")
    binary: dict[tuple[str, str], BinaryPitzer] = {}
    rows = data.get("binary")
    if not isinstance(rows, list):
        raise ValueError("Pitzer parameters: 'binary' must be a list")
    for k, e in enumerate(rows):
        if not isinstance(e, Mapping):
            raise ValueError(f"binary[{k}]: expected a mapping, got {e!r}")
        where = f"binary[{k}] ({e.get('cation')!r}, {e.get('anion')!r})"
        zc, za = _ion(e.get("cation"), where), _ion(e.get("anion"), where)
        if zc <= 0 or za >= 0:
            raise ValueError(f"{where}: cation must be positive and anion negative")
        key = (e["cation"], e["anion"])
        if key in binary:
            raise ValueError(f"{where}: duplicate pair")
        a1, a2 = default_alphas(zc, za)
        max_m = _num(e, "max_m", where, math.inf)
        if max_m <= 0:
            raise ValueError(f"{where}: max_m must be positive")
        alpha1, alpha2 = _num(e, "alpha1", where, a1), _num(e, "alpha2", where, a2)
        if alpha1 <= 0 or alpha2 <= 0:
            raise ValueError(f"{where}: alpha1 and alpha2 must be positive")
        tterms = []
        traw = e.get("temperature")
        if traw is not None:
            if not isinstance(traw, Mapping):
                raise ValueError(f"{where}: 'temperature' must map beta0/beta1/beta2/cphi to 5 coefficients")
            for pname, coeffs in traw.items():
                if pname not in ("beta0", "beta1", "beta2", "cphi"):
                    raise ValueError(f"{where}: temperature terms for unknown parameter {pname!r}")
                if (not isinstance(coeffs, (list, tuple)) or len(coeffs) != 5
                        or not all(isinstance(c, (int, float)) and not isinstance(c, bool) and math.isfinite(c)
                                   for c in coeffs)):
                    raise ValueError(f"{where}: temperature.{pname} must list 5 numbers (A1..A5)")
                tterms.append((pname, tuple(float(c) for c in coeffs)))
        binary[key] = BinaryPitzer(
            cation=key[0], anion=key[1],
            beta0=_num(e, "beta0", where), beta1=_num(e, "beta1", where),
            beta2=_num(e, "beta2", where, 0.0), cphi=_num(e, "cphi", where, 0.0),
            alpha1=alpha1, alpha2=alpha2, max_m=max_m, source=str(e.get("source", "")),
            temperature_terms=tuple(tterms), temperature_source=str(e.get("temperature_source", "")),
        )

    theta: dict[tuple[str, str], float] = {}
    for k, e in enumerate(data.get("theta") or []):
        if not isinstance(e, Mapping):
            raise ValueError(f"theta[{k}]: expected a mapping, got {e!r}")
        ions = e.get("ions")
        where = f"theta[{k}] {ions!r}"
        if not isinstance(ions, (list, tuple)) or len(ions) != 2:
            raise ValueError(f"{where}: 'ions' must list two ions")
        z = [_ion(i, where) for i in ions]
        if z[0] * z[1] <= 0 or ions[0] == ions[1]:
            raise ValueError(f"{where}: theta needs two different ions of the same sign")
        key2 = tuple(sorted(ions))
        if key2 in theta:
            raise ValueError(f"{where}: duplicate pair")
        theta[key2] = _num(e, "value", where)  # type: ignore[index]

    psi: dict[tuple[str, str, str], float] = {}
    for k, e in enumerate(data.get("psi") or []):
        if not isinstance(e, Mapping):
            raise ValueError(f"psi[{k}]: expected a mapping, got {e!r}")
        ions = e.get("ions")
        where = f"psi[{k}] {ions!r}"
        if not isinstance(ions, (list, tuple)) or len(ions) != 3:
            raise ValueError(f"{where}: 'ions' must list three ions")
        z = [_ion(i, where) for i in ions]
        pos = [i for i, q in zip(ions, z, strict=True) if q > 0]
        neg = [i for i, q in zip(ions, z, strict=True) if q < 0]
        like, other = (pos, neg) if len(pos) == 2 else (neg, pos)
        if len(like) != 2 or len(other) != 1 or like[0] == like[1]:
            raise ValueError(f"{where}: psi needs two different like-charged ions and one of opposite sign")
        key3 = (*sorted(like), other[0])
        if key3 in psi:
            raise ValueError(f"{where}: duplicate triplet")
        psi[key3] = _num(e, "value", where)  # type: ignore[index]

    kw: dict[str, Any] = {}
    if "b" in data:
        kw["b"] = _num(data, "b", "b")
        if kw["b"] <= 0:
            raise ValueError("b must be positive")
    ap = data.get("a_phi")
    if ap is not None:
        coeffs = ap.get("coefficients") if isinstance(ap, Mapping) else None
        if (not isinstance(coeffs, (list, tuple)) or len(coeffs) != 8
                or not all(isinstance(c, (int, float)) and not isinstance(c, bool) for c in coeffs)):
            raise ValueError("a_phi: 'coefficients' must list 8 numbers (Møller 1988 eq. 13)")
        kw["a_phi_coeffs"] = tuple(float(c) for c in coeffs)
    return PitzerParams(binary=binary, theta=theta, psi=psi, **kw)


# ---------------------------------------------------------------------------------------------------------
# The system
# ---------------------------------------------------------------------------------------------------------
class PitzerSystem:
    """Pitzer osmotic coefficient for a fixed set of ions, vectorised over compositions.

    Parameters
    ----------
    ions : sequence of ion ids (``K[+]``, ``SO4[2-]``, …), cations and anions in any order; the order
        fixes the last axis of every molality array passed to the methods. Neutral ids raise ValueError.
    params : PitzerParams

    Attributes
    ----------
    ions : tuple of str, the ion order of m arrays
    charges : int array [-]
    missing_pairs : tuple of (cation, anion) pairs without binary parameters; they are treated by the
        Debye–Hückel term only (beta = C = 0).

    Notes
    -----
    * Binary and mixing parameters are 25 °C values (May et al. 2011; Harvie, Møller & Weare 1984;
      Pitzer & Mayorga 1973; Pitzer & Kim 1974). A_phi follows temperature (Møller 1988 eq. 13), and so
      do the binary parameters of the pairs that carry temperature terms (``BinaryPitzer.
      temperature_terms``: the analytical form of PHREEQC's pitzer.dat, see :func:`temperature_basis`,
      for the Na-K-Ca-Mg-Cl-SO4 pairs; first derivatives of Pitzer 1991 Tables 12-13 for KNO3, NaNO3,
      KH2PO4, Ca(NO3)2, Mg(NO3)2). For NaCl against Pitzer, Peiper & Busey (1984) this holds within
      0.003 at 0-40 °C up to 2 mol/kg (without the terms: +0.027 at 1 mol/kg and 0 °C). Pairs without
      terms (ammonium, most phosphates) keep their 25 °C values; in dilute culture media
      (I < 0.1 mol/kg) that costs under about 0.5 %.
    * Like-charged ions of unlike charge (e.g. K+/Ca2+, Cl-/SO4 2-) get the unsymmetric-mixing terms
      E-theta of Pitzer (1975), with J(x) from Pitzer's eq. 47 empirical form (:func:`j_function`).
      In the osmotic coefficient only Phi^phi = theta + E-theta + I E-theta' enters, and
      E-theta + I E-theta' = z_i z_j / (8 I) [x_ij J'(x_ij) - x_ii J'(x_ii)/2 - x_jj J'(x_jj)/2],
      so only J' is evaluated.
    * No ion association or speciation: the caller supplies the free-ion molalities.

    References
    ----------
    Harvie, Møller & Weare (1984) Geochim Cosmochim Acta 48:723; Pitzer (1991), ch. 3; Pitzer (1975)
    J Solution Chem 4:249.
    """

    def __init__(self, ions: Sequence[str], params: PitzerParams):
        ions = tuple(ions)
        if len(set(ions)) != len(ions):
            raise ValueError(f"duplicate ion ids in {ions!r}")
        z = []
        for name in ions:
            q = parse_species(name).charge
            if q == 0:
                raise ValueError(f"{name!r} is not an ion; pass neutral solutes to their own model")
            z.append(q)
        self.ions: tuple[str, ...] = ions
        self.params = params
        self.b = float(params.b)
        self._a_coeffs = tuple(params.a_phi_coeffs)
        self._a_cache: dict[float, float] = {}    # T [K] -> A_phi, a few temperatures (see _a_phi_scalar)
        self._row_sums: tuple[tuple, _Parts | None] = ((), None)   # the last composition's full pass
        self._entry_cache: dict[float, list] = {}   # T [K] -> nonzero pair-matrix entries (see _entries)
        zv = np.array(z, dtype=float)
        self.charges = np.array(z, dtype=int)
        n = len(ions)
        self._n = n
        self._z2h = 0.5 * zv * zv                 # I = m @ (z²/2)
        self._absz = np.abs(zv)
        cat = [i for i in range(n) if z[i] > 0]
        an = [i for i in range(n) if z[i] < 0]
        self._cat = np.array(cat, dtype=np.intp)
        self._an = np.array(an, dtype=np.intp)

        # --- binary terms: stacked (K, n, n) matrices over the full ion index, contracted as m M m -------
        beta0 = np.zeros((n, n))
        cmat = np.zeros((n, n))
        exp_terms: dict[float, np.ndarray] = {}
        # temperature terms: per parameter matrix, the 5 coefficient matrices (see BinaryPitzer)
        d_beta0 = np.zeros((5, n, n))
        d_cmat = np.zeros((5, n, n))
        d_exp: dict[float, np.ndarray] = {}
        missing = []
        self._pairs: list[tuple[int, int, float]] = []      # (i_cation, i_anion, I at max_m)
        for i in cat:
            for j in an:
                bp = params.binary.get((ions[i], ions[j]))
                if bp is None:
                    missing.append((ions[i], ions[j]))
                    continue
                beta0[i, j] = bp.beta0
                cmat[i, j] = bp.cphi / (2.0 * math.sqrt(abs(z[i] * z[j])))
                tt = dict(bp.temperature_terms)
                for beta, alpha, pname in ((bp.beta1, bp.alpha1, "beta1"), (bp.beta2, bp.alpha2, "beta2")):
                    if beta != 0.0 or pname in tt:
                        exp_terms.setdefault(float(alpha), np.zeros((n, n)))[i, j] += beta
                    if pname in tt:
                        d_exp.setdefault(float(alpha), np.zeros((5, n, n)))[:, i, j] += tt[pname]
                if "beta0" in tt:
                    d_beta0[:, i, j] += tt["beta0"]
                if "cphi" in tt:
                    d_cmat[:, i, j] += np.asarray(tt["cphi"]) / (2.0 * math.sqrt(abs(z[i] * z[j])))
                g = math.gcd(z[i], -z[j])
                nu_c, nu_a = -z[j] // g, z[i] // g
                self._pairs.append((i, j, 0.5 * bp.max_m * (nu_c * z[i] ** 2 + nu_a * z[j] ** 2)))
        self.missing_pairs: tuple[tuple[str, str], ...] = tuple(missing)
        #: the lowest ionic strength [mol/kg] at which some pair's parameters are past their data
        self._min_pair_imax = min((imax for _, _, imax in self._pairs), default=math.inf)
        self._alphas = np.array(sorted(exp_terms), dtype=float)
        self._neg_alphas = -self._alphas
        self._neg_alpha_list = self._neg_alphas.tolist()
        self._nalpha = len(self._alphas)
        # like-charge theta_ij enters exactly as beta0 does (weight 1), so it shares beta0's matrix
        theta_m = np.zeros((n, n))
        idx = {name: k for k, name in enumerate(ions)}
        for (a, b_), v in params.theta.items():
            if a in idx and b_ in idx:
                theta_m[idx[a], idx[b_]] += v       # one triangle only: m Θ m counts each pair once
        mats = [beta0 + theta_m, cmat] + [exp_terms[a] for a in self._alphas]
        # m @ Mflat -> (..., K*n); reshape (..., K, n); times m and summed -> (..., K)
        self._K = len(mats)
        self._mflat = np.concatenate(mats, axis=1)          # (n, K*n)
        dmats = [d_beta0, d_cmat] + [d_exp.get(a, np.zeros((5, n, n))) for a in self._alphas]
        self._dflat = np.concatenate(dmats, axis=2)         # (5, n, K*n)
        self._has_dT = bool(np.any(self._dflat))
        # T [K] -> binary-term matrices at T: one entry per temperature in use (25 °C and the 0 °C of the
        # freezing-point figure no longer rebuild each other's), bounded by _T_CACHE_SIZE
        self._mflat_cache: dict[float, np.ndarray] = {298.15: self._mflat}

        # --- psi: sparse index list of triplets ---------------------------------------------------------
        ps_i, ps_j, ps_k, ps_v = [], [], [], []
        for (a, b_, c), v in params.psi.items():
            if a in idx and b_ in idx and c in idx and v != 0.0:
                ps_i.append(idx[a])
                ps_j.append(idx[b_])
                ps_k.append(idx[c])
                ps_v.append(v)
        self._ps_idx = np.array([ps_i, ps_j, ps_k], dtype=np.intp).reshape(3, -1)
        self._ps_v = np.array(ps_v, dtype=float)
        self._psi_list = list(zip(ps_i, ps_j, ps_k, [float(x) for x in ps_v], strict=True))
        self._has_psi = len(ps_v) > 0

        # --- unsymmetric mixing: groups of like sign and equal |z|; pair types of unlike |z| ---------------
        groups = sorted({(int(np.sign(q)), abs(q)) for q in z})
        gidx = {g: k for k, g in enumerate(groups)}
        gmat = np.zeros((n, len(groups)))
        for i, q in enumerate(z):
            gmat[i, gidx[(int(np.sign(q)), abs(q))]] = 1.0
        ptypes = [(g1, g2) for k1, g1 in enumerate(groups) for g2 in groups[k1 + 1:]
                  if g1[0] == g2[0] and g1[1] != g2[1]]
        self._has_etheta = len(ptypes) > 0
        # one matrix for all linear maps of m: I = m·z²/2, Z = m·|z|, group totals
        self._lin = np.column_stack([self._z2h, self._absz, gmat])
        self._group_members = [[i for i in range(n) if gmat[i, g]] for g in range(len(groups))]
        if self._has_etheta:
            prods = sorted({p for g1, g2 in ptypes for p in (g1[1] * g2[1], g1[1] ** 2, g2[1] ** 2)})
            pidx = {p: k for k, p in enumerate(prods)}
            w = np.zeros((len(prods), len(ptypes)))
            for k, (g1, g2) in enumerate(ptypes):
                w[pidx[g1[1] * g2[1]], k] += 1.0
                w[pidx[g1[1] ** 2], k] -= 0.5
                w[pidx[g2[1] ** 2], k] -= 0.5
            self._prods6 = 6.0 * np.array(prods, dtype=float)
            # combine w with z_i z_j / 8 so that Phi^E sum = (xJ' @ W) · S / I
            zz = np.array([g1[1] * g2[1] for g1, g2 in ptypes], dtype=float)
            self._ew = w * (zz / 8.0)
            self._pt_a = np.array([gidx[g1] for g1, _ in ptypes], dtype=np.intp)
            self._pt_b = np.array([gidx[g2] for _, g2 in ptypes], dtype=np.intp)
        # the same as Python lists, for the sums of one composition (_Parts, _Scaled)
        self._prods6_list = self._prods6.tolist() if self._has_etheta else []
        self._ew_rows = self._ew.tolist() if self._has_etheta else []
        self._pt_pairs = (list(zip(self._pt_a.tolist(), self._pt_b.tolist(), strict=True))
                          if self._has_etheta else [])
        self._z2h_list, self._absz_list = self._z2h.tolist(), self._absz.tolist()
        self._basis: dict[float, np.ndarray] = {}   # T [K] -> temperature_basis(T), a few temperatures
        self._entry_rows: dict[float, list] = {}    # T [K] -> _entries(T) grouped by k, for one row
        self._basis_shift: dict[tuple, np.ndarray] = {}  # (T, T_from) -> basis(T) - basis(T_from)

    # -----------------------------------------------------------------------------------------------------
    def a_phi(self, T: float) -> float | np.ndarray:
        """A_phi [kg^1/2 mol^-1/2] at T [K] with this system's coefficients."""
        return a_phi(T, self._a_coeffs)

    def _check(self, m: np.ndarray) -> np.ndarray:
        m = np.asarray(m, dtype=float)
        if m.ndim == 0 or m.shape[-1] != self._n:
            raise ValueError(f"molality array must have last axis of length {self._n} ({', '.join(self.ions)}),"
                             f" got shape {m.shape}")
        return m

    def osmotic_coefficient(self, m: np.ndarray, T: float) -> np.ndarray:
        """Molal osmotic coefficient phi [-] of the electrolyte mixture.

        Parameters
        ----------
        m : array (..., n_ions), free-ion molalities [mol/kg water] in ``self.ions`` order
        T : float, temperature [K] (A_phi, and binary parameters with temperature terms); an array
            broadcastable to m.shape[:-1] gives one temperature per row

        Returns
        -------
        phi : array of shape m.shape[:-1]; phi = -ln(a_w) / (M_w Σ m_i). Rows with Σ m = 0 give 1.0.

        Notes
        -----
        The caller is responsible for electroneutrality; the formula is evaluated as given for any m.
        """
        m = self._check(m)
        scalar_T = np.ndim(T) == 0
        if not scalar_T and self._has_dT:
            Tb = np.broadcast_to(np.asarray(T, dtype=float), m.shape[:-1])
            uniq = np.unique(Tb)
            if len(uniq) == 1:
                T, scalar_T = float(uniq[0]), True
            else:  # parameters differ per temperature: one pass per distinct temperature
                out = np.empty(m.shape[:-1])
                for t in uniq:
                    sel = Tb == t
                    out[sel] = self.osmotic_coefficient(m[sel], float(t))
                return out
        if m.ndim == 1 and scalar_T:
            return self._phi_row(m, T)
        mflat = self._mflat_at(T) if scalar_T else self._mflat
        lead = m.shape[:-1]
        mtot = m.sum(axis=-1)
        v = m @ self._lin                       # (..., 2 + n_groups): I, Z, group totals
        I = v[..., 0]
        empty = mtot <= 0.0
        any_empty = bool(empty.any())
        if any_empty:
            I = np.where(empty, 1.0, I)
            mtot = np.where(empty, 1.0, mtot)
        sqI = np.sqrt(I)
        A = self._a_phi_scalar(T) if scalar_T else np.asarray(a_phi(T, self._a_coeffs))

        # binary and theta terms: q[..., k] = m · M_k · m
        q = ((m @ mflat).reshape(*lead, self._K, self._n) * m[..., None, :]).sum(axis=-1)
        s = q[..., 0] + v[..., 1] * q[..., 1] - A * I * sqI / (1.0 + self.b * sqI)
        if self._nalpha:
            s = s + (np.exp(sqI[..., None] * self._neg_alphas) * q[..., 2:]).sum(axis=-1)
        if self._has_psi:
            s = s + m[..., self._ps_idx].prod(axis=-2) @ self._ps_v
        if self._has_etheta:
            G = v[..., 2:]
            S = G[..., self._pt_a] * G[..., self._pt_b]
            x = (A * sqI)[..., None] * self._prods6
            s = s + ((_x_dj(x) @ self._ew) * S).sum(axis=-1) / I

        phi = 1.0 + 2.0 * s / mtot
        if any_empty:
            phi = np.where(empty, 1.0, phi)
        return phi

    def _phi_row(self, m: np.ndarray, T: float) -> np.float64:
        """One composition: the same sums as the batch path, with Python floats for the scalars."""
        mtot = float(m.sum())
        if mtot <= 0.0:
            return np.float64(1.0)
        v = m @ self._lin
        I = float(v[0])
        sqI = math.sqrt(I)
        A = self._a_phi_scalar(T)
        q = (m @ self._mflat_at(T)).reshape(self._K, self._n) @ m
        s = float(q[0]) + float(v[1]) * float(q[1]) - A * I * sqI / (1.0 + self.b * sqI)
        if self._nalpha:
            s += float(np.exp(self._neg_alphas * sqI) @ q[2:])
        if self._has_psi:
            s += float(m[self._ps_idx].prod(axis=0) @ self._ps_v)
        if self._has_etheta:
            G = v[2:]
            s += float((_x_dj((A * sqI) * self._prods6) @ self._ew) @ (G[self._pt_a] * G[self._pt_b])) / I
        return np.float64(1.0 + 2.0 * s / mtot)

    def _entries(self, T: float) -> list[tuple[int, int, int, float]]:
        """Nonzero (k, i, j, value) of the pair matrices at T [K] (k: beta0 + theta, C, one per alpha), in a
        fixed order: the sums of :class:`_Parts` run over them the same way for one row and for a batch."""
        T = float(T)
        got = self._entry_cache.get(T)
        if got is None:
            M = self._mflat_at(T).reshape(self._n, self._K, self._n)
            got = [(k, i, j, float(M[i, k, j])) for k in range(self._K) for i in range(self._n)
                   for j in range(self._n) if M[i, k, j] != 0.0]
            if len(self._entry_cache) >= _T_CACHE_SIZE:
                self._entry_cache = {}
            self._entry_cache[T] = got
        return got

    def scaled(self, m0: np.ndarray, T: float) -> Callable:
        """The osmotic coefficient [-] of the ion composition m0 [mol/kg] scaled by t, as a function of t.

        Parameters
        ----------
        m0 : array (n_ions,) or (B, n_ions), free-ion molalities [mol/kg] in ``self.ions`` order (one row
            may come as a list of Python floats)
        T : float, temperature [K]

        Returns
        -------
        phi(t) : for m0 of one row, a function of a float t > 0 returning a float; for a batch, of an
        array t (B,) returning an array (B,). phi(t) is :meth:`osmotic_coefficient` (t · m0, T).

        Notes
        -----
        One full pass over the ion pairs and triplets at m0, then each call only rescales: the pair sums
        scale as t², the triplet sums and Z·(pair sum) as t³, I and the group totals as t. What is left per
        call is the Debye–Hückel term, the exponentials of the binary terms and the E-theta function of
        √I. At t = 1 the result is the full pass's own number (bit for bit); elsewhere it agrees with it
        to rounding (about 1e-15 relative).
        """
        if type(m0) is list and len(m0) == self._n and type(T) is float:
            row = m0  # one row as Python floats: no array to make
        else:
            m0 = self._check(m0)
            row = m0.tolist() if m0.ndim == 1 and np.ndim(T) == 0 else None
        if row is not None:
            # the last composition's full pass serves every temperature (a medium at its own temperature,
            # then at 0 °C for the freezing point): one tuple, replaced atomically (safe across threads)
            key = tuple(row)
            last_key, sums = self._row_sums
            if last_key != key:
                sums = _Parts(self, row, T)
                self._row_sums = (key, sums)
            return _Scaled(self, sums, T)
        if m0.ndim == 2 and np.ndim(T) == 0:
            return _Scaled(self, _Parts(self, list(m0.T), float(T)), float(T))
        return lambda t: self.osmotic_coefficient(m0 * np.asarray(t, dtype=float)[..., None], T)

    def _mflat_at(self, T: float) -> np.ndarray:
        """Binary-term matrices at T [K]: 25 °C values plus the temperature terms where given."""
        if not self._has_dT:
            return self._mflat
        T = float(T)
        mflat = self._mflat_cache.get(T)
        if mflat is None:
            f = temperature_basis(T)
            mflat = self._mflat + np.tensordot(f, self._dflat, axes=1)
            if len(self._mflat_cache) >= _T_CACHE_SIZE:   # a sweep over many temperatures: start afresh
                self._mflat_cache = {}
            self._mflat_cache[T] = mflat                  # one dict item set: safe across worker threads
        return mflat

    def _basis_at(self, T: float) -> np.ndarray:
        """:func:`temperature_basis` at T [K], kept for a few temperatures."""
        got = self._basis.get(T)
        if got is None:
            got = temperature_basis(T)
            if len(self._basis) >= _T_CACHE_SIZE:
                self._basis = {}
            self._basis[T] = got
        return got

    def _shift(self, T: float, T_from: float) -> np.ndarray:
        """``_basis_at(T) - _basis_at(T_from)`` (the same array), kept for a few pairs of temperatures."""
        key = (T, T_from)
        got = self._basis_shift.get(key)
        if got is None:
            got = self._basis_at(T) - self._basis_at(T_from)
            if len(self._basis_shift) >= _T_CACHE_SIZE:
                self._basis_shift = {}
            self._basis_shift[key] = got
        return got

    def _entries_by_k(self, T: float) -> list[list[tuple[int, int, float]]]:
        """:meth:`_entries` at T [K] as one list of (i, j, value) per k, each in the order of ``_entries``."""
        got = self._entry_rows.get(T)
        if got is None:
            got = [[] for _ in range(self._K)]
            for k, i, j, val in self._entries(T):
                got[k].append((i, j, val))
            if len(self._entry_rows) >= _T_CACHE_SIZE:
                self._entry_rows = {}
            self._entry_rows[T] = got
        return got

    def _a_phi_scalar(self, T: float) -> float:
        T = float(T)
        A = self._a_cache.get(T)
        if A is None:
            A = float(a_phi(T, self._a_coeffs))
            if len(self._a_cache) >= _T_CACHE_SIZE:
                self._a_cache = {}
            self._a_cache[T] = A
        return A

    def osmolality(self, m: np.ndarray, T: float) -> np.ndarray:
        """Osmolality phi · Σ m_i [osmol/kg water], shape m.shape[:-1]."""
        m = self._check(m)
        return self.osmotic_coefficient(m, T) * m.sum(axis=-1)

    def water_activity(self, m: np.ndarray, T: float) -> np.ndarray:
        """Water activity a_w = exp(-M_w phi Σ m_i) [-] of the electrolyte solution, shape m.shape[:-1]."""
        return np.exp(-M_WATER * self.osmolality(m, T))

    @property
    def min_pair_ionic_strength(self) -> float:
        """The lowest ionic strength [mol/kg] at which some pair's parameters are past their data (inf
        without pairs): below it :meth:`max_molality_exceeded` finds nothing."""
        return self._min_pair_imax

    def max_molality_exceeded(self, m: np.ndarray) -> list[tuple[str, str]]:
        """Pairs present whose binary parameters are used beyond their fitted range.

        Parameters
        ----------
        m : 1-D array (n_ions,), molalities [mol/kg] in ``self.ions`` order

        Returns
        -------
        list of (cation, anion) for pairs with both ions > 0 where the ionic strength of m exceeds the
        ionic strength of the pair's binary solution at its ``max_m`` (a validity warning).
        """
        m = self._check(m)
        if m.ndim != 1:
            raise ValueError("max_molality_exceeded takes one composition (1-D array)")
        I = float(m @ self._z2h)
        if not self._min_pair_imax < I:  # below every pair's range (a dilute medium): nothing to look at
            return []
        ml = m.tolist()
        return [(self.ions[i], self.ions[j]) for i, j, imax in self._pairs
                if ml[i] > 0 and ml[j] > 0 and imax < I]


# ---------------------------------------------------------------------------------------------------------
# One full pass, then scaled updates (see PitzerSystem.scaled)
# ---------------------------------------------------------------------------------------------------------
class _Parts:
    """One full pass over the pairs and triplets of an ion composition at T [K], the sums that scale with it.

    ``m`` is a list with one entry per ion: a float (one row) or an array (B,) (a batch, one array per
    ion). Every sum runs over the ions, pairs and triplets in one fixed order with one operation per term,
    so that a row and the same row inside a batch give the same bits (numpy's reductions and matrix
    products sum in an order that depends on the batch's shape).
    """

    __slots__ = ("T", "mtot", "I0", "Z0", "q", "dq", "psi", "S0", "empty", "W")

    def __init__(self, system: PitzerSystem, m: list, T: float) -> None:
        self.T = float(T)
        z2h, absz = system._z2h_list, system._absz_list
        mtot, I0, Z0 = m[0], m[0] * z2h[0], m[0] * absz[0]
        for j in range(1, system._n):
            mtot = mtot + m[j]
            I0 = I0 + m[j] * z2h[j]
            Z0 = Z0 + m[j] * absz[j]
        if isinstance(m[0], float):
            # one row: each k's terms added in a local, in _entries' order (0.0 + the first term, as below)
            q = []
            for terms in system._entries_by_k(T):
                acc = 0.0
                for i, j, val in terms:
                    acc = acc + (val * m[i]) * m[j]
                q.append(acc)
        else:
            q = [0.0] * system._K
            for k, i, j, val in system._entries(T):
                q[k] = q[k] + (val * m[i]) * m[j]
        psi = 0.0
        for a, b, c, val in system._psi_list:
            psi = psi + ((m[a] * m[b]) * m[c]) * val
        S0 = []
        if system._has_etheta:
            G = []
            for members in system._group_members:
                g = m[members[0]]
                for j in members[1:]:
                    g = g + m[j]
                G.append(g)
            S0 = [G[a] * G[b] for a, b in system._pt_pairs]
        self.mtot, self.I0, self.Z0, self.q, self.psi, self.S0 = mtot, I0, Z0, q, psi, S0
        self.empty = mtot <= 0.0
        self.dq = None
        self.W = None  # the E-theta weights, made by the first _Scaled (they do not depend on T)
        if system._has_dT and isinstance(mtot, float):  # one row: sums at other temperatures without a pass
            mv = np.array(m)
            self.dq = (mv @ system._dflat).reshape(5, system._K, system._n) @ mv


class _Scaled:
    """φ of an ion composition m0 scaled by t (a float, or an array (B,) for a batch), at T [K] (see
    :meth:`PitzerSystem.scaled`): the sums of :class:`_Parts` (made at this or another temperature)
    rescaled, with the same arithmetic for a row (Python floats) and a batch (numpy arrays)."""

    __slots__ = ("phi1", "_row", "_empty", "_mtot", "_I0", "_q0", "_zq1", "_qa", "_na", "_psi", "_A", "_b",
                 "_W")

    def __init__(self, system: PitzerSystem, parts: _Parts, T: float) -> None:
        q = parts.q
        T = float(T)
        if T != parts.T and parts.dq is not None:
            dq = system._shift(T, parts.T) @ parts.dq
            q = [a + d for a, d in zip(q, dq.tolist(), strict=True)]  # elementwise: the bits of array + array
        self._row = isinstance(parts.mtot, float)
        self._empty = parts.empty
        row_empty = self._row and self._empty
        self._mtot = 1.0 if row_empty else (np.where(parts.empty, 1.0, parts.mtot) if not self._row
                                             else parts.mtot)
        self._I0 = 1.0 if row_empty else (np.where(parts.empty, 1.0, parts.I0) if not self._row else parts.I0)
        self._A, self._b = system._a_phi_scalar(T), system.b
        self._q0, self._zq1 = q[0], parts.Z0 * q[1]
        self._qa = q[2:]
        self._na = system._neg_alpha_list
        self._psi = parts.psi
        W = parts.W
        if W is None:
            W = parts.W = list(zip(system._prods6_list, _weights(system._ew_rows, parts.S0), strict=True)) \
                if parts.S0 else []
        self._W = W
        self.phi1 = 1.0 if row_empty else None  # φ at t = 1, made when first asked

    def __call__(self, t):
        """φ [-] at the molalities t · m0 (t > 0 [-]; a float for one row, an array (B,) for a batch)."""
        if self._row:
            if self._empty:
                return 1.0
            if t == 1.0:
                if self.phi1 is None:
                    self.phi1 = self._phi_row(1.0)
                return self.phi1
            return self._phi_row(t)
        phi = self._phi(np.asarray(t, dtype=float))
        return np.where(self._empty, 1.0, phi)

    def _phi(self, t):
        """φ [-] of a batch at scales t (B,); one row goes through :meth:`_phi_row`, the same arithmetic."""
        exp, sqrt, xdj = np.exp, np.sqrt, _x_dj
        I = t * self._I0
        sqI = sqrt(I)
        t2 = t * t
        t3 = t2 * t
        A = self._A
        s = t2 * self._q0 + t3 * self._zq1 - A * I * sqI / (1.0 + self._b * sqI)
        for qa, na in zip(self._qa, self._na, strict=True):
            s = s + t2 * (qa * exp(na * sqI))
        s = s + t3 * self._psi
        if self._W:
            x = A * sqI
            acc = 0.0
            for p6, w in self._W:
                acc = acc + xdj(x * p6) * w
            s = s + t * acc / self._I0
        return 1.0 + 2.0 * s / (t * self._mtot)

    def _phi_row(self, t: float) -> float:
        """:meth:`_phi` of one row (t a float), written out: the same operations on the same floats in the
        same order, with the algebra of :func:`_x_dj` inlined (a row's φ is called a few times per ZSR solve)."""
        exp = math.exp
        I = t * self._I0
        sqI = math.sqrt(I)
        t2 = t * t
        t3 = t2 * t
        A = self._A
        s = t2 * self._q0 + t3 * self._zq1 - A * I * sqI / (1.0 + self._b * sqI)
        for qa, na in zip(self._qa, self._na, strict=True):
            s = s + t2 * (qa * exp(na * sqI))
        s = s + t3 * self._psi
        if self._W:
            log, c1, c2n, c3, c4, one_c2 = math.log, _J_C1, -_J_C2, _J_C3, _J_C4, _ONE_PLUS_J_C2
            x = A * sqI
            acc = 0.0
            for p6, w in self._W:
                xp = x * p6
                lx = log(xp)
                c3xc4 = c3 * exp(c4 * lx)
                ex = c1 * exp(c2n * lx - c3xc4)
                d = 4.0 + ex
                acc = acc + xp * (4.0 + ex * (one_c2 + c4 * c3xc4)) / (d * d) * w
            s = s + t * acc / self._I0
        return 1.0 + 2.0 * s / (t * self._mtot)


#: 1 + C2 of the J' algebra (:func:`_x_dj`), added once: ``1.0 + _J_C2 + ...`` adds it first too
_ONE_PLUS_J_C2 = 1.0 + _J_C2


def _weights(ew: list, S0: list) -> list:
    """W_k = Σ_p ew[k][p] S0[p], summed in order p = 0, 1, ... (ew: rows of floats; S0: floats, or arrays
    (B,))."""
    out = []
    for row in ew:
        w = 0.0
        for e, s0 in zip(row, S0, strict=True):
            w = w + e * s0
        out.append(w)
    return out
