"""Terminal app speed: cold start to the first painted screen, edit -> refreshed panel, first actions.

    python benchmarks/bench_tui.py [--starts 5] [--edits 50] [--firsts 5] [--idle 0 3]

Cold start: a fresh interpreter runs ``mediaplan open PLAN`` headless with
MEDIAPLAN_TUI_EXIT_AFTER_PAINT=1 (the app exits right after its first refresh); the wall time of the
subprocess is measured. Edit latency: a headless pilot applies amounts to a component through the
same path as the amount dialog (Session edit, evaluate, re-render table, panel, notes, chart, and
the detail line of the selected row, which is the edited one); the time runs until the app's next
refresh after the edit has been processed (call_after_refresh). Targets: start < 1.5 s, edit
median < 16 ms.

First actions: each run is a fresh interpreter (nothing imported, no model compiled) that opens the plan
headless, waits ``idle`` seconds after the first paint (a user reading the screen), then solves a target
in the target dialog (t -> the dialog painted; Solve -> the Solved message), and in the plasmolysis
screen (p -> the screen painted) designs a series (-> Designed) and fits it (-> Fitted). The warm start (mediaplan.tui.warm) runs during the idle
time; with ``--idle 0`` the first action competes with it. Target: no first action over 0.2 s. To
measure an older version, run this script with PYTHONPATH pointing at that version's source tree.
Prints medians.
"""

from __future__ import annotations

import argparse
import asyncio
import json
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
    # the app is headless here: the command's check for a terminal is told yes, the rest is the real path
    code = ("import sys; from mediaplan.cli.main import main; import mediaplan.cli.commands.open as o; "
            f"o.has_terminal = lambda: True; sys.exit(main(['open', {str(plan)!r}, '--no-recovery']))")
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


async def _wait_for(seen: list, kind: type, timeout: float = 120.0):
    """The first message of ``kind`` posted (polled every 2 ms)."""
    t0 = time.perf_counter()
    while time.perf_counter() - t0 < timeout:
        for m in seen:
            if isinstance(m, kind):
                return m
        await asyncio.sleep(0.002)
    raise TimeoutError(kind.__name__)


async def _painted(app) -> None:
    """Resolves after the app's next refresh (the screen re-laid out and rendered)."""
    fut = asyncio.get_running_loop().create_future()
    app.call_after_refresh(lambda: fut.done() or fut.set_result(None))
    await fut


async def _shown(app, kind: type) -> None:
    """Resolves once a screen of ``kind`` is on top, mounted and painted."""
    while not (isinstance(app.screen, kind) and app.screen.is_mounted):
        await asyncio.sleep(0.002)
    await _painted(app)


async def first_actions(plan: Path, idle: float) -> dict[str, float]:
    """In this (fresh) interpreter: seconds of the first dialog, solve, series design and fit [s].

    The actions are started the way their keys start them, and nothing waits for the app to be idle in
    between (the pilot's idle wait would also wait for the warm start's thread).
    """
    from mediaplan.files.catalog import get_catalog
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session

    seen: list = []
    app = MediaplanApp(Session.open(plan, get_catalog()), offer_recovery=False)
    out = {}
    async with app.run_test(size=(100, 32), message_hook=seen.append):
        await _painted(app)  # the first paint
        await asyncio.sleep(idle)
        main = app.get_screen("main")
        t0 = time.perf_counter()
        main.action_set_target()  # what t does
        from mediaplan.tui.screens.target import TargetScreen

        await _shown(app, TargetScreen)
        out["open target dialog"] = time.perf_counter() - t0
        app.screen.query_one("#target-value").value = "-0.9 MPa"
        t0 = time.perf_counter()
        app.screen._solve()  # what Enter or the Solve button does
        solved = await _wait_for(seen, TargetScreen.Solved)
        out["first solve"] = time.perf_counter() - t0
        assert solved.error is None, solved.error
        app.screen.dismiss(None)
        from mediaplan.tui.screens.main import MainScreen
        from mediaplan.tui.screens.plasmolysis import SeriesScreen

        await _shown(app, MainScreen)
        t0 = time.perf_counter()
        main.action_plasmolysis()  # what p does
        await _shown(app, SeriesScreen)
        out["open series screen"] = time.perf_counter() - t0
        screen = app.screen
        t0 = time.perf_counter()
        screen.action_design()
        designed = await _wait_for(seen, SeriesScreen.Designed)
        out["first series design"] = time.perf_counter() - t0
        assert designed.error is None, designed.error
        await _painted(app)
        for i, (k, n) in enumerate([(1, 50), (4, 50), (12, 50), (27, 50), (40, 50), (47, 50), (50, 50), (50, 50)]):
            screen.series = screen.series.with_counts(i, [(k, n)])  # invented counts
        t0 = time.perf_counter()
        screen.action_fit()
        fitted = await _wait_for(seen, SeriesScreen.Fitted)
        out["first fit"] = time.perf_counter() - t0
        assert fitted.error is None, fitted.error
        await app.workers.wait_for_complete()
    return out


def first_action_runs(plan: Path, n: int, idle: float, env: dict) -> dict[str, list[float]]:
    runs: dict[str, list[float]] = {}
    for _ in range(n):
        done = subprocess.run([sys.executable, __file__, "--child-first", str(plan), str(idle)], env=env,
                              check=True, capture_output=True, text=True, stdin=subprocess.DEVNULL)
        for k, v in json.loads(done.stdout.strip().splitlines()[-1]).items():
            runs.setdefault(k, []).append(v)
    return runs


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--starts", type=int, default=5)
    ap.add_argument("--edits", type=int, default=50)
    ap.add_argument("--firsts", type=int, default=5, help="fresh interpreters for the first actions")
    ap.add_argument("--idle", type=float, nargs="+", default=[0.0, 3.0],
                    help="seconds between the first paint and the first action")
    ap.add_argument("--child-first", nargs=2, metavar=("PLAN", "IDLE"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child_first:
        plan, idle = args.child_first
        print(json.dumps(asyncio.run(first_actions(Path(plan), float(idle)))))
        return
    with tempfile.TemporaryDirectory() as tmp:
        env = {**os.environ, "MEDIAPLAN_STATE_DIR": str(Path(tmp) / "state"),
               "MEDIAPLAN_CONFIG_DIR": str(Path(tmp) / "config")}
        os.environ.update({k: env[k] for k in ("MEDIAPLAN_STATE_DIR", "MEDIAPLAN_CONFIG_DIR")})
        plan = Path(tmp) / "bench.toml"
        plan.write_text(PLAN)
        starts = cold_starts(plan, args.starts, env)
        total, ev_only = asyncio.run(edit_latencies(plan, args.edits))
        firsts = {idle: first_action_runs(plan, args.firsts, idle, env) for idle in args.idle}
    print(f"cold start to first paint: median {statistics.median(starts):.3f} s "
          f"(min {min(starts):.3f}, max {max(starts):.3f}, n={len(starts)}; target < 1.5 s)")
    med, ev_med = statistics.median(total), statistics.median(ev_only)
    print(f"edit -> refreshed panel:   median {1000 * med:.1f} ms (n={len(total)}; target < 16 ms)")
    print(f"  of which evaluate():     median {1000 * ev_med:.1f} ms  (ratio {ev_med / med:.2f} of the edit)")
    for idle, runs in firsts.items():
        print(f"first actions, {idle:g} s after the first paint (n={args.firsts} fresh interpreters; target < 0.2 s):")
        for name, times in runs.items():
            print(f"  {name:<21} median {statistics.median(times):.3f} s (min {min(times):.3f}, max {max(times):.3f})")


if __name__ == "__main__":
    main()
