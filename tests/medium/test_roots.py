"""The one root finder of the solver and the series designer (mediaplan.medium.roots), on functions whose
roots are known in closed form."""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.medium import roots
from mediaplan.medium.errors import InfeasibleError


def test_increasing_root_and_the_ends_it_is_given():
    calls = []

    def f(x):
        calls.append(x)
        return x**3 - 2.0

    x = roots.increasing_root(f, 0.0, 2.0)
    assert x == pytest.approx(2.0 ** (1 / 3), rel=1e-13)
    n_plain = len(calls)
    calls.clear()
    again = roots.increasing_root(f, 0.0, 2.0, f_lo=-2.0, f_hi=6.0)
    assert again == x
    assert 0.0 not in calls and 2.0 not in calls and len(calls) == n_plain - 2  # the ends cost nothing


def test_bracket_above_doubles_then_stops_at_the_limit():
    seen = []

    def f(x):
        seen.append(x)
        return x

    assert roots.bracket_above(f, 10.0, 1.0, 1e6) == 16.0
    assert seen == [1.0, 2.0, 4.0, 8.0, 16.0]
    assert roots.bracket_above(f, 10.0, 1.0, 12.0) == 12.0  # the limit itself is tried
    assert roots.bracket_above(f, 10.0, 1.0, 9.0) is None  # never past the target below the limit


def test_bracket_above_draws_back_from_where_the_model_has_no_answer():
    """f has no finite value beyond x = 5 (a model past its range): the bracket is found below it."""
    def f(x):
        return x if x <= 5.0 else math.nan

    hi = roots.bracket_above(f, 3.0, 100.0, 100.0)
    assert 3.0 < hi <= 5.0
    assert roots.bracket_above(f, 7.0, 100.0, 100.0) is None  # unreachable where the model answers


def test_increasing_roots_batched():
    evaluated = []

    def f_batch(x):
        evaluated.append(np.size(x))
        return np.sqrt(x)

    targets = np.array([0.5, 1.0, 1.5, 2.9])
    x = roots.increasing_roots(f_batch, targets, 0.0, 9.0, what="level", hint="h")
    np.testing.assert_allclose(x, targets**2, rtol=1e-12)
    assert evaluated[0] == roots.GRID and evaluated[1] == targets.size  # two batched calls first


def test_increasing_roots_skips_points_without_answer_and_reports_the_unreachable():
    def f_batch(x):
        x = np.asarray(x, dtype=float)
        return np.where(x < 4.0, x, np.nan)

    np.testing.assert_allclose(roots.increasing_roots(f_batch, np.array([1.0, 2.5]), 0.0, 9.0, what="level",
                                                      hint="h"), [1.0, 2.5], rtol=1e-12)
    with pytest.raises(InfeasibleError, match="level 2 cannot be reached"):
        roots.increasing_roots(f_batch, np.array([1.0, 5.0]), 0.0, 9.0, what="level", hint="h")


def test_increasing_roots_uses_only_the_increasing_part():
    """Past x = 6 the function falls (a model misbehaving far out): targets below its top are still found."""
    def f_batch(x):
        x = np.asarray(x, dtype=float)
        return np.where(x < 6.0, x, 12.0 - x)

    np.testing.assert_allclose(roots.increasing_roots(f_batch, np.array([2.0, 5.0]), 0.0, 9.0, what="level",
                                                      hint="h"), [2.0, 5.0], rtol=1e-12)
    with pytest.raises(InfeasibleError):
        roots.increasing_roots(f_batch, np.array([6.5]), 0.0, 9.0, what="level", hint="h")


@pytest.mark.parametrize("shape", ["no_answer", "one_point", "falls_at_once", "flat"])
def test_increasing_roots_without_a_rising_stretch_refuses_in_words(shape):
    """A model that gives no two rising figures on the grid (no answer at all, one only at the start, falling
    or flat from the start) leaves no bracket: the search refuses the level, never fails on an index (a
    series in an absurd background found this)."""
    def f_batch(x):
        x = np.asarray(x, dtype=float)
        return {"no_answer": np.full_like(x, np.nan), "one_point": np.where(x == 0.0, 1.0, np.nan),
                "falls_at_once": 1.0 - x, "flat": np.ones_like(x)}[shape]

    with pytest.raises(InfeasibleError, match="level 1 cannot be reached"):
        roots.increasing_roots(f_batch, np.array([0.5, 2.0]), 0.0, 9.0, what="level", hint="h")
