"""A sweep of 10^6 variants of one medium: time and peak memory, the chunked grid against the dense input.

Run: ``python benchmarks/bench_sweep.py [rows] [runs]``. MS 1962 (with its 30 g/L sucrose) plus a grid of
mannitol 0-100 g/L x sucrose 0-60 g/L, ``rows`` variants (default 10^6, a 1000 x 1000 grid), solved two
ways, each in a child process of its own (so that each peak resident memory is its own), ``runs`` times in
turn (default 3; the medians are printed):

- grid: :func:`mediaplan.medium.grid.solve_grid` makes the amounts chunk by chunk from the base row and
  the two axes and keeps only osmolality, water activity and potential (1-D arrays);
- dense: the whole (rows x components) input n and b built first, then :meth:`MediumModel.solve` in one
  call (it works in chunks of ``SOLVE_CHUNK`` rows), as the sweep was done before.

Prints for each the CPU and wall time from the base row and the axes to the osmolalities (the dense way's
building of its input included) and the process's peak resident memory (the operating system's account,
the interpreter and the catalog included), the ratio grid / dense of the CPU times taken
pair by pair, and the largest relative difference of the two osmolalities. Goal (issue 16): 10^6 variants
<= 8 s CPU and <= 0.5 GB.
"""

from __future__ import annotations

import json
import math
import resource
import statistics
import subprocess
import sys
import time

import numpy as np

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.grid import Axis, solve_grid
from mediaplan.medium.model import SOLVE_CHUNK, compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import parse_amount


def _setup(rows: int):
    k = int(math.isqrt(rows))
    cat = get_catalog()
    lines = Recipe(base="ms1962").lines(cat)
    comps = [ln.component for ln in lines] + [cat.components["mannitol"]]
    model = compiled(cat, comps, 298.15)
    n0, b0 = model.amounts_to_arrays([ln.amount for ln in lines] + [parse_amount("0 g/L")])
    i_m = len(comps) - 1
    i_s = [c.id for c in comps].index("sucrose")
    mann = np.linspace(0, 100, k) / cat.components["mannitol"].molar_mass * 1000  # g/L -> mol/m^3
    sucr = np.linspace(0, 60, k) / cat.components["sucrose"].molar_mass * 1000
    return model, n0, b0, [Axis.per_volume(i_m, mann), Axis.per_volume(i_s, sucr)]


def child(way: str, rows: int, out: str) -> None:
    """One solve in this process; prints a JSON line of its figures and saves the osmolalities to ``out``."""
    model, n0, b0, axes = _setup(rows)
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # MiB (Linux reports KiB)
    c0, w0 = time.process_time(), time.perf_counter()
    if way == "grid":
        y = solve_grid(model, n0, b0, axes)["osmolality"]
    else:  # the whole input first, as before
        k = len(axes[0])
        N = np.tile(n0, (k * k, 1))
        N[:, axes[0].index] = np.repeat(axes[0].n, k)
        N[:, axes[1].index] = np.tile(axes[1].n, k)
        B = np.zeros_like(N)
        y = model.solve(N, B).mix.osmolality
    cpu, wall = time.process_time() - c0, time.perf_counter() - w0
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    np.save(out, y)
    print(json.dumps({"cpu": cpu, "wall": wall, "rss": rss, "rss0": rss0, "rows": int(y.size),
                      "components": len(model.components)}))


def _run(way: str, rows: int, out: str) -> dict:
    r = subprocess.run([sys.executable, __file__, "--child", way, str(rows), out], capture_output=True, text=True,
                       check=True)
    return json.loads(r.stdout.strip().splitlines()[-1])


def main() -> None:
    if sys.argv[1:2] == ["--child"]:
        child(sys.argv[2], int(sys.argv[3]), sys.argv[4])
        return
    import tempfile
    from pathlib import Path

    rows = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    runs = int(sys.argv[2]) if len(sys.argv) > 2 else 3
    with tempfile.TemporaryDirectory() as tmp:
        got: dict[str, list[dict]] = {"grid": [], "dense": []}
        for _ in range(runs):  # grid, dense, grid, dense...: a drift of the machine touches both alike
            for way in ("grid", "dense"):
                got[way].append(_run(way, rows, str(Path(tmp) / f"{way}.npy")))
        y_grid, y_dense = np.load(Path(tmp) / "grid.npy"), np.load(Path(tmp) / "dense.npy")
    diff = float(np.nanmax(np.abs(y_grid - y_dense) / np.abs(y_dense)))
    first = got["grid"][0]
    print(f"{first['rows']:,} variants of MS 1962 ({first['components']} components; mannitol 0-100 g/L x "
          f"sucrose 0-60 g/L), chunks of {SOLVE_CHUNK:,}, medians of {runs} runs:")
    for way in ("grid", "dense"):
        m = {k: statistics.median(r[k] for r in got[way]) for k in ("cpu", "wall", "rss", "rss0")}
        print(f"  {way:5s} {m['cpu']:6.2f} s CPU {m['wall']:6.2f} s wall, peak resident memory {m['rss']:5.0f} MiB "
              f"({m['rss0']:.0f} MiB before the solve)")
    ratio = statistics.median(g["cpu"] / d["cpu"] for g, d in zip(got["grid"], got["dense"], strict=True))
    print(f"  grid / dense CPU (pair by pair): {ratio:.2f}; goal: grid <= 8 s CPU and <= 512 MiB")
    print(f"  osmolality {np.nanmin(y_grid) * 1000:.0f}-{np.nanmax(y_grid) * 1000:.0f} mOsm/kg; grid vs dense: "
          f"largest relative difference {diff:.1e}")


if __name__ == "__main__":
    main()
