"""Solver speed: one solve of a ~30-component medium to a water-potential target, alone and as the command
line and the API make it (with the range of the addition).

Run: ``python benchmarks/bench_solve.py``. Prints medians of in-process timings [ms] (CPU time of this
process, ``time.process_time``: other processes on a shared machine lengthen neither side of a ratio):

- the whole ``solve_target`` call at full and at half strength (root finding on the compiled model, then a
  fresh ``evaluate()`` of the answer), the final ``evaluate()`` alone, and the root finding and bookkeeping
  (their difference). Goal (issue 16): ``solve`` <= 3 ms at any strength;
- the root finding alone, paired in one run: Brent's method on the scalar ZSR residual (the method of
  before: ``roots.increasing_root`` on ``Sweep.residual_at``, bracketed by the solubility limit) against the
  vectorised bracketed finder started from the closed-form root (``roots.bracketed_roots`` on
  ``model.sweep_line``), with the number of residual calls of each;
- the solve with the range of its addition (``tasks.uncertainty.with_ranges``, both ends in one batched
  root finding) and its JSON (``to_dict``), as ``mediaplan solve --json`` computes it.

Medium: MS 1962 (catalog/media/ms1962.yaml, salts, iron, vitamins, inositol, glycine) with 30 g/L
sucrose and a handful of growth regulators and amino acids (an invented shoot-culture scenario).
"""

from __future__ import annotations

import time

import numpy as np
from timing import median_time  # same folder: run as python benchmarks/bench_solve.py

from mediaplan.files.catalog import get_catalog
from mediaplan.medium import roots
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import sweep_line, sweep_residuals
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks import solve as solver
from mediaplan.tasks.solve import solve_target
from mediaplan.tasks.uncertainty import with_ranges
from mediaplan.thermo.potential import osmolality_from_potential

EXTRA = [("sucrose", "30 g/L"), ("bap", "1 mg/L"), ("naa", "0.1 mg/L"), ("kinetin", "0.5 mg/L"),
         ("gibberellic_acid", "0.1 mg/L"), ("l_glutamine", "200 mg/L"), ("l_proline", "100 mg/L"),
         ("l_arginine", "50 mg/L"), ("l_asparagine", "50 mg/L"), ("iaa", "0.2 mg/L")]


def median_ms(fn, number: int = 10) -> float:
    return median_time(fn, repeat=9, number=number, clock=time.process_time) * 1000.0


def root_finding(recipe: Recipe, catalog, target_pa: float) -> None:
    """The root finding of one solve alone, by the method of before and by the one of now (paired)."""
    comp = solver._resolve_osmotica(catalog, ["mannitol"])
    s = solver._setup(recipe, catalog, comp, None, None)
    sweep = s.path.sweep
    y = float(osmolality_from_potential(target_pa, recipe.temperature_k))
    capped = [c.soluble_at(recipe.temperature_k)[0] for c in s.free]
    calls = {"before": 0, "now": 0}

    def before() -> float:
        f = sweep.residual_at(y)

        def counted(x: float) -> float:
            calls["before"] += 1
            return f(x)

        x_cap = sweep.limit(capped).x
        return roots.increasing_root(counted, 0.0, x_cap, f_lo=counted(0.0), f_hi=counted(x_cap))

    def now() -> float:
        f = sweep_residuals(sweep, [y])
        f0 = f(np.zeros(1), np.zeros(1, dtype=int))
        line, exact = sweep_line(sweep, f)
        guess = line.root()
        steps: list[int] = []
        x = roots.bracketed_roots(line if exact else f, np.zeros(1), np.array([sweep.limit().x * (1 - 1e-12)]), f0,
                                  None, first=guess, window=solver.GUESS_WINDOW[exact], scale=guess, counter=steps)
        calls["now"] += 1 + steps[0]  # the residual at 0, then the finder's calls
        return float(x[0])

    x_before, x_now = before(), now()
    calls.update(before=0, now=0)
    before()
    now()
    n_before, n_now = calls["before"], calls["now"]
    t_before, t_now = median_ms(before), median_ms(now)
    print(f"  root finding, Brent on the scalar residual (before): median {t_before:6.3f} ms, {n_before} residual calls")
    print(f"  root finding, bracketed from the closed form (now):  median {t_now:6.3f} ms, {n_now} residual calls "
          f"(that line's own form); ratio now/before {t_now / t_before:.2f}")
    print(f"  the two roots differ by {abs(x_now / x_before - 1):.1e} (relative; tolerance 1e-13 + 4e-15)")


def main() -> None:
    catalog = get_catalog()
    recipe = Recipe(base="ms1962")
    for cid, amount in EXTRA:
        recipe = recipe.with_amount(cid, amount)
    half = recipe.with_settings(strength=0.5)
    for label, rec in (("full strength", recipe), ("half strength", half)):
        sol = solve_target(rec, catalog, "-1.0 MPa", ["mannitol"])  # warm the caches
        print(f"answer at {label}: {sol.message}")
        n = len(sol.evaluation.components)
        t_solve = median_ms(lambda rec=rec: solve_target(rec, catalog, "-1.0 MPa", ["mannitol"]))
        t_eval = median_ms(lambda sol=sol: evaluate(sol.recipe, catalog))
        print(f"{label}, {n} components in the solved medium:")
        print(f"  solve_target, one osmoticum:    median {t_solve:7.2f} ms  (goal <= 3 ms; ratio to goal "
              f"{t_solve / 3.0:.2f})")
        print(f"  final evaluate() alone:         median {t_eval:7.2f} ms  ({100 * t_eval / t_solve:.0f} % of the solve)")
        print(f"  root finding and bookkeeping:   median {t_solve - t_eval:7.2f} ms")
        root_finding(rec, catalog, -1.0e6)
    t_two = median_ms(lambda: solve_target(recipe, catalog, "-1.2 MPa", ["sucrose", "mannitol"],
                                           hold={"sucrose": "20 g/L"}))
    print(f"solve_target, sucrose held + mannitol: median {t_two:7.2f} ms")
    t_cli = median_ms(lambda: with_ranges(solve_target(recipe, catalog, "-1.0 MPa", ["mannitol"]), catalog)
                      .to_dict(), number=5)
    print(f"solve with the range of its addition and its JSON (as solve --json computes it): median {t_cli:7.2f} ms")


if __name__ == "__main__":
    main()
