"""Roots of increasing functions of one amount: the one root finder of the solver and the series designer.

Both ask the same question, "how much of this brings the medium to that?", of a function that grows
with the amount x: the osmolality of a medium along a :class:`~mediaplan.medium.model.Sweep`, a ZSR
residual, the molality of a substance on its way to saturation. Three steps, each usable alone:

:func:`bracket_above`
    an upper end where the function passes the target, grown from a first guess by doubling, and
    drawn back where the model has no finite answer (past its range);
:func:`increasing_roots`
    many targets at once: one batched call on a grid brackets them all, a second refines each bracket
    by linear interpolation, then :func:`bracketed_roots` finishes them together;
:func:`bracketed_roots`
    many bracketed roots at once, each of its own function (a row of a batch), one batched call per step;
:func:`increasing_root`
    one bracketed root by Brent's method (``scipy.optimize.brentq``), with the function values at the
    ends, when already known, served without a new model call.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from mediaplan.medium.errors import InfeasibleError

#: grid that brackets a batch of targets before each root is refined (one batched model call)
GRID = 48
#: default tolerances of :func:`increasing_root`: on x, relative to the bracket's upper end [-]; on f [-]
XTOL = 1e-13
RTOL = 4e-15
#: doublings of the first guess in :func:`bracket_above`, and halvings back from a point without answer
_MAX_STEPS = 200


def increasing_root(f: Callable[[float], float], lo: float, hi: float, *, f_lo: float | None = None,
                    f_hi: float | None = None, xtol: float = XTOL, rtol: float = RTOL,
                    x_floor: float = 1e-300) -> float:
    """The x in [lo, hi] where f(x) = 0, for f increasing with f(lo) <= 0 <= f(hi).

    Parameters
    ----------
    f : the function (one model call per evaluation)
    lo, hi : the bracket [same unit as x]
    f_lo, f_hi : f at the ends when already computed (they are not computed again)
    xtol : tolerance on x relative to max(|hi|, x_floor) [-]
    rtol : relative tolerance on x of ``brentq`` [-] (at least 4 machine epsilons)
    x_floor : smallest scale of x for ``xtol`` [same unit as x]

    Returns
    -------
    float, the root [same unit as x]
    """
    from scipy.optimize import brentq

    known = {}
    if f_lo is not None:
        known[lo] = f_lo
    if f_hi is not None:
        known[hi] = f_hi

    def g(x: float) -> float:
        v = known.get(x)
        return f(x) if v is None else v

    return float(brentq(g if known else f, lo, hi, xtol=xtol * max(abs(hi), x_floor), rtol=rtol, maxiter=200))


def bracket_above(f: Callable[[float], float], target: float, start: float, limit: float,
                  lo: float = 0.0) -> float | None:
    """An x in (lo, limit] with f(x) > target, for f increasing from f(lo) <= target.

    Tries ``min(start, limit)``, then doubles it up to ``limit``. Where f has no finite value (the model
    is past its range there) it halves the step back toward the last point with a finite value instead.

    Returns
    -------
    float, the first such x found [same unit as x], or None when even the largest x with a finite
    value, up to ``limit``, stays at or below the target.
    """
    below = lo  # largest x known to give a finite f(x) <= target
    hi = min(start, limit)
    for _ in range(_MAX_STEPS):
        v = f(hi)
        if math.isfinite(v):
            if v > target:
                return hi
            if hi >= limit:
                return None
            below = hi
            hi = min(hi * 2.0, limit)
        else:
            if hi - below <= 1e-12 * hi:
                return None
            hi = below + (hi - below) / 2.0
    return None


def increasing_roots(f_batch: Callable[[np.ndarray], np.ndarray], targets: np.ndarray, lo: float, hi: float,
                     *, what: str, hint: str, xtol: float = XTOL, rtol: float = RTOL,
                     x_floor: float = 1e-300) -> np.ndarray:
    """x in [lo, hi] with f(x) = target for each target; f increasing (batched: one call for many x).

    One batched call on a grid (denser near ``lo``) brackets every target; a second batched call
    evaluates the linear interpolation inside each bracket, which tightens it; :func:`bracketed_roots`
    then refines all roots together (one batched call per step for the rows still open: a model call
    costs about the same for one row as for fifty). Grid points without a finite value (past the model's
    range) are left out, and so is the grid beyond the first point where the function stops increasing.

    Parameters
    ----------
    f_batch : (N,) x -> (N,) values [same unit as the targets]
    targets : (K,) values to reach
    lo, hi : the interval searched [same unit as x]
    what, hint : words for the error: "{what} {i} cannot be reached", and what to do about it
    xtol, rtol, x_floor : tolerances of :func:`increasing_root` (the same bound on each root's error)

    Raises
    ------
    InfeasibleError when a target lies beyond the part of the grid where the function increases.
    """
    targets = np.asarray(targets, dtype=float)
    grid = lo + (hi - lo) * np.linspace(0.0, 1.0, GRID) ** 1.5
    vals = f_batch(grid)
    ok = np.isfinite(vals)
    grid, vals = grid[ok], vals[ok]
    # only the part of the grid where the function still increases brackets anything
    stop = np.nonzero(np.diff(vals) <= 0)[0]
    if stop.size:
        grid, vals = grid[:stop[0] + 1], vals[:stop[0] + 1]
    j = np.searchsorted(vals, targets)
    if len(vals) < 2 or np.any(j >= len(vals)):
        # beyond the rising part; with fewer than two rising figures no level has a bracket
        i = int(np.argmax(j >= len(vals))) if len(vals) >= 2 else 0
        raise InfeasibleError(f"{what} {i + 1} cannot be reached: the model does not go that far", hint=hint)
    j = np.maximum(j, 1)
    a, c = grid[j - 1], grid[j]
    fa, fc = vals[j - 1], vals[j]
    guess = a + (targets - fa) * (c - a) / (fc - fa)
    fg = f_batch(guess)
    below = fg < targets
    lo_b, hi_b = np.where(below, guess, a), np.where(below, c, guess)
    flo, fhi = np.where(below, fg, fa) - targets, np.where(below, fc, fg) - targets

    def f_rows(x: np.ndarray, rows: np.ndarray) -> np.ndarray:
        return f_batch(x) - targets[rows]

    out = bracketed_roots(f_rows, lo_b, hi_b, flo, fhi, xtol=xtol, rtol=rtol, x_floor=x_floor)
    out[fg == targets] = guess[fg == targets]
    return out


#: the most steps :func:`bracketed_roots` takes (it needs 4 to 8 on the smooth functions of this package)
MAX_STEPS = 100
#: up to this many rows :func:`bracketed_roots` works row by row in plain floats
FLOAT_ROWS = 4
#: the batched paths of the solver and the designer run under these numpy error settings and treat any
#: floating-point trouble (amounts so large they overflow...) as "not settled here": the scalar path of
#: before then answers, or refuses, as it always did
FAST_PATH_ERRORS = {"over": "raise", "invalid": "raise", "divide": "raise"}
FAST_PATH_FAILURES = (FloatingPointError, OverflowError, ZeroDivisionError)


def bracketed_roots(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo, hi, f_lo=None, f_hi=None, *,
                    xtol: float = XTOL, rtol: float = RTOL, x_floor: float = 1e-300, first=None,
                    window: float = 0.0, scale=None, counter: list | None = None) -> np.ndarray:
    """Roots of many increasing functions at once, each in its own bracket: a vectorised method of
    Chandrupatla (1997, Adv Eng Softw 28:145) — inverse quadratic interpolation where it is safe, bisection
    where it is not, and the bracket kept at every step.

    Parameters
    ----------
    f : (x (k,), rows (k,) int) -> f_rows(x) (k,): the functions of the given rows, one batched call (a row
        may appear more than once)
    lo, hi : (K,) brackets [same unit as x]; each row's function is at or below 0 at lo
    f_lo, f_hi : (K,) the functions at the ends when already computed (they are not computed again);
        None: computed in the first batched call
    xtol, rtol, x_floor : each root is within ``xtol * max(|scale|, x_floor) + rtol * |root|`` of the true
        one, the bound of :func:`increasing_root` (Brent's method) with scale = hi, so the two agree to it
    scale : (K,) the scale of ``xtol`` [same unit as x]: ``hi`` when None or NaN (a first guess of the
        root makes ``xtol`` a tolerance relative to the root itself)
    first : (K,) a first guess of each root [same unit as x] (NaN: none); the secant of the ends when None
    window : with ``first``: relative half-width [-] of a window around the guess whose two ends are
        evaluated in the first batched call; when they straddle the root the bracket shrinks to them at
        once (a guess known to be good to 1e-9 then needs two or three steps in all)
    counter : a list that gets the number of batched calls appended (for the benchmarks and tests)

    Returns
    -------
    (K,) roots [same unit as x]; NaN for a row whose function does not change sign in its bracket (above 0
    already at lo, or still below 0 at hi).
    """
    x1 = np.array(lo, dtype=float, ndmin=1)
    x2 = np.array(hi, dtype=float, ndmin=1)
    K = x1.size
    sc = np.abs(x2) if scale is None else np.array(scale, dtype=float, ndmin=1)
    sc = np.where(np.isfinite(sc), np.abs(sc), np.abs(x2))
    if K <= FLOAT_ROWS:  # a few rows: the same steps in plain floats, row by row (numpy's per-call cost
        # would dominate)
        def one(v, i):
            return None if v is None else float(np.asarray(v, dtype=float).reshape(-1)[i])

        out, calls = np.empty(K), 0
        by_row = getattr(f, "row", None)  # a function of plain numbers per row, when f offers one
        for i in range(K):
            row = np.array([i])
            out[i], c = _one_bracketed_root(lambda x, _rows, row=row: f(x, np.repeat(row, np.size(x))),
                                            float(x1[i]), float(x2[i]), one(f_lo, i), one(f_hi, i),
                                            one(first, i), window, xtol * max(float(sc[i]), x_floor), rtol,
                                            None if by_row is None else by_row(i))
            calls += c
        if counter is not None:
            counter.append(calls)
        return out
    rows = np.arange(K)
    f1 = np.full(K, np.nan) if f_lo is None else np.array(f_lo, dtype=float, ndmin=1)
    f2 = np.full(K, np.nan) if f_hi is None else np.array(f_hi, dtype=float, ndmin=1)
    guess = None if first is None else np.array(first, dtype=float, ndmin=1)
    calls = 0
    # the first batched call: the ends not given, and the window around each guess
    xs, rs, kinds = [], [], []
    for given, ends, kind in ((f_lo, x1, 0), (f_hi, x2, 1)):
        if given is None:
            xs.append(ends)
            rs.append(rows)
            kinds.append(np.full(K, kind))
    if guess is not None and window > 0:
        for side in (1.0 - window, 1.0 + window):
            p = guess * side
            ok = np.isfinite(p) & (p > x1) & (p < x2)
            xs.append(p[ok])
            rs.append(rows[ok])
            kinds.append(np.full(int(ok.sum()), 2))
    if xs:
        xa, ra, ka = np.concatenate(xs), np.concatenate(rs), np.concatenate(kinds)
        fa = np.asarray(f(xa, ra), dtype=float)
        fa = np.where(np.isnan(fa), np.inf, fa)
        calls += 1
        f1[ra[ka == 0]] = fa[ka == 0]
        f2[ra[ka == 1]] = fa[ka == 1]
        for xp, rp, fp in zip(xa[ka == 2], ra[ka == 2], fa[ka == 2], strict=True):
            if fp <= 0 and xp > x1[rp]:
                x1[rp], f1[rp] = xp, fp
            elif fp > 0 and xp < x2[rp]:
                x2[rp], f2[rp] = xp, fp
    tol_abs = xtol * np.maximum(sc, x_floor)
    out = np.where(f1 == 0, x1, x2)
    out[~(f2 >= 0) | ~(f1 <= 0)] = np.nan  # no sign change in the bracket
    open_ = (f1 < 0) & (f2 > 0)
    if guess is None or window > 0:
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(open_, f1 / (f1 - f2), 0.5)
    else:
        t = (guess - x1) / np.where(x2 > x1, x2 - x1, 1.0)
    t = np.where(np.isfinite(t), t, 0.5)
    x3, f3 = x2.copy(), f2.copy()
    for _ in range(MAX_STEPS):
        idx = rows[open_]
        if idx.size == 0:
            break
        width = x2[idx] - x1[idx]
        tl = 0.5 * (tol_abs[idx] + rtol * np.abs(x1[idx])) / np.abs(width)
        ti = np.clip(t[idx], tl, 1.0 - tl)
        xt = x1[idx] + ti * width
        ft = np.asarray(f(xt, idx), dtype=float)
        ft = np.where(np.isnan(ft), np.inf, ft)  # no answer there: past the model's range, so past the root
        calls += 1
        same = np.sign(ft) == np.sign(f1[idx])
        # x1: the newest point; x2: the other end of the bracket; x3: the point given up
        x3[idx] = np.where(same, x1[idx], x2[idx])
        f3[idx] = np.where(same, f1[idx], f2[idx])
        x2[idx] = np.where(same, x2[idx], x1[idx])
        f2[idx] = np.where(same, f2[idx], f1[idx])
        x1[idx], f1[idx] = xt, ft
        a1, a2, a3 = x1[idx], x2[idx], x3[idx]
        b1, b2, b3 = f1[idx], f2[idx], f3[idx]
        best = np.abs(b1) < np.abs(b2)
        xm = np.where(best, a1, a2)
        fm = np.where(best, b1, b2)
        tol = 0.5 * (tol_abs[idx] + rtol * np.abs(xm))
        done = (fm == 0) | (np.abs(a2 - a1) <= 2.0 * tol)
        out[idx[done]] = xm[done]
        open_[idx[done]] = False
        with np.errstate(divide="ignore", invalid="ignore"):
            xi = (a1 - a2) / (a3 - a2)
            ph = (b1 - b2) / (b3 - b2)
            iqi = (b1 / (b2 - b1) * b3 / (b2 - b3)
                   + (a3 - a1) / (a2 - a1) * b1 / (b3 - b1) * b2 / (b3 - b2))
        use = (ph * ph < xi) & ((1.0 - ph) ** 2 < 1.0 - xi) & np.isfinite(iqi)
        t[idx] = np.where(use, iqi, 0.5)
    else:
        idx = rows[open_]
        out[idx] = np.where(np.abs(f1[idx]) < np.abs(f2[idx]), x1[idx], x2[idx])
    if counter is not None:
        counter.append(calls)
    return out


def _one_bracketed_root(f, x1: float, x2: float, f1: float | None, f2: float | None, first: float | None,
                        window: float, tol_abs: float, rtol: float,
                        f_float: Callable[[float], float] | None = None) -> tuple[float, int]:
    """:func:`bracketed_roots` for one row, in plain floats: (root, batched calls made). ``f_float``: the
    row's function of a float, when there is one (then used in place of ``f``)."""
    row1 = np.zeros(1, dtype=int)
    calls = 0
    pts = [x for x, v in ((x1, f1), (x2, f2)) if v is None]
    if first is not None and window > 0 and math.isfinite(first):
        pts += [p for p in (first * (1.0 - window), first * (1.0 + window)) if x1 < p < x2]
    if pts:
        vals = ([f_float(p) for p in pts] if f_float is not None
                else f(np.array(pts), np.zeros(len(pts), dtype=int)).tolist())
        calls += 1
        got = {}
        for p, v in zip(pts, vals, strict=True):
            got[p] = math.inf if v != v else v
        f1 = got.pop(x1) if f1 is None else f1
        f2 = got.pop(x2) if f2 is None else f2
        for p, v in sorted(got.items()):
            if v <= 0 and p > x1:
                x1, f1 = p, v
            elif v > 0 and p < x2:
                x2, f2 = p, v
    if f1 == 0:
        return x1, calls
    if not f2 >= 0 or not f1 <= 0:
        return math.nan, calls  # no sign change in the bracket
    if f2 == 0:
        return x2, calls
    if first is not None and window <= 0 and math.isfinite(first) and x2 > x1:
        t = (first - x1) / (x2 - x1)
    else:
        t = f1 / (f1 - f2)
    x3, f3 = x2, f2
    for _ in range(MAX_STEPS):
        width = x2 - x1
        tl = 0.5 * (tol_abs + rtol * abs(x1)) / abs(width)
        xt = x1 + min(max(t, tl), 1.0 - tl) * width
        ft = float(f_float(xt)) if f_float is not None else float(f(np.array([xt]), row1)[0])
        calls += 1
        if ft != ft:
            ft = math.inf  # no answer there: past the model's range, so past the root
        if (ft > 0) == (f1 > 0) and ft != 0:
            x3, f3 = x1, f1
        else:
            x3, f3 = x2, f2
            x2, f2 = x1, f1
        x1, f1 = xt, ft
        xm, fm = (x1, f1) if abs(f1) < abs(f2) else (x2, f2)
        if fm == 0 or abs(x2 - x1) <= tol_abs + rtol * abs(xm):
            return xm, calls
        t = 0.5
        if x3 != x2 and f3 != f2 and f3 != f1 and f2 != f1 and math.isfinite(f3) and math.isfinite(f1):
            xi = (x1 - x2) / (x3 - x2)
            ph = (f1 - f2) / (f3 - f2)
            if ph * ph < xi and (1.0 - ph) ** 2 < 1.0 - xi:
                t = f1 / (f2 - f1) * f3 / (f2 - f3) + (x3 - x1) / (x2 - x1) * f1 / (f3 - f1) * f2 / (f3 - f2)
    return (x1 if abs(f1) < abs(f2) else x2), calls
