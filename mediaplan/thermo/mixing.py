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
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

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

    One row may give ion_m, neutral_m and peg_c as lists of Python floats (no arrays to make).
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


def zsr_osmolality(inp: MixtureInput, *, start: tuple | None = None,
                   osmolality_only: bool = False) -> MixtureResult:
    """Solve the ZSR rule for the osmolality of the mixture (vectorised over B rows).

    Parameters
    ----------
    inp : the amounts of every solute group (see :class:`MixtureInput`)
    start : ``MixtureResult.state`` of the same single composition (at another temperature): a warm start
    osmolality_only : for one composition, fill in only ``osmolality`` and ``state`` (the other fields are
        None): the answer of a second temperature whose shares no one reads (a batch is always full)

    Notes
    -----
    Unknowns: the mixture osmolality y and, for each group j of neutral solutes (solutes that share one
    binary model: one Norrish constant, or the ideal solution) and each PEG grade, the amount x_j of its
    binary solution that has the same water activity. Equations: O_j(x_j) = y for every j (O_j: binary
    osmolality), and Σ_j m_j/x_j + r_e(y) = 1, where the electrolytes, at scale s of their own ion
    molalities, contribute r_e = 1/s with s·M_e·φ_e(s) = y (M_e = Σ m_ions). One Newton step on the whole
    system reduces to a scalar equation in δy (δx_j = (δy − R_j)/O_j'); φ_e follows a local power law
    φ_e ∝ s^g refreshed by one Pitzer evaluation per step. Five to seven steps reach 1e-12.

    One composition is solved on Python floats and a batch on numpy arrays (numpy's per-call cost
    dominates a single small row), but both run the same function, :func:`_newton`, with the arithmetic
    passed in (:data:`_FLOATS`, :data:`_ARRAYS`): they agree by construction. A row whose electrolyte
    group leaves the range where Pitzer's φ is positive has no answer (NaN), on either path.
    """
    if (isinstance(inp.T, float) or np.ndim(inp.T) == 0) and _single_row(inp):
        system = _one_row(inp, start)
        system.light = osmolality_only
        out = _newton_row(system, start)
        out._system = system  # what zsr_at takes again at another temperature
        return out
    with np.errstate(divide="ignore", invalid="ignore"):  # 0/0 in rows of pure water: masked, exact
        return _newton(_ARRAYS, _batch(inp), None)


def zsr_at(result: MixtureResult, T: float) -> MixtureResult:
    """The one composition solved in ``result`` (by :func:`zsr_osmolality`), solved again at temperature T
    [K], warm-started from its state: the ``osmolality_only`` answer of ``zsr_osmolality(inp at T,
    start=result.state, osmolality_only=True)``, bit for bit, without reading the amounts again (the groups,
    their totals and the ions' sum are the composition's; only the Pitzer sums move to T).

    Raises ValueError for a result of a batch, or of another solver.
    """
    s0 = getattr(result, "_system", None)
    if s0 is None:
        raise ValueError("zsr_at takes the result of one composition solved by zsr_osmolality")
    T = float(T)
    start = result.state
    warm, phi_at, phi_own = _row_start(s0.pitzer, s0.ion_m, s0.has_e, s0.groups, start, T)
    system = _System(T, s0.pitzer, s0.ion_m, s0.M_e, s0.has_e, phi_own, phi_at, s0.electrolytes, s0.groups,
                     s0.neutral_m, s0.peg_c, s0.peg_grades, warm, s0.neutral_list, s0.peg_list, light=True)
    out = _newton_row(system, start)
    out._system = system
    return out


def _single_row(inp: MixtureInput) -> bool:
    for a in (inp.ion_m, inp.neutral_m, inp.peg_c):
        if a is not None and type(a) is not list:  # a list: one row of Python floats
            shape = a.shape if isinstance(a, np.ndarray) else np.shape(a)
            if len(shape) == 2 and shape[0] != 1:
                return False
    return True


# ---- the arithmetic, for Python floats or for numpy arrays --------------------------------------
def _log_float(v: float) -> float:
    """ln v like numpy's: NaN below 0, -inf at 0 (``math.log`` would raise)."""
    if v > 0:
        return math.log(v)
    return -math.inf if v == 0 else math.nan


def _div_float(a: float, b: float, default: float) -> float:
    return a / b if b != 0 else default


def _div_array(a, b, default):
    return np.where(b != 0, a / np.where(b != 0, b, 1.0), default)


def _peg_float(c: float, T: float, grade: int) -> tuple[float, float]:
    return float(_peg.peg_osmolality(c, T, grade)), float(_peg.peg_osmolality_dc(c, T, grade))


def _peg_array(c, T, grade):
    return _peg.peg_osmolality(c, T, grade), _peg.peg_osmolality_dc(c, T, grade)


def _phi_float(pitzer, ion_m: np.ndarray, T: float) -> Callable[[float], float]:
    """φ of the ion molalities ion_m (n_ions,) [mol/kg] times a scale [-], at T [K]: one full Pitzer pass
    now, a rescaling of its sums at each call (``PitzerSystem.scaled``)."""
    return pitzer.scaled(ion_m, T)


def _phi_array(pitzer, ion_m: np.ndarray, T) -> Callable[[np.ndarray], np.ndarray]:
    """φ of the rows of ion_m (B, n_ions) [mol/kg] times a scale (B,) [-], at T [K] (see :func:`_phi_float`)."""
    phi = pitzer.scaled(ion_m, T)
    return lambda s: np.asarray(phi(s), dtype=float)


@dataclass(frozen=True)
class _Ops:
    """The operations :func:`_newton` needs, on one kind of number."""

    where: Callable
    maximum: Callable
    clip: Callable
    abs: Callable
    log: Callable
    log1p: Callable
    div: Callable  # div(a, b, default): a / b, or default where b == 0
    every: Callable  # all elements true
    worst: Callable  # largest element [same unit]
    peg: Callable  # (c [g/g], T [K], grade) -> (osmolality, its derivative in c)


_FLOATS = _Ops(where=lambda c, a, b: a if c else b, maximum=max, clip=lambda v, lo, hi: min(max(v, lo), hi),
               abs=abs, log=_log_float, log1p=math.log1p, div=_div_float, every=bool, worst=float,
               peg=_peg_float)
_ARRAYS = _Ops(where=np.where, maximum=np.maximum, clip=np.clip, abs=np.abs, log=np.log, log1p=np.log1p,
               div=_div_array, every=lambda a: bool(np.all(a)),
               worst=lambda a: float(np.max(a)) if np.size(a) else 0.0, peg=_peg_array)


def pairwise_sum(values: list[float]) -> float:
    """Σ values as numpy sums a 1-D float64 array (its pairwise summation: eight running sums for 8 to 128
    terms, halves above), so that one row on Python floats gives the bits of the same row on arrays."""
    n = len(values)
    if n < 8:
        acc = 0.0
        for v in values:
            acc += v
        return acc
    if n > 128:
        half = n // 2
        half -= half % 8
        return pairwise_sum(values[:half]) + pairwise_sum(values[half:])
    r0, r1, r2, r3, r4, r5, r6, r7 = values[:8]
    stop = n - n % 8
    for i in range(8, stop, 8):
        r0 += values[i]
        r1 += values[i + 1]
        r2 += values[i + 2]
        r3 += values[i + 3]
        r4 += values[i + 4]
        r5 += values[i + 5]
        r6 += values[i + 6]
        r7 += values[i + 7]
    acc = ((r0 + r1) + (r2 + r3)) + ((r4 + r5) + (r6 + r7))
    for v in values[stop:]:
        acc += v
    return acc


# ---- the system ---------------------------------------------------------------------------------
#: one row of no columns (a medium without neutral solutes or without PEG); read-only, so it can be shared
_NO_COLUMNS = np.zeros((1, 0))
_NO_COLUMNS.flags.writeable = False


class _Group:
    """One ZSR group other than the electrolytes: the neutral solutes that share one binary model
    (Norrish constant ``key``; 0 for the ideal solution), or one PEG grade (``key`` [g/mol]).

    Solutes with the same binary model have the same isopiestic molality, so Σ m_j / x_j = (Σ m_j) / x
    exactly: many trace organics that follow Raoult's law cost one group, not one each.

    kind : "n" (neutral) or "p" (PEG); members : columns of neutral_m or of peg_c; m : Σ molality
    [mol/kg] or PEG concentration [g/g water]; on : rows where the group is present
    """

    __slots__ = ("kind", "key", "members", "m", "on")

    def __init__(self, kind: str, key: float, members: list[int]) -> None:
        self.kind, self.key, self.members = kind, key, members
        self.m: float | np.ndarray = 0.0
        self.on: bool | np.ndarray = True


@dataclass
class _System:
    """A ZSR problem on one kind of number: floats (one row) or arrays of shape (B,)."""

    T: float | np.ndarray
    pitzer: object | None
    ion_m: np.ndarray | None  # (n_ions,) or (B, n_ions)
    M_e: float | np.ndarray  # Σ ion molalities [mol/kg]
    has_e: bool | np.ndarray
    phi_own: float | np.ndarray  # Pitzer φ at the medium's own ion molalities (NaN: not computed)
    phi_at: Callable | None  # scale [-] -> Pitzer φ of the medium's own ion molalities times the scale
    electrolytes: bool  # the Pitzer step runs at all
    groups: list[_Group]
    neutral_m: np.ndarray  # (B, k) [mol/kg] (one row: no columns; its amounts are neutral_list)
    peg_c: np.ndarray  # (B, p) [g/g water] (one row: no columns; its amounts are peg_list)
    peg_grades: Sequence[int]
    warm: bool  # restart from ``start``
    neutral_list: list[float] | None  # one row: neutral_m[0] and peg_c[0] as Python floats
    peg_list: list[float] | None
    light: bool = False  # one row: osmolality and state only (see zsr_osmolality's osmolality_only)


def _grouped(neutral: Sequence[NeutralParams], peg_grades: Sequence[int], nm_used, pc_used) -> list[_Group]:
    """Groups of the neutral columns in use (by binary model, in order of first appearance) and the PEG
    columns in use; m and on are filled in by the caller."""
    by_model: dict[float, list[int]] = {}
    for j in nm_used:
        p = neutral[j]
        by_model.setdefault(0.0 if p.model == "ideal" else float(p.K), []).append(j)
    groups = [_Group("n", K, js) for K, js in by_model.items()]
    for j in pc_used:
        groups.append(_Group("p", float(peg_grades[j]), [j]))
    return groups


def _grouped_row(neutral: Sequence[NeutralParams], peg_grades: Sequence[int], nml: list[float],
                 pcl: list[float]) -> list[_Group]:
    """:func:`_grouped` of one row (its amounts nml and pcl as lists), new _Group objects each call. The
    grouping depends on the parameters and on which columns are in use alone: for parameters given as
    tuples (immutable, of frozen NeutralParams, as a compiled medium gives them) it is kept, by the
    tuples' identity (the tuples are kept with it, so an id is never reused while cached)."""
    nm_used = tuple([j for j, v in enumerate(nml) if v > 0])
    pc_used = tuple([j for j, v in enumerate(pcl) if v > 0])
    if type(neutral) is not tuple or type(peg_grades) is not tuple:
        return _grouped(neutral, peg_grades, nm_used, pc_used)
    key = (id(neutral), id(peg_grades), nm_used, pc_used)
    got = _GROUPINGS.get(key)
    if got is None or got[0] is not neutral or got[1] is not peg_grades:
        got = (neutral, peg_grades, [(g.kind, g.key, g.members) for g in _grouped(neutral, peg_grades, nm_used,
                                                                                   pc_used)])
        if len(_GROUPINGS) >= 64:
            _GROUPINGS.clear()
        _GROUPINGS[key] = got  # one dict item set: safe across worker threads
    return [_Group(kind, k, members) for kind, k, members in got[2]]


#: (id of the neutral parameters, id of the PEG grades, columns in use) -> (those two tuples, each group's
#: kind, key and members): see _grouped_row
_GROUPINGS: dict[tuple, tuple] = {}


def _as_row(a) -> list[float]:
    """One row of amounts as a list of Python floats (a list of floats is taken as it is)."""
    return a if type(a) is list else np.asarray(a, dtype=float).reshape(-1).tolist()


def _one_row(inp: MixtureInput, start: tuple | None) -> _System:
    T = float(inp.T)
    im = None
    if inp.pitzer is not None and inp.ion_m is not None:
        im = _as_row(inp.ion_m)
    M_e = _in_order(im) if im is not None else 0.0
    has_e = M_e > 0
    nml = _as_row(inp.neutral_m) if len(inp.neutral) else []
    pcl = _as_row(inp.peg_c) if len(inp.peg_grades) else []
    nm = pc = _NO_COLUMNS  # one row keeps its amounts as the lists nml and pcl (see _result)
    groups = _grouped_row(inp.neutral, inp.peg_grades, nml, pcl)
    for grp in groups:
        src = nml if grp.kind == "n" else pcl
        grp.m = _in_order([src[j] for j in grp.members])
    warm, phi_at, phi_own = _row_start(inp.pitzer, im, has_e, groups, start, T)
    return _System(T, inp.pitzer, im, M_e, has_e, phi_own, phi_at, has_e, groups, nm, pc, inp.peg_grades,
                   warm, nml, pcl)


def _row_start(pitzer, im: list[float] | None, has_e: bool, groups: list, start: tuple | None,
               T: float) -> tuple[bool, Callable | None, float]:
    """How one row's steps start at T [K]: (warm, φ as a function of the scale, φ at the own ion molalities).
    Warm from ``start`` when it is a state of these groups with an answer; one full Pitzer pass at the own
    ion molalities im (each ZSR step then only rescales its sums); after a warm start φ at the own
    molalities is not needed (NaN; see MixtureResult.electrolyte_phi_own)."""
    warm = start is not None and start[0] > 0 and len(start[1]) == len(groups)
    if im is None:
        return warm, None, 1.0
    phi_at = _phi_float(pitzer, im, T)
    return warm, phi_at, math.nan if warm and has_e else float(phi_at(1.0))


def _in_order(terms: list):
    """terms[0] + terms[1] + ... in that order (floats, or arrays (B,)): a row and the same row inside a batch
    get the same bits (numpy's reductions sum in an order that depends on the array's shape)."""
    acc = terms[0] if terms else 0.0
    for x in terms[1:]:
        acc = acc + x
    return float(acc) if isinstance(acc, float) else acc


def _batch(inp: MixtureInput) -> _System:
    nm = np.atleast_2d(np.asarray(inp.neutral_m, dtype=float)) if len(inp.neutral) else None
    pc = np.atleast_2d(np.asarray(inp.peg_c, dtype=float)) if len(inp.peg_grades) else None
    im = (np.atleast_2d(np.asarray(inp.ion_m, dtype=float))
          if inp.pitzer is not None and inp.ion_m is not None else None)
    # rows: from the groups' arrays, else from whatever was given (a medium of no solutes: columns of none)
    given = [np.shape(a)[0] for a in (inp.ion_m, inp.neutral_m, inp.peg_c) if a is not None and np.ndim(a) == 2]
    B = next((a.shape[0] for a in (im, nm, pc) if a is not None), given[0] if given else 1)
    nm = np.zeros((B, 0)) if nm is None else nm
    pc = np.zeros((B, 0)) if pc is None else pc
    M_e = _in_order(list(im.T)) if im is not None else np.zeros(B)
    phi_at = _phi_array(inp.pitzer, im, inp.T) if im is not None else None
    phi_own = phi_at(np.ones(B)) if im is not None else np.ones(B)
    groups = _grouped(inp.neutral, inp.peg_grades, [j for j in range(nm.shape[1]) if np.any(nm[:, j] > 0)],
                      [j for j in range(pc.shape[1]) if np.any(pc[:, j] > 0)])
    for grp in groups:
        src = nm if grp.kind == "n" else pc
        grp.m = _in_order([src[:, j] for j in grp.members])
        grp.on = grp.m > 0
    return _System(inp.T, inp.pitzer, im, M_e, M_e > 0, phi_own, phi_at, im is not None, groups, nm, pc,
                   inp.peg_grades, False, None, None)


def _binary(ops: _Ops, neutral: bool, key: float, x, T):
    """Osmolality [osmol/kg] of a group's binary solution at amount x, and its derivative in x.

    Neutral groups (``key``: Norrish constant K): Norrish (1966), Osm = [ln(1 + u) + K (u/(1+u))^2] / M_w
    with u = M_w x, the equations of :func:`mediaplan.thermo.neutral.binary_osmolality` and ``_dm`` written
    once for both kinds of number (the tests hold them to those functions); PEG (``key``: grade [g/mol]):
    the Michel equations of :mod:`mediaplan.thermo.peg`.
    """
    if neutral:
        u = M_WATER * x
        d = 1.0 + u
        xs = u / d
        return (ops.log1p(u) + key * xs * xs) / M_WATER, 1.0 / d + 2.0 * key * xs / (d * d)
    return ops.peg(x, T, int(key))


def _newton(ops: _Ops, s: _System, start: tuple | None) -> MixtureResult:
    """Solve the ZSR system ``s`` (see :func:`zsr_osmolality`) with the arithmetic ``ops``."""
    where, div, every, absolute = ops.where, ops.div, ops.every, ops.abs
    floats = ops is _FLOATS
    T, has_e = s.T, s.has_e
    groups = [(grp.kind == "n", grp.key, grp.m, grp.on) for grp in s.groups]
    # additive first guess: each group's own binary osmolality, the electrolytes at their own φ
    y = s.M_e * (1.0 if floats and math.isnan(s.phi_own) else s.phi_own)
    o0 = []
    for neutral, key, m, on in groups:
        o, _ = _binary(ops, neutral, key, m, T)
        o0.append(o)
        y = y + where(on, o, 0.0)
    # ions whose own Pitzer φ is past its range (<= 0) on a cold start: no answer (NaN), never "pure water"
    # from a sum made zero or negative by that φ (a warm row checks φ where its steps restart, below)
    if floats:
        if has_e and not s.warm and not s.phi_own > 0:
            return _result(ops, s, math.nan, [1.0] * len(groups), math.nan, math.nan, None, True, True)
        bad = False
    else:
        bad = has_e & ~(s.phi_own > 0)  # rows whose electrolytes left Pitzer's range (φ <= 0): no answer
    active = (y > 0) & ~bad if not floats else y > 0
    if floats and not active:  # pure water
        return _result(ops, s, 0.0, [1.0] * len(groups), 0.0, 1.0, None, False, False)
    y = where(active, y, 1.0)
    if floats and not groups and s.electrolytes:
        # the electrolytes alone: ZSR's one group is its own binary solution at scale 1, y = M_e φ(1)
        # exactly (what the steps below reach from a cold start at once, and from a warm start within _TOL)
        phi1 = s.phi_at(1.0)
        if phi1 > 0:
            y = s.M_e * phi1
            return _result(ops, s, y, [], 1.0, phi1, (y, (), 0.0, 1.0), True, False)
    x = [where(on, m * div(y, o, 1.0), 1.0) for (_, _, m, on), o in zip(groups, o0, strict=True)]
    # electrolyte group: local power law phi_e(s) ≈ phi_c (s/s_c)^g around the last Pitzer point
    s_c, phi_c, g = y * 0.0 + 1.0, s.phi_own, y * 0.0
    if s.warm:
        # the same composition solved at another temperature: restart at its state, with phi at this T
        y, x, g, s_c = start[0], list(start[1]), start[2], start[3]
        if not s.electrolytes and all(grp.kind == "n" for grp in s.groups):
            # neutral solutes alone: their binary models have no temperature term (mediaplan.thermo.neutral),
            # so the state solved at the other temperature is the solution at this one
            return _result(ops, s, y, x, 0.0, phi_c, (y, tuple(x), g, s_c), True, False)
        if has_e:
            phi_c = s.phi_at(s_c)
    if floats and has_e and not phi_c > 0:
        # Pitzer's φ is past its range (<= 0) where the steps start: no answer, as for a step below (a
        # batch's rows meet NaN at their first step and are marked bad there)
        return _result(ops, s, math.nan, x, math.nan, math.nan, None, True, True)
    Me = where(has_e, s.M_e, 1.0)

    def e_scale(yv):
        """Scale s of the medium's own ion molalities whose binary solution has osmolality yv (rows
        without ions: any positive number; they have φ = 1 and g = 0 throughout)."""
        return (yv * s_c**g / (Me * phi_c)) ** (1.0 / (1.0 + g))

    last_dphi = math.inf if s.electrolytes else 0.0
    for _ in range(_MAX_OUTER):
        re = where(has_e, 1.0 / e_scale(y), 0.0) if s.electrolytes else 0.0
        F = re - 1.0
        denom = -re / ((1.0 + g) * y)
        rhs = 0.0
        steps = []
        settled = True
        for (neutral, key, m, on), xg in zip(groups, x, strict=True):
            o, d = _binary(ops, neutral, key, xg, T)
            R = o - y
            a = m / (xg * xg) / d
            f = m / xg
            if not floats:  # rows without this group, or without an answer, take no part
                on = on & active
                R, a, f = where(on, R, 0.0), where(on, a, 0.0), where(on, f, 0.0)
            F = F + f
            denom = denom - a
            rhs = rhs + a * R
            steps.append((R, d))
            settled = settled and every(absolute(R) <= 1e-10 * y)
        dy = div(-F - rhs, denom, 0.0)
        if not floats:
            dy = where(active, dy, 0.0)
        y_new = ops.clip(y + dy, 0.2 * y, 5.0 * y)
        dy = y_new - y
        x = [where(on, ops.maximum(xg + (dy - R) / d, 0.2 * xg), xg)
             for (_, _, _, on), xg, (R, d) in zip(groups, x, steps, strict=True)]
        y = y_new
        done = settled and every(absolute(dy) <= _TOL * y)
        if done and last_dphi <= _PHI_TOL:
            break  # the electrolyte group had already settled: no further Pitzer evaluation needed
        dphi = 0.0
        if s.electrolytes:
            s_new = e_scale(y)
            phi_pred = phi_c * (s_new / s_c) ** g
            phi_new = s.phi_at(s_new)  # 1 in rows without ions
            if floats:
                if not phi_new > 0:
                    return _result(ops, s, math.nan, x, math.nan, math.nan, None, True, True)
            else:
                bad = bad | (has_e & ~(phi_new > 0))
                active = active & ~bad
                phi_new = where(bad, phi_c, phi_new)
            dphi = ops.worst(where(active, absolute(phi_new - phi_pred), 0.0))
            ls = ops.log(s_new / s_c)
            g_new = ops.clip(div(ops.log(phi_new / phi_c), ls, 0.0), -0.5, 2.0)
            g = where(absolute(ls) > 1e-9, g_new, g)
            s_c, phi_c = s_new, phi_new
        last_dphi = dphi
        if done and dphi <= _PHI_TOL:
            break
    fe = where(active & has_e, 1.0 / e_scale(y), 0.0)
    return _result(ops, s, y, x, fe, phi_c, (y, tuple(x), g, s_c), active, bad)


def _newton_row(s: _System, start: tuple | None) -> MixtureResult:
    """:func:`_newton` with the arithmetic :data:`_FLOATS`, written out for one row: the same operations on
    the same Python floats in the same order (the same bits; the tests hold the two together), without the
    indirection of ``ops`` a step of a small system spends most of its time in."""
    T, has_e, electrolytes = s.T, s.has_e, s.electrolytes
    log1p, M_w = math.log1p, M_WATER
    groups = [(grp.kind == "n", grp.key, grp.m) for grp in s.groups]
    peg = _peg_float
    # additive first guess: each group's own binary osmolality, the electrolytes at their own φ
    y = s.M_e * (1.0 if math.isnan(s.phi_own) else s.phi_own)
    o0 = []
    for neutral, key, m in groups:
        if neutral:
            u = M_w * m
            d = 1.0 + u
            xs = u / d
            o = (log1p(u) + key * xs * xs) / M_w
        else:
            o, _ = peg(m, T, int(key))
        o0.append(o)
        y = y + o
    if has_e and not s.warm and not s.phi_own > 0:  # the ions' own φ past Pitzer's range: no answer
        return _result(_FLOATS, s, math.nan, [1.0] * len(groups), math.nan, math.nan, None, True, True)
    active = y > 0
    if not active:  # pure water
        return _result(_FLOATS, s, 0.0, [1.0] * len(groups), 0.0, 1.0, None, False, False)
    if not groups and electrolytes:
        # the electrolytes alone: ZSR's one group is its own binary solution at scale 1, y = M_e φ(1)
        phi1 = s.phi_at(1.0)
        if phi1 > 0:
            y = s.M_e * phi1
            return _result(_FLOATS, s, y, [], 1.0, phi1, (y, (), 0.0, 1.0), True, False)
    x = [m * (y / o if o != 0 else 1.0) for (_, _, m), o in zip(groups, o0, strict=True)]
    s_c, phi_c, g = y * 0.0 + 1.0, s.phi_own, y * 0.0
    if s.warm:
        y, x, g, s_c = start[0], list(start[1]), start[2], start[3]
        if not electrolytes and all(grp.kind == "n" for grp in s.groups):
            return _result(_FLOATS, s, y, x, 0.0, phi_c, (y, tuple(x), g, s_c), True, False)
        if has_e:
            phi_c = s.phi_at(s_c)
    if has_e and not phi_c > 0:
        # Pitzer's φ is past its range (<= 0) where the steps start: no answer, as for a step below (a
        # power of a negative number would leave the real numbers)
        return _result(_FLOATS, s, math.nan, x, math.nan, math.nan, None, True, True)
    Me = s.M_e if has_e else 1.0
    phi_at = s.phi_at
    log = math.log
    # per group: (neutral, K, 2 K, Σ m); 2.0 * K * xs is (2.0 * K) * xs, so 2 K made once gives the same bits
    terms = [(neutral, key, 2.0 * key, m) for neutral, key, m in groups]
    n_groups = len(terms)
    R_of = [0.0] * n_groups
    d_of = [0.0] * n_groups
    last_dphi = math.inf if electrolytes else 0.0
    for _ in range(_MAX_OUTER):
        g1 = 1.0 + g
        if electrolytes:
            # e_scale(y) of _newton: (y s_c^g / (Me φ_c))^(1/(1+g)), its factors made once per step
            sg, mp, ex = s_c**g, Me * phi_c, 1.0 / g1
            re = 1.0 / ((y * sg / mp) ** ex) if has_e else 0.0
        else:
            re = 0.0
        F = re - 1.0
        denom = -re / (g1 * y)
        rhs = 0.0
        settled = True
        lim = 1e-10 * y
        for k, (neutral, key, key2, m) in enumerate(terms):
            xg = x[k]
            if neutral:
                u = M_w * xg
                d = 1.0 + u
                xs = u / d
                R = (log1p(u) + key * xs * xs) / M_w - y
                d = 1.0 / d + key2 * xs / (d * d)
            else:
                o, d = peg(xg, T, int(key))
                R = o - y
            a = m / (xg * xg) / d
            F = F + m / xg
            denom = denom - a
            rhs = rhs + a * R
            R_of[k] = R
            d_of[k] = d
            if settled and not abs(R) <= lim:
                settled = False
        num = -F - rhs
        dy = num / denom if denom != 0 else 0.0
        # min(max(v, lo), hi) written out (the same choices, NaN included)
        y_new = y + dy
        lo = 0.2 * y
        if lo > y_new:
            y_new = lo
        hi = 5.0 * y
        if hi < y_new:
            y_new = hi
        dy = y_new - y
        for k in range(n_groups):
            xg = x[k]
            v = xg + (dy - R_of[k]) / d_of[k]
            lo = 0.2 * xg
            x[k] = lo if lo > v else v
        y = y_new
        done = settled and abs(dy) <= _TOL * y
        if done and last_dphi <= _PHI_TOL:
            break  # the electrolyte group had already settled: no further Pitzer evaluation needed
        dphi = 0.0
        if electrolytes:
            s_new = (y * sg / mp) ** ex
            phi_pred = phi_c * (s_new / s_c) ** g
            phi_new = phi_at(s_new)
            if not phi_new > 0:
                return _result(_FLOATS, s, math.nan, x, math.nan, math.nan, None, True, True)
            dphi = float(abs(phi_new - phi_pred))
            r = s_new / s_c
            ls = log(r) if r > 0 else (-math.inf if r == 0 else math.nan)
            if abs(ls) > 1e-9:
                r = phi_new / phi_c
                lp = log(r) if r > 0 else (-math.inf if r == 0 else math.nan)
                gn = lp / ls if ls != 0 else 0.0
                if gn < -0.5:
                    gn = -0.5
                if gn > 2.0:
                    gn = 2.0
                g = gn
            s_c, phi_c = s_new, phi_new
        last_dphi = dphi
        if done and dphi <= _PHI_TOL:
            break
    fe = 1.0 / ((y * s_c**g / (Me * phi_c)) ** (1.0 / (1.0 + g))) if has_e else 0.0
    return _result(_FLOATS, s, y, x, fe, phi_c, (y, tuple(x), g, s_c), True, False)


def _result(ops: _Ops, s: _System, y, x, fe, phi_c, state, active, bad) -> MixtureResult:
    """MixtureResult of a solved system: y (0 where inactive), each solute's share m_j / x_group, the van't
    Hoff sum; NaN in every field of the rows in ``bad``."""
    nm, pc = s.neutral_m, s.peg_c
    if ops is _FLOATS:
        if s.light:
            return MixtureResult(np.array([y if active else 0.0]), None, None, None, None, None, None,
                                 state=None if bad else state)
        nml, pcl = s.neutral_list, s.peg_list
        fill = math.nan if bad else 0.0
        fnl, fpl = [fill] * len(nml), [fill] * len(pcl)
        if active and not bad:
            for grp, xg in zip(s.groups, x, strict=True):
                src, dst = (nml, fnl) if grp.kind == "n" else (pcl, fpl)
                for j in grp.members:
                    dst[j] = src[j] / xg
        # PEG moles added in order from 0 as the batch adds them (never sum(): from Python 3.12 it compensates)
        peg_mol = 0
        for j, g in enumerate(s.peg_grades):
            peg_mol = peg_mol + pcl[j] * 1000.0 / g
        ideal = s.M_e + (pairwise_sum(nml) if nml else 0.0) + peg_mol  # the sum of the array of them, bit for bit
        one = np.array([y if active else 0.0, ideal, phi_c, s.phi_own, fe])
        return MixtureResult(one[0:1], one[1:2], one[2:3], one[3:4], one[4:5],
                             np.array([fnl]) if fnl else _NO_COLUMNS, np.array([fpl]) if fpl else _NO_COLUMNS,
                             state=None if bad else state)
    fn = np.zeros(nm.shape)
    fp = np.zeros(pc.shape)
    for grp, xg in zip(s.groups, x, strict=True):
        src, dst = (nm, fn) if grp.kind == "n" else (pc, fp)
        for j in grp.members:
            dst[:, j] = np.where(grp.on & active, src[:, j] / xg, 0.0)
    peg_mol = np.zeros(nm.shape[0])
    for j, g in enumerate(s.peg_grades):
        peg_mol = peg_mol + pc[:, j] * 1000.0 / g
    out = MixtureResult(np.where(active, y, 0.0), s.M_e + nm.sum(axis=1) + peg_mol, phi_c, s.phi_own, fe, fn, fp)
    if np.any(bad):
        for name in ("osmolality", "electrolyte_phi", "fraction_electrolyte", "fraction_neutral", "fraction_peg"):
            getattr(out, name)[bad] = np.nan
    return out


# ---- the additive figure and the span of the mixing rules -----------------------------------------
@dataclass(frozen=True)
class MixingSpan:
    """Osmolality of a mixture by two mixing rules (arrays of shape (B,)) [osmol/kg].

    additive : each ZSR group's binary osmolality at its own amount, summed (the electrolytes at the
        Pitzer φ of their own ion molalities): no interaction between the groups
    zsr : the ZSR rule (:func:`zsr_osmolality`), which makes groups that raise each other's binary
        non-ideality (PEG above all) interact

    Notes
    -----
    For PEG with other solutes the two differ by tens of per cent. Michel (1983, Plant Physiol 72:66,
    abstract) measured PEG 8000 with mannitol and with NaCl below the additive water potential (a synergy
    growing linearly with the added solute) but the size is not checked here against his tables: until it
    is, the honest statement is that the answer lies between ``low`` and ``high``.
    """

    additive: np.ndarray
    zsr: np.ndarray

    @property
    def low(self) -> np.ndarray:
        """The smaller of the two osmolalities [osmol/kg] (the less negative water potential)."""
        return np.fmin(self.additive, self.zsr)

    @property
    def high(self) -> np.ndarray:
        """The larger of the two osmolalities [osmol/kg] (the more negative water potential)."""
        return np.fmax(self.additive, self.zsr)


def additive_osmolality(inp: MixtureInput) -> np.ndarray:
    """Σ over the ZSR groups of each group's binary osmolality at its own amount [osmol/kg], shape (B,).

    The groups are those of :func:`zsr_osmolality` (electrolytes together at the Pitzer φ of their own
    ion molalities, neutral solutes sharing one binary model, each PEG grade), so a medium of one group
    has additive == ZSR. NaN where the electrolytes leave Pitzer's range (φ <= 0).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        s = _batch(inp)
        phi = np.asarray(s.phi_own, dtype=float)
        y = np.where(s.has_e, s.M_e * np.where(phi > 0, phi, np.nan), 0.0)
        for grp in s.groups:
            o, _ = _binary(_ARRAYS, grp.kind == "n", grp.key, grp.m, s.T)
            y = y + np.where(grp.on, o, 0.0)
    return np.asarray(y, dtype=float)


def mixing_span(inp: MixtureInput) -> MixingSpan:
    """The additive and the ZSR osmolality of the same mixtures [osmol/kg] (see :class:`MixingSpan`):
    the span a figure for PEG with other solutes honestly carries."""
    zsr = zsr_osmolality(inp).osmolality
    return MixingSpan(additive=additive_osmolality(inp), zsr=np.asarray(zsr, dtype=float).reshape(-1))
