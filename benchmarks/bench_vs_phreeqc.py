"""One full evaluation against PHREEQC (phreeqpython, pitzer.dat), both timed in the same run.

Run: ``python benchmarks/bench_vs_phreeqc.py``. Prints medians of in-process CPU timings [ms] and the ratios
the engine's goals name:

- the Na-K-Ca-Mg-Cl-SO4 salt solution below, mediaplan's full ``evaluate()`` (osmolality, shares,
  freezing point at 0 °C, density, every warning) against PHREEQC's speciation of the same solution with
  its osmotic coefficient and water activity punched: goal <= 0.5x;
- MS 1962 + 30 g/L sucrose (both temperatures, all warnings) against that same PHREEQC time: goal <= 1.0x.

PHREEQC is a test oracle only (a test extra); the product never imports it. Both sides are timed warm
(PHREEQC's database loaded, mediaplan's compiled model cached), as a user of either would call them many
times in one session. Each call takes the next of VARIANTS compositions (every amount scaled by a factor
between 0.8 and 1.2), on both sides alike, so no cache of the last composition answers a call.
"""

from __future__ import annotations

import statistics
import time

import timing

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

#: the salt solution [mmol/kg water]: a dilute medium-like mixture of the six ions both engines
#: parametrise (an invented composition, near the macro salts of a plant medium)
SALTS = {"potassium_chloride": 20.0, "calcium_chloride_anhydrous": 3.0, "magnesium_sulfate_anhydrous": 1.5,
         "sodium_chloride": 1.0}
#: the same solution by element for PHREEQC [mmol/kgw]
SALTS_PHREEQC = {"K": 20.0, "Ca": 3.0, "Mg": 1.5, "Na": 1.0, "Cl": 27.0, "S(6)": 1.5}
#: compositions taken in turn: every amount times one of these factors
VARIANTS = tuple(0.8 + 0.4 * k / 7 for k in range(8))


def cycling(items):
    """A callable that returns the next item on each call, round and round."""
    state = {"i": 0}

    def nxt():
        state["i"] = (state["i"] + 1) % len(items)
        return items[state["i"]]

    return nxt


def median_time(fn, repeat: int = 9, number: int = 100) -> float:
    """Median CPU time of one call of ``fn`` [s] (see benchmarks/timing.py)."""
    return timing.median_time(fn, repeat, number, clock=time.process_time)


def phreeqc_runner():
    """A callable that runs PHREEQC once on the salt solution; None without phreeqpython."""
    try:
        import phreeqpython
    except ImportError:
        return None
    pp = phreeqpython.PhreeqPython(database="pitzer.dat")
    texts = []
    for f in VARIANTS:
        text = "SOLUTION 1\n units mmol/kgw\n temp 25\n"
        text += "".join(f" {el} {v * f:.6g}\n" for el, v in SALTS_PHREEQC.items())
        text += ("SELECTED_OUTPUT 1\n -reset false\nUSER_PUNCH 1\n -headings osm aw\n"
                 " 10 PUNCH OSMOTIC, ACT(\"H2O\")\nEND\n")
        texts.append(text)
    nxt = cycling(texts)

    def run(text=None):
        pp.ip.run_string(text or nxt())
        return pp.ip.get_selected_output_array()[1]

    run.first = texts[0]

    return run


def main() -> None:
    cat = get_catalog()
    salt_variants, ms_variants = [], []
    for f in VARIANTS:
        salts = Recipe()
        for cid, mmol in SALTS.items():
            salts = salts.with_amount(cid, f"{mmol * f:.6g} mmol/kg")
        salt_variants.append(salts)
        ms_variants.append(Recipe(base="ms1962").with_amount("sucrose", f"{30 * f:.6g} g/L"))
    for r in salt_variants + ms_variants:
        evaluate(r, cat)  # warm the compiled-model cache
    ev_salts, ev_ms = evaluate(salt_variants[0], cat), evaluate(ms_variants[0], cat)
    next_salts, next_ms = cycling(salt_variants), cycling(ms_variants)
    run = phreeqc_runner()
    results = {}
    # interleave the three so that a drift in the machine's speed touches all of them alike
    rounds: dict[str, list[float]] = {"salts": [], "ms": [], "phreeqc": []}
    for _ in range(5):
        rounds["salts"].append(median_time(lambda: evaluate(next_salts(), cat), repeat=3))
        rounds["ms"].append(median_time(lambda: evaluate(next_ms(), cat), repeat=3))
        if run is not None:
            run()
            rounds["phreeqc"].append(median_time(run, repeat=3))
    results = {k: statistics.median(v) if v else float("nan") for k, v in rounds.items()}
    print(f"{len(VARIANTS)} compositions taken in turn on both sides (amounts x 0.8-1.2); figures of the first:")
    print(f"salt solution (K-Ca-Mg-Na-Cl-SO4, I = {ev_salts.ionic_strength_mol_per_kg * 1000:.1f} mmol/kg): "
          f"{ev_salts.osmolality_mosmol_per_kg:.2f} mOsm/kg")
    print(f"  mediaplan evaluate():             median {results['salts'] * 1e3:7.3f} ms")
    if run is None:
        print("phreeqpython not installed: no ratios (it is in the test extras)")
        return
    osm, aw = run(run.first)
    print(f"  PHREEQC (pitzer.dat):             median {results['phreeqc'] * 1e3:7.3f} ms  "
          f"(phi {osm:.5f}, a_w {aw:.7f})")
    print(f"  ratio mediaplan / PHREEQC:        {results['salts'] / results['phreeqc']:.2f}  (goal <= 0.5)")
    print(f"MS 1962 + {30 * VARIANTS[0]:.3g}-{30 * VARIANTS[-1]:.3g} g/L sucrose ({len(ev_ms.components)} components, 25 and 0 °C, "
          f"{len(ev_ms.warnings)} warnings): {ev_ms.osmolality_mosmol_per_kg:.2f} mOsm/kg")
    print(f"  mediaplan evaluate():             median {results['ms'] * 1e3:7.3f} ms")
    print(f"  ratio to PHREEQC's salt solution: {results['ms'] / results['phreeqc']:.2f}  (goal <= 1.0)")


if __name__ == "__main__":
    main()
