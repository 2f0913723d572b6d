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

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from mediaplan.thermo import neutral as _neutral
from mediaplan.thermo import peg as _peg
from mediaplan.thermo.params import NeutralParams

_MAX_OUTER = 30
_TOL = 1e-12


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
    electrolyte_phi_own : Pitzer osmotic coefficient at the medium's own ion molalities
    fraction_electrolyte, fraction_neutral, fraction_peg : each group's share of the osmolality
    """

    osmolality: np.ndarray
    ideal: np.ndarray
    electrolyte_phi: np.ndarray
    electrolyte_phi_own: np.ndarray
    fraction_electrolyte: np.ndarray
    fraction_neutral: np.ndarray
    fraction_peg: np.ndarray


def _neutral_terms(y: np.ndarray, params: Sequence[NeutralParams], m: np.ndarray):
    """Sum over neutral solutes of m/x(y) and its derivative in y; also each m/x."""
    B = y.shape[0]
    total = np.zeros(B)
    dtotal = np.zeros(B)
    fr = np.zeros((B, len(params)))
    for j, p in enumerate(params):
        mj = m[:, j]
        if not np.any(mj > 0):
            continue
        x = _neutral.molality_at_osmolality(y, p)
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.where(mj > 0, mj / x, 0.0)
            dxdy = 1.0 / _neutral.binary_osmolality_dm(x, p)
            dr = np.where(mj > 0, -mj / x**2 * dxdy, 0.0)
        fr[:, j] = r
        total += r
        dtotal += dr
    return total, dtotal, fr


def _peg_terms(y: np.ndarray, grades: Sequence[int], c: np.ndarray, T: float):
    B = y.shape[0]
    total = np.zeros(B)
    dtotal = np.zeros(B)
    fr = np.zeros((B, len(grades)))
    for j, g in enumerate(grades):
        cj = c[:, j]
        if not np.any(cj > 0):
            continue
        x = _peg.peg_concentration_at_osmolality(y, T, g)
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.where(cj > 0, cj / x, 0.0)
            dxdy = 1.0 / _peg.peg_osmolality_dc(x, T, g)
            dr = np.where(cj > 0, -cj / x**2 * dxdy, 0.0)
        fr[:, j] = r
        total += r
        dtotal += dr
    return total, dtotal, fr


def _ion_phi(pitzer, ion_m: np.ndarray, scale: np.ndarray, T: float) -> np.ndarray:
    return np.asarray(pitzer.osmotic_coefficient(ion_m * scale[:, None], T), dtype=float)


def zsr_osmolality(inp: MixtureInput) -> MixtureResult:
    """Solve the ZSR rule for the osmolality of the mixture (vectorised over B rows).

    Notes
    -----
    With the electrolyte group at scale s (ion molalities s·m), its binary osmolality is
    O_e(s) = s·M_e·φ_e(s), M_e = Σ m_ions. We iterate on φ_e: hold φ̂ fixed, solve the scalar ZSR
    equation  M_e φ̂ / y + Σ_neutral m_j/x_j(y) + Σ_PEG c_k/x_k(y) = 1  for y by safeguarded Newton,
    then update φ̂ = φ_e(y / (M_e φ̂)). φ_e varies slowly with s, so two to four Pitzer evaluations
    reach 1e-12. Without electrolytes the Newton solve alone is exact.
    """
    nm = np.atleast_2d(np.asarray(inp.neutral_m, dtype=float)) if len(inp.neutral) else None
    pc = np.atleast_2d(np.asarray(inp.peg_c, dtype=float)) if len(inp.peg_grades) else None
    im = np.atleast_2d(np.asarray(inp.ion_m, dtype=float)) if inp.pitzer is not None and inp.ion_m is not None else None
    B = next(a.shape[0] for a in (im, nm, pc, np.zeros((1, 0))) if a is not None)
    if nm is None:
        nm = np.zeros((B, 0))
    if pc is None:
        pc = np.zeros((B, 0))
    M_e = im.sum(axis=1) if im is not None else np.zeros(B)
    has_e = M_e > 0
    phi_own = _ion_phi(inp.pitzer, im, np.ones(B), inp.T) if im is not None else np.ones(B)
    phi_hat = phi_own.copy()
    # additive first guess: each group's binary osmolality at its own amount
    y = M_e * phi_hat
    for j, p in enumerate(inp.neutral):
        y = y + _neutral.binary_osmolality(nm[:, j], p)
    for j, g in enumerate(inp.peg_grades):
        y = y + _peg.peg_osmolality(pc[:, j], inp.T, g)
    active = y > 0
    y = np.where(active, y, 1.0)  # placeholder for empty rows, reset below
    for _outer in range(8):
        # Newton on y with phi_hat fixed
        for _ in range(_MAX_OUTER):
            tn, dtn, _ = _neutral_terms(y, inp.neutral, nm)
            tp, dtp, _ = _peg_terms(y, inp.peg_grades, pc, inp.T)
            re = M_e * phi_hat / y
            G = re + tn + tp - 1.0
            dG = -re / y + dtn + dtp
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.where(active & (dG != 0), G / dG, 0.0)
            y_new = y - step
            y_new = np.where(y_new <= 0.1 * y, 0.1 * y, y_new)
            y_new = np.where(y_new >= 10 * y, 10 * y, y_new)
            done = np.all(np.abs(y_new - y) <= _TOL * np.maximum(y, 1e-300))
            y = y_new
            if done:
                break
        if im is None or not np.any(has_e):
            break
        scale = np.where(has_e, y / np.where(has_e, M_e * phi_hat, 1.0), 1.0)
        phi_new = np.where(has_e, _ion_phi(inp.pitzer, im, scale, inp.T), 1.0)
        converged = bool(np.all(np.abs(phi_new - phi_hat) < 1e-13))
        phi_hat = phi_new
        if converged:
            break
    y = np.where(active, y, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        fe = np.where(active & has_e, M_e * phi_hat / np.where(active, y, 1.0), 0.0)
    _, _, fn = _neutral_terms(np.where(active, y, 1.0), inp.neutral, nm)
    _, _, fp = _peg_terms(np.where(active, y, 1.0), inp.peg_grades, pc, inp.T)
    fn = np.where(active[:, None], fn, 0.0)
    fp = np.where(active[:, None], fp, 0.0)
    peg_mol = np.zeros(B)
    for j, g in enumerate(inp.peg_grades):
        peg_mol = peg_mol + pc[:, j] * 1000.0 / g
    ideal = M_e + nm.sum(axis=1) + peg_mol
    return MixtureResult(y, ideal, phi_hat, phi_own, fe, fn, fp)
