"""The one timing helper of the benchmark scripts (run them as ``python3 benchmarks/bench_<name>.py``)."""

from __future__ import annotations

import statistics
import time


def median_time(fn, repeat: int = 7, number: int = 50, *, clock=time.perf_counter) -> float:
    """Median over ``repeat`` runs of the mean time of ``number`` calls of ``fn`` [s].

    ``clock=time.process_time`` measures this process's CPU time instead of wall time: on a shared machine
    other processes then lengthen neither side of a comparison made in one process."""
    times = []
    for _ in range(repeat):
        t0 = clock()
        for _ in range(number):
            fn()
        times.append((clock() - t0) / number)
    return statistics.median(times)
