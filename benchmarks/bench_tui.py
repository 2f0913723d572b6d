"""Terminal app speed: cold start to the first painted screen, and edit -> refreshed panel.

    python benchmarks/bench_tui.py [--starts 5] [--edits 50]

Cold start: a fresh interpreter runs ``mediaplan open PLAN`` headless with
MEDIAPLAN_TUI_EXIT_AFTER_PAINT=1 (the app exits right after its first refresh); the wall time of the
subprocess is measured. Edit latency: a headless pilot applies amounts to a component through the
same path as the amount dialog (Session edit, evaluate, re-render table, panel, notes, chart, and
the detail line of the selected row, which is the edited one); the time runs until the app's next
refresh after the edit has been processed (call_after_refresh). Targets: start < 1.5 s, edit
median < 16 ms. Prints medians.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

PLAN = """[mediaplan]
format = "mediaplan-plan"
version = "1.0"

[plan]
title = "Benchmark medium (invented)"

[medium]
volume = "1 L"
temperature = "25 degC"
base = "ms1962"
strength = 1.0

[medium.components]
sucrose = "30 g/L"
agar = "7 g/L"
"""


def cold_starts(plan: Path, n: int, env: dict) -> list[float]:
    code = ("import sys; from mediaplan.cli.main import main; "
            f"sys.exit(main(['open', {str(plan)!r}, '--no-recovery']))")
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", code], env={**env, "MEDIAPLAN_TUI_EXIT_AFTER_PAINT": "1"},
                       check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, stdin=subprocess.DEVNULL)
        times.append(time.perf_counter() - t0)
    return times


async def edit_latencies(plan: Path, n: int) -> tuple[list[float], list[float]]:
    from mediaplan.files.catalog import get_catalog
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session
    from mediaplan.tui.widgets.recipe_table import RecipeTable

    app = MediaplanApp(Session.open(plan, get_catalog()), offer_recovery=False)
    total, evaluate_only = [], []
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        main = app.get_screen("main")
        # the cursor sits on the edited row, as after Enter on it: its detail line changes too
        main.query_one(RecipeTable).select_id("sucrose")
        await pilot.pause()
        loop = asyncio.get_running_loop()
        for i in range(n):
            text = f"{20 + i * 0.5:g} g/L"
            painted = loop.create_future()
            t0 = time.perf_counter()
            main._apply(app.session.set_amount, "sucrose", text)
            # resolves once the screen has been refreshed (re-laid out and rendered) after the edit
            app.call_after_refresh(lambda fut=painted: fut.done() or fut.set_result(time.perf_counter()))
            total.append(await painted - t0)
            await pilot.pause()
            t1 = time.perf_counter()
            app.session.evaluate()
            evaluate_only.append(time.perf_counter() - t1)
    return total, evaluate_only


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--starts", type=int, default=5)
    ap.add_argument("--edits", type=int, default=50)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        env = {**os.environ, "MEDIAPLAN_STATE_DIR": str(Path(tmp) / "state"),
               "MEDIAPLAN_CONFIG_DIR": str(Path(tmp) / "config")}
        os.environ.update({k: env[k] for k in ("MEDIAPLAN_STATE_DIR", "MEDIAPLAN_CONFIG_DIR")})
        plan = Path(tmp) / "bench.toml"
        plan.write_text(PLAN)
        starts = cold_starts(plan, args.starts, env)
        total, ev_only = asyncio.run(edit_latencies(plan, args.edits))
    print(f"cold start to first paint: median {statistics.median(starts):.3f} s "
          f"(min {min(starts):.3f}, max {max(starts):.3f}, n={len(starts)}; target < 1.5 s)")
    med, ev_med = statistics.median(total), statistics.median(ev_only)
    print(f"edit -> refreshed panel:   median {1000 * med:.1f} ms (n={len(total)}; target < 16 ms)")
    print(f"  of which evaluate():     median {1000 * ev_med:.1f} ms  (ratio {ev_med / med:.2f} of the edit)")


if __name__ == "__main__":
    main()
