"""Cost of turning typical amount text into numbers: first sight of a text, and a repeated text.

Run: ``python benchmarks/bench_units.py``. Prints medians per parse [µs] over 1000 typical amount strings
(numbers as people type them, units as plan files and the bundled catalog spell them): "first sight"
clears the amount cache before each pass (the unit registry and the per-unit caches stay warm, as in a
session), "repeated" parses the same 1000 strings again (the cache hit every plan reload relies on).
"""

from __future__ import annotations

import random
import statistics
import time

from mediaplan.medium.units import parse_amount

#: unit and the range of numbers typed with it (common practice in culture media)
UNITS = {"g/L": (0.1, 99.0), "mg/L": (0.01, 2000.0), "mM": (0.01, 99.0), "mol/kg": (0.01, 2.0),
         "mmol/kg": (0.1, 999.0), "uM": (0.01, 99.0), "µM": (0.01, 99.0), "mol/L": (0.01, 2.0),
         "% w/v": (0.1, 20.0), "g/kg": (1.0, 300.0), "mL/L": (1.0, 100.0)}


def typical(n: int = 1000, seed: int = 0) -> list[str]:
    """``n`` distinct amount strings: 1-4 significant figures, the units above."""
    rng = random.Random(seed)
    out: set[str] = set()
    while len(out) < n:
        unit = rng.choice(sorted(UNITS))
        x = float(f"{rng.uniform(*UNITS[unit]):.{rng.randint(1, 4)}g}")
        out.add(f"{x:g} {unit}")
    return sorted(out)


def per_parse(texts: list[str], *, clear: bool, repeat: int = 9) -> float:
    """Median over ``repeat`` passes of the mean time of one parse [s]."""
    times = []
    for _ in range(repeat):
        if clear:
            parse_amount.cache_clear()
        t0 = time.perf_counter()
        for t in texts:
            parse_amount(t)
        times.append((time.perf_counter() - t0) / len(texts))
    return statistics.median(times)


def main() -> None:
    texts = typical()
    for t in texts:  # build the registry and the per-unit caches once
        parse_amount(t)
    cold = per_parse(texts, clear=True)
    warm = per_parse(texts, clear=False)
    print(f"first sight: {cold * 1e6:8.2f} µs per amount (median of 9 passes over {len(texts)} strings)")
    print(f"repeated:    {warm * 1e6:8.2f} µs per amount (cache hit)")


if __name__ == "__main__":
    main()
