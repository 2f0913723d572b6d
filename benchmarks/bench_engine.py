"""Engine speed: one full evaluation, a vectorised sweep, and the ratio to pyEQL.

Run: ``python benchmarks/bench_engine.py``. Prints medians of in-process timings.
Goals: one full evaluation of MS + 30 g/L sucrose (about 20-30 components) <= 0.3 ms;
100,000 variants (mannitol x sucrose grid) < 1 s; ratio to pyEQL on the same salt mixture.
"""

from __future__ import annotations

import statistics
import time

import numpy as np
import timing

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe


def median_time(fn, repeat: int = 7, number: int = 50) -> float:
    """Median time of one call of ``fn`` [s] (see benchmarks/timing.py)."""
    return timing.median_time(fn, repeat, number)


def main() -> None:
    cat = get_catalog()
    recipe = Recipe(base="ms1962").with_amount("bap", "1 mg/L").with_amount("naa", "0.1 mg/L")
    n_comp = len(recipe.lines(cat))
    evaluate(recipe, cat)  # warm the compiled-model cache
    t_eval = median_time(lambda: evaluate(recipe, cat), number=200)
    print(f"full evaluate(), MS 1962 + 30 g/L sucrose, {n_comp} components: median {t_eval * 1e3:.3f} ms "
          f"(goal <= 0.3 ms; ratio to goal {t_eval / 0.3e-3:.2f})")
    # small media: the fixed cost of an evaluation (no salts; one salt alone)
    for label, small in (("mannitol 0.3 mol/kg + sucrose 20 g/L", Recipe().with_amount("mannitol", "0.3 mol/kg")
                          .with_amount("sucrose", "20 g/L")), ("KNO3 20 mM alone", Recipe().with_amount("KNO3", "20 mM"))):
        evaluate(small, cat)
        t_small = median_time(lambda small=small: evaluate(small, cat), number=200)
        print(f"full evaluate(), {label}: median {t_small * 1e3:.3f} ms")

    # the numerical core alone (compiled model, one row)
    lines = recipe.lines(cat)
    model = compiled(cat, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    t_core = median_time(lambda: model.solve(n[None, :], b[None, :]), number=200)
    print(f"compiled model solve, one row: median {t_core * 1e3:.3f} ms")

    # vectorised sweep: 100,000 variants (316 x 316 grid of mannitol and sucrose additions)
    sweep = Recipe(base="ms1962").with_amount("mannitol", "0 g/L")
    comps = [ln.component for ln in sweep.lines(cat)] + [cat.components["mannitol"]]
    model = compiled(cat, comps, 298.15)
    base_n, base_b = model.amounts_to_arrays(
        [ln.amount for ln in sweep.lines(cat)] + [__import__("mediaplan.medium.units", fromlist=["x"]).parse_amount("0 g/L")])
    k = 316
    mann = np.linspace(0, 100, k) / (cat.components["mannitol"].molar_mass / 1000) / 1000  # g/L -> mol/m3
    sucr = np.linspace(0, 60, k) / (cat.components["sucrose"].molar_mass / 1000) / 1000
    N = np.tile(base_n, (k * k, 1))
    i_m = len(comps) - 1
    i_s = [c.id for c in comps].index("sucrose")
    N[:, i_m] = np.repeat(mann * 1000, k)
    N[:, i_s] = np.tile(sucr * 1000, k)
    B = np.zeros_like(N)
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        st = model.solve(N, B)
        times.append(time.perf_counter() - t0)
    t_sweep = statistics.median(times)
    print(f"vectorised sweep, {N.shape[0]:,} variants of MS (mannitol 0-100 g/L x sucrose 0-60 g/L): "
          f"median {t_sweep:.3f} s (goal < 1 s); osmolality range "
          f"{st.mix.osmolality.min() * 1000:.0f}-{st.mix.osmolality.max() * 1000:.0f} mOsm/kg")

    try:
        import pyEQL
    except ImportError:
        print("pyEQL not installed: no ratio (pip install pyEQL)")
        return
    salts = Recipe()
    for cid, amt in [("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
                     ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")]:
        salts = salts.with_amount(cat.resolve(cid).component.id, amt)
    evaluate(salts, cat)
    t_ours = median_time(lambda: evaluate(salts, cat), number=200)

    def peql():
        sol = pyEQL.Solution({"NH4+": "20.6 mmol/kg", "NO3-": "39.4 mmol/kg", "K+": "20.05 mmol/kg",
                              "Ca+2": "2.99 mmol/kg", "Cl-": "5.98 mmol/kg", "Mg+2": "1.50 mmol/kg",
                              "SO4-2": "1.50 mmol/kg", "H2PO4-": "1.25 mmol/kg"}, engine="native")
        return sol.get_osmotic_coefficient()

    peql()
    t_peql = median_time(peql, repeat=3, number=3)
    print(f"MS macro salts: mediaplan {t_ours * 1e3:.3f} ms, pyEQL {t_peql * 1e3:.1f} ms: "
          f"mediaplan is {t_peql / t_ours:,.0f}x faster")


if __name__ == "__main__":
    main()
