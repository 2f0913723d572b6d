"""Timing of the plasmolysis designer and fitter (prints medians and ratios; asserts nothing).

Run: python benchmarks/bench_plasmolysis.py

Designs of 8 and of 60 levels (the most a series may have) in water and in MS 1962 at half strength, by
weight and with a stock (CPU time of this process, medians). Goal (issue 16): a 60-level series <= 20 ms.
Paired in the same run: the 60 levels found by the forward search (a grid of forward ZSR solves, then the
brackets refined on the forward osmolality: the designer's method before the batched residual, here with its
brackets already finished together by ``roots.bracketed_roots``; it stays as the fallback) against the
batched root finding on the ZSR residual from the closed-form root.
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.plasmolysis import Counts, design_series, fit_counts, inverse_link, potentials_between
from mediaplan.tasks.plasmolysis import design as designer
from mediaplan.thermo import potential


def median_ms(fn, repeat: int = 7) -> float:
    fn()  # warm caches (compiled models, scipy imports)
    times = []
    for _ in range(repeat):
        t = time.process_time()
        fn()
        times.append(time.process_time() - t)
    return 1000 * statistics.median(times)


def sixty_levels(cat) -> None:
    """60 levels from -0.4 to -1.8 MPa in water and in MS 1962 x0.5, by weight and with a stock; and the
    levels by the forward search (the fallback; paired, same run)."""
    psi = potentials_between(-0.4e6, -1.8e6, 60)
    cases = {"water": Recipe(volume="50 mL"), "ms1962 x0.5": Recipe(volume="50 mL", base="ms1962", strength=0.5)}
    for name, bg in cases.items():
        by_weight = median_ms(lambda bg=bg: design_series(bg, "mannitol", psi, catalog=cat))
        with_stock = median_ms(lambda bg=bg: design_series(bg, "mannitol", psi, catalog=cat, stock="1 mol/kg"))
        mixer = designer._Background(bg, cat.resolve("mannitol").component, cat)
        y = potential.osmolality_from_potential(psi, mixer.T)
        comp = mixer.osmoticum
        now = median_ms(lambda mixer=mixer, y=y, comp=comp: designer._level_amounts(mixer, y, psi, comp))
        before = median_ms(lambda mixer=mixer, y=y, comp=comp: designer._level_amounts_forward(mixer, y, psi,
                                                                                               comp))
        print(f"design 60 levels in {name:12s}: by weight {by_weight:7.1f} ms, with stock {with_stock:7.1f} ms "
              f"(goal <= 20 ms; ratio to goal {max(by_weight, with_stock) / 20.0:.2f})")
        print(f"  the 60 levels' amounts: forward search {before:6.1f} ms, batched residual {now:6.1f} ms; "
              f"ratio now/before {now / before:.2f}")


def main() -> None:
    cat = get_catalog()
    psi = potentials_between(-0.4e6, -1.8e6, 8)
    cases = {"water": Recipe(volume="50 mL"), "ms1962 x0.5": Recipe(volume="50 mL", base="ms1962", strength=0.5)}
    for name, bg in cases.items():
        by_weight = median_ms(lambda bg=bg: design_series(bg, "mannitol", psi, catalog=cat))
        with_stock = median_ms(lambda bg=bg: design_series(bg, "mannitol", psi, catalog=cat, stock="1 mol/kg"))
        one_eval = median_ms(lambda bg=bg: evaluate(bg.with_amount("mannitol", "50 g/L"), cat))
        print(f"design 8 levels in {name:12s}: by weight {by_weight:7.1f} ms, with stock {with_stock:7.1f} ms; "
              f"one evaluate() {one_eval:5.1f} ms (design = {by_weight / one_eval:.1f} evaluations)")
    # PEG in an electrolyte buffer: the first upper bound lies past Pitzer's range and is drawn back
    buffer = Recipe(volume="100 mL", temperature="20 degC").with_amount("KCl", "10 mM")
    peg = median_ms(lambda: design_series(buffer, "peg8000", psi, catalog=cat))
    print(f"design 8 levels of PEG 8000 in 10 mM KCl: by weight {peg:7.1f} ms")
    sixty_levels(cat)
    rng = np.random.default_rng(1)
    x = np.repeat(np.linspace(-0.4, -1.6, 8), 3)
    n = np.full(x.size, 50.0)
    for link in ("logit", "probit"):
        y = rng.binomial(50, inverse_link(-7 * (x + 1.0), link)).astype(float)
        ms = median_ms(lambda link=link, y=y: fit_counts(Counts(x, y, n, "bench"), link), repeat=51)
        print(f"fit {link:6s} 24 rows: {ms:6.2f} ms")


if __name__ == "__main__":
    main()
