"""A base formulation at any strength costs what it costs at full strength.

Run: ``python benchmarks/bench_strength.py``. Prints medians of in-process CPU timings [ms] of
``evaluate()`` of MS 1962 (with its 30 g/L sucrose) and the ratio to full strength. Goal: any strength
within 5 % of full strength (issue 16).

Every arm alternates between two compositions so that no arm is served by the kernel's cache of the last
composition's Pitzer pass: full strength with 1900 and 1901 mg/L KNO3; strengths never seen before (each
call a new number, so each scaled amount is formatted afresh); and two strengths seen before (0.5, 0.6).
"""

from __future__ import annotations

import itertools
import statistics
import time

import timing

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe


def median_cpu(fn, repeat: int = 9, number: int = 60) -> float:
    """Median CPU time of one call of ``fn`` [s] (see benchmarks/timing.py)."""
    return timing.median_time(fn, repeat, number, clock=time.process_time)


def main() -> None:
    cat = get_catalog()
    full = itertools.cycle([Recipe(base="ms1962"), Recipe(base="ms1962").with_amount("potassium_nitrate", "1901 mg/L")])
    seen = itertools.cycle([Recipe(base="ms1962", strength=0.5), Recipe(base="ms1962", strength=0.6)])
    fresh = (Recipe(base="ms1962", strength=0.5 + k * 1e-7) for k in itertools.count())
    for arm in (full, seen):
        evaluate(next(arm), cat)
        evaluate(next(arm), cat)
    rounds: dict[str, list[float]] = {"full": [], "fresh": [], "seen": []}
    for _ in range(3):  # interleaved, so that a drift in the machine's speed touches every arm alike
        rounds["full"].append(median_cpu(lambda: evaluate(next(full), cat)))
        rounds["fresh"].append(median_cpu(lambda: evaluate(next(fresh), cat)))
        rounds["seen"].append(median_cpu(lambda: evaluate(next(seen), cat)))
    t = {k: statistics.median(v) for k, v in rounds.items()}
    print(f"evaluate(), MS 1962 at full strength:         median {t['full'] * 1e3:6.3f} ms")
    print(f"  at strengths never seen before:           median {t['fresh'] * 1e3:6.3f} ms  "
          f"ratio {t['fresh'] / t['full']:.3f}  (goal <= 1.05)")
    print(f"  at strengths seen before (0.5, 0.6):      median {t['seen'] * 1e3:6.3f} ms  "
          f"ratio {t['seen'] / t['full']:.3f}  (goal <= 1.05)")


if __name__ == "__main__":
    main()
