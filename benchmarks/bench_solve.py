"""Solver speed: one solve of a ~30-component medium to a water-potential target.

Run: ``python benchmarks/bench_solve.py``. Prints medians of in-process timings [ms]:
the whole ``solve_target`` call (root finding on the compiled model, then a fresh ``evaluate()`` of the
answer), the final ``evaluate()`` alone, and the root finding (their difference). Goal: one solve well
under 10 ms.

Medium: MS 1962 (catalog/media/ms1962.yaml, salts, iron, vitamins, inositol, glycine) with 30 g/L
sucrose and a handful of growth regulators and amino acids (an invented shoot-culture scenario).
"""

from __future__ import annotations

from bench_engine import median_time  # same folder: run as python benchmarks/bench_solve.py

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.solve import solve_target

EXTRA = [("sucrose", "30 g/L"), ("bap", "1 mg/L"), ("naa", "0.1 mg/L"), ("kinetin", "0.5 mg/L"),
         ("gibberellic_acid", "0.1 mg/L"), ("l_glutamine", "200 mg/L"), ("l_proline", "100 mg/L"),
         ("l_arginine", "50 mg/L"), ("l_asparagine", "50 mg/L"), ("iaa", "0.2 mg/L")]


def median_ms(fn) -> float:
    return median_time(fn, repeat=9, number=10) * 1000.0


def main() -> None:
    catalog = get_catalog()
    recipe = Recipe(base="ms1962")
    for cid, amount in EXTRA:
        recipe = recipe.with_amount(cid, amount)
    sol = solve_target(recipe, catalog, "-1.0 MPa", ["mannitol"])  # warm the caches
    n = len(sol.evaluation.components)
    t_solve = median_ms(lambda: solve_target(recipe, catalog, "-1.0 MPa", ["mannitol"]))
    t_eval = median_ms(lambda: evaluate(sol.recipe, catalog))
    t_two = median_ms(lambda: solve_target(recipe, catalog, "-1.2 MPa", ["sucrose", "mannitol"],
                                           hold={"sucrose": "20 g/L"}))
    print(f"components in the solved medium: {n}")
    print(f"solve_target, one osmoticum:      median {t_solve:7.2f} ms  (goal: well under 10 ms)")
    print(f"  final evaluate() alone:         median {t_eval:7.2f} ms  ({100 * t_eval / t_solve:.0f} % of the solve)")
    print(f"  root finding and bookkeeping:   median {t_solve - t_eval:7.2f} ms")
    print(f"solve_target, sucrose held + mannitol: median {t_two:7.2f} ms")
    print(f"answer: {sol.message}")


if __name__ == "__main__":
    main()
