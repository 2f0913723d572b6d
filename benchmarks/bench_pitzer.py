"""Timing of the Pitzer osmotic coefficient: one row and a batch of 100 000 rows.

Run: ``python benchmarks/bench_pitzer.py`` (budget: one 12-ion row well under 50 µs, 100 000 rows well
under 0.5 s).
"""

from __future__ import annotations

import timeit
from pathlib import Path

import numpy as np
import yaml

from mediaplan.thermo.pitzer import PitzerSystem, pitzer_params_from_dict

IONS = ["NH4[+]", "K[+]", "Na[+]", "Ca[2+]", "Mg[2+]", "Mn[2+]", "Zn[2+]", "NO3[-]", "Cl[-]", "SO4[2-]",
        "H2PO4[-]", "I[-]"]


def main() -> None:
    path = Path(__file__).resolve().parents[1] / "catalog" / "pitzer.yaml"
    with path.open(encoding="utf-8") as fh:
        params = pitzer_params_from_dict(yaml.safe_load(fh))
    t_init = timeit.timeit(lambda: PitzerSystem(IONS, params), number=200) / 200
    system = PitzerSystem(IONS, params)
    rng = np.random.default_rng(0)
    m = rng.uniform(0.0, 0.05, size=(100_000, len(IONS)))
    row = m[0].copy()
    n = 20_000
    t_row = min(timeit.repeat(lambda: system.osmotic_coefficient(row, 298.15), number=n, repeat=3)) / n
    t_batch = min(timeit.repeat(lambda: system.osmotic_coefficient(m, 298.15), number=3, repeat=3)) / 3
    print(f"{len(IONS)} ions, missing pairs: {len(system.missing_pairs)}")
    print(f"PitzerSystem.__init__      {t_init * 1e6:8.1f} µs")
    print(f"one row                    {t_row * 1e6:8.1f} µs")
    print(f"100 000 rows               {t_batch:8.3f} s  ({t_batch / 1e5 * 1e9:.0f} ns/row)")


if __name__ == "__main__":
    main()
