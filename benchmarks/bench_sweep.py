"""A sweep of 10^6 variants of one medium: time and peak memory.

Run: ``python benchmarks/bench_sweep.py [rows]``. MS 1962 (with its 30 g/L sucrose) plus a grid of
mannitol 0-100 g/L x sucrose 0-60 g/L, ``rows`` variants (default 10^6, a 1000 x 1000 grid), solved by
the compiled model in one call (it works in chunks of ``SOLVE_CHUNK`` rows). Prints the CPU and wall time
of the solve and the process's peak resident memory (the operating system's account, inputs included).
Goal (issue 16): 10^6 variants <= 8 s and <= 0.5 GB.
"""

from __future__ import annotations

import math
import resource
import sys
import time

import numpy as np

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.model import SOLVE_CHUNK, compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import parse_amount


def main() -> None:
    rows = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    k = int(math.isqrt(rows))
    cat = get_catalog()
    base = Recipe(base="ms1962")
    lines = base.lines(cat)
    comps = [ln.component for ln in lines] + [cat.components["mannitol"]]
    model = compiled(cat, comps, 298.15)
    n0, b0 = model.amounts_to_arrays([ln.amount for ln in lines] + [parse_amount("0 g/L")])
    i_m = len(comps) - 1
    i_s = [c.id for c in comps].index("sucrose")
    mann = np.linspace(0, 100, k) / cat.components["mannitol"].molar_mass * 1000  # g/L -> mol/m^3
    sucr = np.linspace(0, 60, k) / cat.components["sucrose"].molar_mass * 1000
    N = np.tile(n0, (k * k, 1))
    N[:, i_m] = np.repeat(mann, k)
    N[:, i_s] = np.tile(sucr, k)
    B = np.zeros_like(N)
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # MiB (Linux reports KiB)
    c0, w0 = time.process_time(), time.perf_counter()
    st = model.solve(N, B)
    cpu, wall = time.process_time() - c0, time.perf_counter() - w0
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    y = st.mix.osmolality * 1000
    print(f"{k * k:,} variants of MS 1962 (mannitol 0-100 g/L x sucrose 0-60 g/L), chunks of {SOLVE_CHUNK:,}: "
          f"{cpu:.2f} s CPU, {wall:.2f} s wall (goal <= 8 s)")
    print(f"peak resident memory {rss:.0f} MiB ({rss0:.0f} MiB before the solve, the inputs included) "
          f"(goal <= 0.5 GB); osmolality {np.nanmin(y):.0f}-{np.nanmax(y):.0f} mOsm/kg")


if __name__ == "__main__":
    main()
