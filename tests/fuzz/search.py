"""Random search for answers a user must never get: a crash, a numpy warning on the terminal, a figure that
differs from the one evaluate() gives, solutes read as pure water, a solve that misses its target.

    python3 tests/fuzz/search.py evaluate --seconds 300      # random recipes through evaluate()
    python3 tests/fuzz/search.py solve --seed 3              # solve_target and design_series
    python3 tests/fuzz/search.py sweep                       # every sweep row against evaluate() of that row
    python3 tests/fuzz/search.py budget                      # the uncertainty budget and preparation sheets

Each prints one line per new kind of finding (the kind, the message, the recipe) and a summary; exit status
1 when anything was found. numpy's RuntimeWarnings count as findings. When a search finds something: fix
the class, then add the recipe to the table of the test that holds that class (``FOUND`` in
tests/medium/test_evaluate_fuzz.py, ``SWEEPS_AS_EVALUATE`` in tests/medium/test_grid.py, ...), so the suite
keeps it. A search of a few minutes a kind found every case those tables hold.

This file is not collected by pytest (its name does not start with test_): it is a development tool, like
tests/mutation/mutate.py. The recipes are random test inputs, not published values.
"""

from __future__ import annotations

import argparse
import itertools
import math
import random
import sys
import time
import warnings

import mediaplan.api as mp
from mediaplan.files.catalog import get_catalog
from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.evaluate import evaluate

UNITS = ("g/L", "mg/L", "mmol/kg", "mol/kg", "mM", "g/kg", "% w/v")
OSMOTICA = ("sucrose", "mannitol", "sorbitol", "peg6000", "peg8000", "glycerol", "glucose", "NaCl", "KCl")
#: the recipe of the run under way (named when a run ends in an exception)
_current: list = [None]


def random_recipe(rng: random.Random, cat, lines: int = 4) -> mp.Recipe:
    """A recipe of any base (or none) at a strength of 0-20 in any scope, at -5..80 °C, with up to ``lines``
    user lines of any component at 1e-3..2000 in any unit (MediaplanError when it cannot be written)."""
    base = rng.choice([*sorted(cat.media), None])
    r = mp.Recipe(base=base, strength=rng.choice([0.0, 0.01, 0.5, 1.0, 2.0, 5.0, 20.0, rng.uniform(0, 20)]) if base
                  else 1.0, strength_scope=rng.choice(["salts", "all", "macro"]),
                  temperature=f"{rng.choice([0, 4, 15, 25, 37, 45, -2, rng.uniform(-5, 80)]):.3g} degC")
    for _ in range(rng.randint(0, lines)):
        r = r.with_amount(rng.choice(sorted(cat.components)), f"{10 ** rng.uniform(-3, 3.3):.4g} {rng.choice(UNITS)}")
    _current[0] = r
    return r


def search_evaluate(rng, cat, report) -> None:
    r = random_recipe(rng, cat)
    ev = evaluate(r, cat)
    d = ev.to_dict()
    for key in ("osmolality_mosmol_per_kg", "water_activity", "osmotic_potential_mpa"):
        if not (isinstance(d[key], float) and math.isfinite(d[key])):
            report("not finite", key, r)
    if any(c.osmolality_ideal_mosmol_per_kg > 0 for c in ev.components) and not (
            d["osmolality_mosmol_per_kg"] > 0 and d["water_activity"] < 1):
        report("solutes read as pure water", d["osmolality_mosmol_per_kg"], r)


def search_solve(rng, cat, report) -> None:
    r = random_recipe(rng, cat, lines=1)
    if rng.random() < 0.6:
        target_mpa = -rng.uniform(0.05, 4)
        o = rng.sample(OSMOTICA, rng.choice([1, 1, 2]))
        sol = mp.solve_target(r, f"{target_mpa:.4g} MPa", o if len(o) > 1 else o[0], catalog=cat)
        if sol.status == "added":
            ev = evaluate(sol.recipe, cat)
            # the amounts are written to 4 significant digits: the figure of the written recipe is within that
            if abs(ev.osmotic_potential_mpa - sol.target_potential_mpa) > 2e-4 * max(0.1, abs(sol.target_potential_mpa)):
                report("solve misses its target", (ev.osmotic_potential_mpa, sol.target_potential_mpa), r)
    else:
        a, b = sorted([float(f"{rng.uniform(0.05, 3):.3g}"), float(f"{rng.uniform(0.05, 3):.3g}")])
        if b - a < 0.02:
            return
        steps = rng.choice([2, 3, 8])
        d = mp.design_series(rng.choice(OSMOTICA), first=f"{-a:g} MPa", last=f"{-b:g} MPa", steps=steps,
                             background=r if rng.random() < 0.7 else None,
                             stock=rng.choice([None, "1 mol/kg", "500 g/L"]), catalog=cat).to_dict()
        got = [lv["water_potential_mpa"] for lv in d["levels"]]
        want = [-a + (a - b) * i / (steps - 1) for i in range(steps)]
        if max(abs(x - y) for x, y in zip(got, want, strict=True)) > 2e-4 * max(b, 0.1):
            report("series levels off their potentials", (got, want), r)


def search_sweep(rng, cat, report) -> None:
    r = random_recipe(rng, cat, lines=0)
    amounts = {c: [f"{10 ** rng.uniform(-3, 2.7):.4g} {u}" for _ in range(rng.randint(1, 4))]
               for c, u in ((c, rng.choice(["g/L", "mol/kg", "mM"])) for c in rng.sample(sorted(cat.components), rng.randint(1, 2)))}
    got = mp.sweep(r, amounts, catalog=cat)["osmolality_mosmol_per_kg"]
    for i, combo in enumerate(itertools.product(*amounts.values())):
        row = r
        for c, a in zip(amounts, combo, strict=True):
            row = row.with_amount(c, a)
        try:
            want = evaluate(row, cat).osmolality_mosmol_per_kg
        except MediaplanError:
            if math.isfinite(got[i]):
                report("sweep answers a row evaluate refuses", got[i], row)
            continue
        if not abs(got[i] - want) <= 1e-10 * abs(want):
            report("sweep row differs from evaluate", (float(got[i]), want), row)


def search_budget(rng, cat, report) -> None:
    r = random_recipe(rng, cat, lines=3)
    for what in ("budget", "prep", "prep with stocks"):
        try:
            if what == "budget":
                mp.budget(r, catalog=cat)
            else:
                mp.prep_sheet(r, stocks=what != "prep", catalog=cat)
        except MediaplanError:
            pass


SEARCHES = {"evaluate": search_evaluate, "solve": search_solve, "sweep": search_sweep, "budget": search_budget}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("kind", choices=list(SEARCHES))
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--seconds", type=float, default=120.0)
    args = ap.parse_args(argv)
    cat = get_catalog()
    rng = random.Random(args.seed)
    seen: set = set()

    def report(kind, detail, recipe) -> None:
        key = (kind, str(detail)[:60] if kind in ("crash", "warning") else "")
        if key not in seen:
            seen.add(key)
            print(f"{kind}: {detail} -- {recipe}", flush=True)

    runs = 0
    end = time.monotonic() + args.seconds
    warnings.simplefilter("error", RuntimeWarning)
    while time.monotonic() < end:
        runs += 1
        _current[0] = None
        try:
            SEARCHES[args.kind](rng, cat, report)
        except MediaplanError:
            pass
        except RuntimeWarning as w:
            report("warning", w, _current[0])
        except Exception as e:  # noqa: BLE001 - every other exception is a finding
            report("crash", f"{type(e).__name__}: {e}", _current[0])
    print(f"{runs} runs, {len(seen)} kinds of finding")
    return 1 if seen else 0


if __name__ == "__main__":
    sys.exit(main())
