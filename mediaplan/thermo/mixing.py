"""Water activity of a whole medium by the Zdanovskii–Stokes–Robinson (ZSR) rule.

The medium is split into solute groups whose binary solutions with water are modelled separately:
the electrolytes together (a mixed-electrolyte Pitzer solution of fixed ion proportions, scaled),
each neutral solute (Norrish or ideal), and each PEG grade (Michel equations). ZSR states that at the
mixture's water activity a_w

    sum_g  m_g / m_g°(a_w) = 1,

where m_g is the group's amount in the mixture and m_g°(a_w) the amount of the binary solution of
that group alone with the same water activity. We solve it for the mixture osmolality
y = -ln(a_w)/M_w; ``fraction_g = m_g / m_g°`` then splits y among the groups (they sum to 1).

References
----------
Zdanovskii AB (1948) Trudy Solyanoi Laboratorii Akad Nauk SSSR 2:1-170 (electrolytes).
Stokes RH, Robinson RA (1966) J Phys Chem 70:2126-2131 (non-electrolytes; "ideal mixing" of
isopiestic solutions).
Clegg SL, Seinfeld JH (2004) J Phys Chem A 108:1008 (ZSR with a mixed-electrolyte component).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from mediaplan.thermo import neutral as _neutral
from mediaplan.thermo import peg as _peg
from mediaplan.thermo.constants import M_WATER
from mediaplan.thermo.params import NeutralParams

_MAX_OUTER = 30
_TOL = 1e-11
#: convergence of the electrolyte group's osmotic coefficient between Pitzer evaluations
_PHI_TOL = 1e-9


@dataclass
class MixtureInput:
    """Amounts of every solute group, batched over leading axis B.

    ion_m : (B, n_ions) molalities [mol/kg] in ``pitzer.ions`` order (or None)
    neutral_m : (B, k) molalities [mol/kg] of the neutral solutes in ``neutral`` order
    peg_c : (B, p) PEG concentrations [g PEG / g water] of the grades in ``peg_grades``
    T : temperature [K]
    """

    pitzer: object | None
    ion_m: np.ndarray | None
    neutral: Sequence[NeutralParams]
    neutral_m: np.ndarray
    peg_grades: Sequence[int]
    peg_c: np.ndarray
    T: float


@dataclass
class MixtureResult:
    """ZSR solution (arrays of shape (B,) or (B, k)).

    osmolality : [osmol/kg] = -ln(a_w)/M_w of the mixture
    ideal : [osmol/kg] the van't Hoff sum of molalities (PEG counted by its number-average moles)
    electrolyte_phi : Pitzer osmotic coefficient of the electrolyte group at the ZSR state (1 if none)
    electrolyte_phi_own : Pitzer osmotic coefficient at the medium's own ion molalities (NaN after a warm
        start, which does not need it)
    fraction_electrolyte, fraction_neutral, fraction_peg : each group's share of the osmolality
    """

    osmolality: np.ndarray
    ideal: np.ndarray
    electrolyte_phi: np.ndarray
    electrolyte_phi_own: np.ndarray
    fraction_electrolyte: np.ndarray
    fraction_neutral: np.ndarray
    fraction_peg: np.ndarray
    #: solver state of a single-composition solve (osmolality, isopiestic amounts, power-law exponent),
    #: usable as a warm start for the same composition at another temperature
    state: tuple | None = None


def _ion_phi(pitzer, ion_m: np.ndarray, scale: np.ndarray, T: float) -> np.ndarray:
    return np.asarray(pitzer.osmotic_coefficient(ion_m * scale[:, None], T), dtype=float)


def zsr_osmolality(inp: MixtureInput, *, start: tuple | None = None) -> MixtureResult:
    """Solve the ZSR rule for the osmolality of the mixture (vectorised over B rows).

    Notes
    -----
    Unknowns: the mixture osmolality y and, for each neutral solute and PEG grade j, the amount x_j
    of its binary solution that has the same water activity. Equations: O_j(x_j) = y for every j
    (O_j: binary osmolality), and Σ_j m_j/x_j + r_e(y) = 1, where the electrolytes, at scale s of
    their own ion molalities, contribute r_e = 1/s with s·M_e·φ_e(s) = y (M_e = Σ m_ions).
    One Newton step on the whole system reduces to a scalar equation in δy (δx_j = (δy − R_j)/O_j');
    φ_e is refreshed by one Pitzer evaluation per step at s = y/(M_e φ_e). Each step costs one
    evaluation of every binary model and of the Pitzer sum; five to seven steps reach 1e-12.
    """
    if np.ndim(inp.T) == 0 and _single_row(inp):
        return _zsr_one(inp, start)
    nm = np.atleast_2d(np.asarray(inp.neutral_m, dtype=float)) if len(inp.neutral) else None
    pc = np.atleast_2d(np.asarray(inp.peg_c, dtype=float)) if len(inp.peg_grades) else None
    im = (np.atleast_2d(np.asarray(inp.ion_m, dtype=float))
          if inp.pitzer is not None and inp.ion_m is not None else None)
    B = next(a.shape[0] for a in (im, nm, pc, np.zeros((1, 0))) if a is not None)
    nm = np.zeros((B, 0)) if nm is None else nm
    pc = np.zeros((B, 0)) if pc is None else pc
    T = inp.T
    M_e = im.sum(axis=1) if im is not None else np.zeros(B)
    has_e = M_e > 0
    phi_own = _ion_phi(inp.pitzer, im, np.ones(B), T) if im is not None else np.ones(B)
    # neutral solutes: only columns in use, all at once (stacked Norrish constants)
    used_n = [j for j in range(nm.shape[1]) if np.any(nm[:, j] > 0)]
    stacked = _neutral.stack([inp.neutral[j] for j in used_n]) if used_n else None
    mN = nm[:, used_n]
    used_p = [j for j in range(pc.shape[1]) if np.any(pc[:, j] > 0)]
    cP = pc[:, used_p]
    grades = [inp.peg_grades[j] for j in used_p]

    def binaries(xN, xP):
        """Binary osmolalities and their derivatives of every neutral and PEG group."""
        if stacked is not None:
            oN = _neutral.binary_osmolality(xN, stacked)
            dN = _neutral.binary_osmolality_dm(xN, stacked)
        else:
            oN = dN = np.zeros((B, 0))
        oP = np.empty_like(xP)
        dP = np.empty_like(xP)
        for k, g in enumerate(grades):
            oP[:, k] = _peg.peg_osmolality(xP[:, k], T, g)
            dP[:, k] = _peg.peg_osmolality_dc(xP[:, k], T, g)
        return oN, dN, oP, dP

    # additive first guess
    oN0, _, oP0, _ = binaries(mN, cP)
    y = M_e * phi_own + oN0.sum(axis=1) + oP0.sum(axis=1)
    active = y > 0
    y = np.where(active, y, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        xN = np.where(mN > 0, mN * (y[:, None] / np.where(oN0 > 0, oN0, 1.0)), 1.0)
        xP = np.where(cP > 0, cP * (y[:, None] / np.where(oP0 > 0, oP0, 1.0)), 1.0)
    # electrolyte group: local power law phi_e(s) ≈ phi_c (s/s_c)^g around the last Pitzer point
    s_c = np.ones(B)
    phi_c = phi_own.copy()
    g = np.zeros(B)
    Me = np.where(has_e, M_e, 1.0)

    def e_scale(y):
        return np.where(has_e, (y * s_c**g / (Me * phi_c)) ** (1.0 / (1.0 + g)), 1.0)

    maskN = mN > 0
    maskP = cP > 0
    for _ in range(_MAX_OUTER):
        oN, dN, oP, dP = binaries(xN, xP)
        RN = np.where(maskN, oN - y[:, None], 0.0)
        RP = np.where(maskP, oP - y[:, None], 0.0)
        re = np.where(has_e, 1.0 / e_scale(y), 0.0)
        F = re + np.where(maskN, mN / xN, 0.0).sum(axis=1) + np.where(maskP, cP / xP, 0.0).sum(axis=1) - 1.0
        # d(m/x)/dx = -m/x^2 ; δx = (δy - R)/O' ; d r_e/dy = -r_e / ((1+g) y)
        aN = np.where(maskN, mN / xN**2 / dN, 0.0)
        aP = np.where(maskP, cP / xP**2 / dP, 0.0)
        denom = -re / ((1.0 + g) * y) - aN.sum(axis=1) - aP.sum(axis=1)
        rhs = -F - (aN * RN).sum(axis=1) - (aP * RP).sum(axis=1)
        with np.errstate(divide="ignore", invalid="ignore"):
            dy = np.where(active & (denom != 0), rhs / denom, 0.0)
        y_new = np.clip(y + dy, 0.2 * y, 5.0 * y)
        dy = y_new - y
        xN = np.where(maskN, np.maximum(xN + (dy[:, None] - RN) / dN, 0.2 * xN), xN)
        xP = np.where(maskP, np.maximum(xP + (dy[:, None] - RP) / dP, 0.2 * xP), xP)
        y = y_new
        dphi = 0.0
        if im is not None:
            s_new = e_scale(y)
            phi_pred = phi_c * (s_new / s_c) ** g
            phi_new = np.where(has_e, _ion_phi(inp.pitzer, im, s_new, T), 1.0)
            dphi = float(np.max(np.abs(phi_new - phi_pred))) if B else 0.0
            with np.errstate(divide="ignore", invalid="ignore"):
                ls = np.log(s_new / s_c)
                g = np.where(has_e & (np.abs(ls) > 1e-9), np.log(phi_new / phi_c) / np.where(ls != 0, ls, 1.0), g)
            g = np.clip(g, -0.5, 2.0)
            s_c, phi_c = s_new, phi_new
        if (np.all(np.abs(dy) <= _TOL * y) and dphi <= _PHI_TOL
                and np.all(np.abs(RN) <= 1e-10 * y[:, None]) and np.all(np.abs(RP) <= 1e-10 * y[:, None])):
            break
    phi_hat = phi_c
    y = np.where(active, y, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        fe = np.where(active & has_e, 1.0 / e_scale(np.where(active, y, 1.0)), 0.0)
    fn = np.zeros((B, nm.shape[1]))
    fn[:, used_n] = np.where(maskN & active[:, None], mN / xN, 0.0)
    fp = np.zeros((B, pc.shape[1]))
    fp[:, used_p] = np.where(maskP & active[:, None], cP / xP, 0.0)
    peg_mol = np.zeros(B)
    for j, g in enumerate(inp.peg_grades):
        peg_mol = peg_mol + pc[:, j] * 1000.0 / g
    ideal = M_e + nm.sum(axis=1) + peg_mol
    return MixtureResult(y, ideal, phi_hat, phi_own, fe, fn, fp)


def _single_row(inp: MixtureInput) -> bool:
    for a in (inp.ion_m, inp.neutral_m, inp.peg_c):
        if a is not None and np.ndim(a) == 2 and np.shape(a)[0] != 1:
            return False
    return True


def _zsr_one(inp: MixtureInput, start: tuple | None = None) -> MixtureResult:
    """The same Newton system as :func:`zsr_osmolality` for one composition, in Python floats.

    Numpy's per-call overhead dominates a single small row; this path is several times faster and is
    checked against the vectorised one in the tests.
    """
    T = float(inp.T)
    im = None
    if inp.pitzer is not None and inp.ion_m is not None:
        im = np.asarray(inp.ion_m, dtype=float).reshape(-1)
    M_e = float(im.sum()) if im is not None else 0.0
    has_e = M_e > 0
    warm = start is not None and start[0] > 0
    if im is None:
        phi_own = 1.0
    elif warm and has_e:
        phi_own = math.nan  # not needed to restart from a solved state (see MixtureResult.electrolyte_phi_own)
    else:
        phi_own = float(inp.pitzer.osmotic_coefficient(im, T))
    nm = np.asarray(inp.neutral_m, dtype=float).reshape(-1) if len(inp.neutral) else np.zeros(0)
    pc = np.asarray(inp.peg_c, dtype=float).reshape(-1) if len(inp.peg_grades) else np.zeros(0)
    Mw = M_WATER
    # neutral groups: (index, m, K); Norrish O(x) = (ln(1+u) + K (u/(1+u))^2)/Mw, u = Mw x
    # solutes with the same binary model form one ZSR group (sum m / x(y) is then exact), so the many
    # trace organics that follow Raoult's law cost one group, not one each
    by_model: dict[tuple, list[int]] = {}
    for j, p in enumerate(inp.neutral):
        if nm[j] > 0:
            by_model.setdefault(("n", 0.0 if p.model == "ideal" else float(p.K)), []).append(j)
    groups = []
    members: list[list[int]] = []
    for (kind, K), js in by_model.items():
        groups.append((kind, js[0], float(sum(nm[j] for j in js)), K))
        members.append(js)
    for j, g in enumerate(inp.peg_grades):
        if pc[j] > 0:
            groups.append(("p", j, float(pc[j]), g))
            members.append([j])

    def binary(kind, x, K):
        if kind == "n":
            u = Mw * x
            d = 1.0 + u
            xs = u / d
            return (math.log1p(u) + K * xs * xs) / Mw, 1.0 / d + 2.0 * K * xs / (d * d)
        return float(_peg.peg_osmolality(x, T, K)), float(_peg.peg_osmolality_dc(x, T, K))

    y = M_e * (1.0 if math.isnan(phi_own) else phi_own)
    x = []
    for kind, _j, m, K in groups:
        o, _ = binary(kind, m, K)
        y += o
        x.append(m)
    fe = 0.0
    if y <= 0:
        ideal = M_e + float(nm.sum()) + sum(float(pc[j]) * 1000.0 / g for j, g in enumerate(inp.peg_grades))
        return MixtureResult(np.zeros(1), np.array([ideal]), np.ones(1), np.array([phi_own]), np.zeros(1),
                             np.zeros((1, len(inp.neutral))), np.zeros((1, len(inp.peg_grades))))
    x = [m * y / binary(kind, m, K)[0] for (kind, _j, m, K) in groups]
    s_c, phi_c, g_exp = 1.0, phi_own, 0.0
    if warm and len(start[1]) == len(x):
        # the same composition solved at another temperature: restart at its state, with phi at this T
        y, x, g_exp, s_c = start[0], list(start[1]), start[2], start[3]
        if has_e:
            phi_c = float(inp.pitzer.osmotic_coefficient(im * s_c, T))
    Me = M_e if has_e else 1.0

    def e_scale(yv):
        return (yv * s_c**g_exp / (Me * phi_c)) ** (1.0 / (1.0 + g_exp)) if has_e else 1.0

    last_dphi = float("inf") if has_e else 0.0
    for _ in range(_MAX_OUTER):
        re = 1.0 / e_scale(y) if has_e else 0.0
        F = re - 1.0
        denom = -re / ((1.0 + g_exp) * y)
        rhs_extra = 0.0
        parts = []
        maxR = 0.0
        for (kind, _j, m, K), xi in zip(groups, x, strict=True):
            o, d = binary(kind, xi, K)
            R = o - y
            a = m / (xi * xi) / d
            F += m / xi
            denom -= a
            rhs_extra += a * R
            parts.append((R, d))
            maxR = max(maxR, abs(R))
        dy = (-F - rhs_extra) / denom if denom != 0 else 0.0
        y_new = min(max(y + dy, 0.2 * y), 5.0 * y)
        dy = y_new - y
        x = [max(xi + (dy - R) / d, 0.2 * xi) for xi, (R, d) in zip(x, parts, strict=True)]
        y = y_new
        if abs(dy) <= _TOL * y and last_dphi <= _PHI_TOL and maxR <= 1e-10 * y:
            break  # the electrolyte group had already settled: no further Pitzer evaluation needed
        dphi = 0.0
        if has_e:
            s_new = e_scale(y)
            phi_pred = phi_c * (s_new / s_c) ** g_exp
            phi_new = float(inp.pitzer.osmotic_coefficient(im * s_new, T))
            dphi = abs(phi_new - phi_pred)
            ls = math.log(s_new / s_c)
            if abs(ls) > 1e-9:
                g_exp = min(max(math.log(phi_new / phi_c) / ls, -0.5), 2.0)
            s_c, phi_c = s_new, phi_new
        last_dphi = dphi
        if abs(dy) <= _TOL * y and dphi <= _PHI_TOL and maxR <= 1e-10 * y:
            break
    fe = 1.0 / e_scale(y) if has_e else 0.0
    fn = np.zeros((1, len(inp.neutral)))
    fp = np.zeros((1, len(inp.peg_grades)))
    for (kind, _j, _m, _K), xi, js in zip(groups, x, members, strict=True):
        for j in js:
            if kind == "n":
                fn[0, j] = nm[j] / xi
            else:
                fp[0, j] = pc[j] / xi
    ideal = M_e + float(nm.sum()) + sum(float(pc[j]) * 1000.0 / g for j, g in enumerate(inp.peg_grades))
    return MixtureResult(np.array([y]), np.array([ideal]), np.array([phi_c]), np.array([phi_own]),
                         np.array([fe]), fn, fp, state=(y, tuple(x), g_exp, s_c))
