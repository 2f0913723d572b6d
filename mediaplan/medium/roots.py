"""Roots of increasing functions of one amount: the one root finder of the solver and the series designer.

Both ask the same question, "how much of this brings the medium to that?", of a function that grows
with the amount x: the osmolality of a medium along a :class:`~mediaplan.medium.model.Sweep`, a ZSR
residual, the molality of a substance on its way to saturation. Three steps, each usable alone:

:func:`bracket_above`
    an upper end where the function passes the target, grown from a first guess by doubling, and
    drawn back where the model has no finite answer (past its range);
:func:`increasing_roots`
    many targets at once: one batched call on a grid brackets them all, a second refines each bracket
    by linear interpolation, then :func:`increasing_root` finishes each;
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
    evaluates the linear interpolation inside each bracket, which tightens it; :func:`increasing_root`
    then refines each root, served the values already computed at its ends (a model call costs about
    the same for one row as for fifty). Grid points without a finite value (past the model's range) are
    left out, and so is the grid beyond the first point where the function stops increasing.

    Parameters
    ----------
    f_batch : (N,) x -> (N,) values [same unit as the targets]
    targets : (K,) values to reach
    lo, hi : the interval searched [same unit as x]
    what, hint : words for the error: "{what} {i} cannot be reached", and what to do about it
    xtol, rtol, x_floor : tolerances of :func:`increasing_root`

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
    if np.any(j >= len(vals)):
        i = int(np.argmax(j >= len(vals)))
        raise InfeasibleError(f"{what} {i + 1} cannot be reached: the model does not go that far", hint=hint)
    j = np.maximum(j, 1)
    a, c = grid[j - 1], grid[j]
    fa, fc = vals[j - 1], vals[j]
    guess = a + (targets - fa) * (c - a) / (fc - fa)
    fg = f_batch(guess)
    out = np.empty(targets.size)
    for i, t in enumerate(targets):
        if fg[i] == t:
            out[i] = guess[i]
            continue
        lo_i, hi_i = (guess[i], c[i]) if fg[i] < t else (a[i], guess[i])
        flo, fhi = (fg[i], fc[i]) if fg[i] < t else (fa[i], fg[i])
        out[i] = increasing_root(lambda x, t=t: float(f_batch(np.array([x]))[0]) - t, lo_i, hi_i,
                                 f_lo=flo - t, f_hi=fhi - t, xtol=xtol, rtol=rtol, x_floor=x_floor)
    return out
