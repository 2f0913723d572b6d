"""Terminal app speed: cold start to the first painted screen, edit -> refreshed panel, first actions.

    python benchmarks/bench_tui.py [--starts 7] [--edits 50] [--firsts 5] [--idle 0 3] [--no-bytecode]

Cold start: a fresh interpreter runs ``mediaplan open PLAN`` headless with MEDIAPLAN_TUI_EXIT_AFTER_PAINT=1
(the app exits right after its first refresh: the recipe shown, its figures possibly still "computing")
and with MEDIAPLAN_TUI_EXIT_AFTER_PAINT=figures (it exits once the screen with the plan's figures is
painted); the wall time and the CPU time (user + system) of the subprocess are measured. In the same run,
paired round by round, a bare Textual app (one Static, exits after its first refresh) gives the floor of
any Textual app on this machine; the ratios app / bare are printed as the median of the rounds' ratios.
The children keep their compiled bytecode in a temporary folder (PYTHONPYCACHEPREFIX; one untimed run
first), as an installed package has; ``--no-bytecode`` compiles every module at each start instead (as
with PYTHONDONTWRITEBYTECODE=1). Target: first paint <= 0.8 s where the bare app takes ~0.46 s, i.e. a
ratio <= 1.74.

Edit latency: a headless pilot applies amounts to a component through the
same path as the amount dialog (Session edit, evaluate, re-render table, panel, notes, chart, and
the detail line of the selected row, which is the edited one); the time runs until the app's next
refresh after the edit has been processed (call_after_refresh). Target: edit median < 16 ms.

First actions: each run is a fresh interpreter (nothing imported, no model compiled) that opens the plan
headless, waits ``idle`` seconds after the first paint (a user reading the screen), then either solves a
target in the target dialog (t -> the dialog painted; Solve -> the Solved message) or, in the plasmolysis
screen (p -> the screen painted), designs a series (-> Designed) and fits it (-> Fitted); each of the two
right after the first paint in its own interpreter. The warm start (mediaplan.tui.warm) runs during the
idle time; with ``--idle 0`` the first action competes with it. While the actions run, a 2 ms ticker
records the longest time the event loop did not answer ("loop blocked": keys and paints wait that long).
Target: no screen takes over 0.2 s to show and the loop is never blocked over 0.2 s; a solve, design or
fit started before the warm start is done shows "solving..." at once and its answer when ready. To measure
an older version, give ``--source`` that version's source tree (the editable install is then set aside in
every child); ``--against`` an older tree measures both versions' first actions round by round in one run
and prints their ratios. Prints medians.
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


#: a bare Textual app that exits right after its first refresh (the floor of any Textual app's start)
BARE_APP = """from textual.app import App
from textual.widgets import Static


class Bare(App):
    def compose(self):
        yield Static("bare")

    def on_mount(self):
        self.call_after_refresh(self.exit)


Bare().run()
"""


#: the source tree measured (--source; passed to the children in MEDIAPLAN_BENCH_SOURCE); None: the installed one
SOURCE = os.environ.get("MEDIAPLAN_BENCH_SOURCE") or None


def use_source(source: str | None) -> None:
    """Import mediaplan from ``source`` (a checkout of another version), not from the editable install."""
    if source:
        sys.meta_path[:] = [f for f in sys.meta_path if "editable" not in repr(f).lower()]
        sys.path.insert(0, source)


def _open_code(plan: Path) -> str:
    # the app is headless here: the command's check for a terminal is told yes, the rest is the real path
    prelude = (f"import sys; sys.meta_path[:] = [f for f in sys.meta_path if 'editable' not in repr(f).lower()]; "
               f"sys.path.insert(0, {SOURCE!r}); ") if SOURCE else ""
    return (prelude + "import sys; from mediaplan.cli.main import main; import mediaplan.cli.commands.open as o; "
            f"o.has_terminal = lambda: True; sys.exit(main(['open', {str(plan)!r}, '--no-recovery']))")


def _child(code: str, env: dict) -> tuple[float, float]:
    """Wall and CPU (user + system) seconds of one fresh interpreter running ``code`` [s]."""
    import resource

    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], env=env, check=True, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL, stdin=subprocess.DEVNULL)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def cold_starts(plan: Path, n: int, env: dict, *, figures: bool = True) -> dict[str, list[tuple[float, float]]]:
    """Rounds of: the bare app, the app to its first paint, the app to its figures; (wall, cpu) each [s]."""
    kinds = {"bare Textual app": (BARE_APP, {}),
             "first paint": (_open_code(plan), {"MEDIAPLAN_TUI_EXIT_AFTER_PAINT": "1"}),
             "figures shown": (_open_code(plan), {"MEDIAPLAN_TUI_EXIT_AFTER_PAINT": "figures"})}
    if not figures:
        del kinds["figures shown"]
    out: dict[str, list[tuple[float, float]]] = {k: [] for k in kinds}
    for code, extra in kinds.values():  # untimed: compiles the bytecode, fills the user's caches
        _child(code, {**env, **extra})
    for _ in range(n):
        for name, (code, extra) in kinds.items():
            out[name].append(_child(code, {**env, **extra}))
    return out


async def edit_latencies(plan: Path, n: int) -> tuple[list[float], list[float]]:
    from mediaplan.files.catalog import get_catalog
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session
    from mediaplan.tui.widgets.recipe_table import RecipeTable

    app = MediaplanApp(Session.open(plan, get_catalog()), offer_recovery=False)
    total, evaluate_only = [], []
    async with app.run_test(size=(100, 32)) as pilot:
        while app.warmed is None:  # edits as they are once the warm start is done
            await asyncio.sleep(0.05)
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


class _Ticker:
    """The longest time the event loop did not answer a 2 ms timer [s] (keys and paints waited as long)."""

    def __init__(self) -> None:
        self.longest = 0.0
        self._task = None

    async def _run(self) -> None:
        last = time.perf_counter()
        while True:
            await asyncio.sleep(0.002)
            now = time.perf_counter()
            self.longest = max(self.longest, now - last - 0.002)
            last = now

    def start(self) -> None:
        self._task = asyncio.get_running_loop().create_task(self._run())

    def stop(self) -> float:
        self._task.cancel()
        return self.longest


async def first_actions(plan: Path, idle: float, kind: str) -> dict[str, float]:
    """In this (fresh) interpreter: seconds of the first dialog and solve (``kind`` "target"), or of the
    series screen, its design and fit ("series") [s], and the longest the event loop was blocked meanwhile.

    The actions are started the way their keys start them, and nothing waits for the app to be idle in
    between (the pilot's idle wait would also wait for the warm start's thread).
    """
    from mediaplan.cli.common import catalog_from
    from mediaplan.files.paths import use_unit_cache
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session

    use_unit_cache()  # as the command line does before it opens the app
    seen: list = []
    app = MediaplanApp(Session.open(plan, catalog_from(argparse.Namespace(catalog=[]))), offer_recovery=False)
    out = {}
    ticker = _Ticker()
    async with app.run_test(size=(100, 32), message_hook=seen.append):
        await _painted(app)  # the first paint
        await asyncio.sleep(idle)
        ticker.start()
        main = app.get_screen("main")
        if kind == "target":
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
        else:
            from mediaplan.tui.screens.plasmolysis import SeriesScreen

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
            for i, (k, n) in enumerate([(1, 50), (4, 50), (12, 50), (27, 50), (40, 50), (47, 50), (50, 50),
                                        (50, 50)]):
                screen.series = screen.series.with_counts(i, [(k, n)])  # invented counts
            t0 = time.perf_counter()
            screen.action_fit()
            fitted = await _wait_for(seen, SeriesScreen.Fitted)
            out["first fit"] = time.perf_counter() - t0
            assert fitted.error is None, fitted.error
        await _painted(app)
        out[f"loop blocked ({kind})"] = ticker.stop()
        await app.workers.wait_for_complete()
    return out


def first_action_runs(plan: Path, n: int, idle: float, env: dict,
                      against: str | None = None) -> dict[str, list[float]] | dict[str, dict[str, list[float]]]:
    """Seconds of the first actions in ``n`` rounds of fresh interpreters [s]. With ``against`` (another
    version's source tree) each round runs that version and then this one, kind by kind, and the result is
    {"against": runs, "this": runs} (paired round by round: the load of the machine is alike for both)."""
    trees = {"this": SOURCE} if against is None else {"against": against, "this": SOURCE}
    runs: dict[str, dict[str, list[float]]] = {name: {} for name in trees}
    for _ in range(n):
        for kind in ("target", "series"):
            for name, source in trees.items():
                child_env = dict(env)
                child_env.pop("MEDIAPLAN_BENCH_SOURCE", None)
                if source:
                    child_env["MEDIAPLAN_BENCH_SOURCE"] = source
                done = subprocess.run([sys.executable, __file__, "--child-first", str(plan), str(idle), kind],
                                      env=child_env, check=True, capture_output=True, text=True,
                                      stdin=subprocess.DEVNULL)
                for k, v in json.loads(done.stdout.strip().splitlines()[-1]).items():
                    runs[name].setdefault(k, []).append(v)
    return runs["this"] if against is None else runs


def _median_ratio(a: list[float], b: list[float]) -> float:
    return statistics.median(x / y for x, y in zip(a, b, strict=True))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--starts", type=int, default=7, help="rounds of cold starts (bare app, paint, figures)")
    ap.add_argument("--edits", type=int, default=50)
    ap.add_argument("--firsts", type=int, default=5, help="fresh interpreters for each kind of first action")
    ap.add_argument("--idle", type=float, nargs="+", default=[0.0, 3.0],
                    help="seconds between the first paint and the first action")
    ap.add_argument("--no-bytecode", action="store_true",
                    help="children compile every module at each start (no bytecode kept)")
    ap.add_argument("--paint-only", action="store_true",
                    help="no 'figures shown' starts (versions whose first paint has the figures)")
    ap.add_argument("--source", help="measure the mediaplan of this source tree (another version's checkout)")
    ap.add_argument("--against", help="first actions only: also measure this source tree (another version's "
                                      "checkout), round by round with this one, and print both with their ratios")
    ap.add_argument("--child-first", nargs=3, metavar=("PLAN", "IDLE", "KIND"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    global SOURCE
    if args.source:
        SOURCE = os.environ["MEDIAPLAN_BENCH_SOURCE"] = str(Path(args.source).resolve())
    use_source(SOURCE)
    if args.child_first:
        plan, idle, kind = args.child_first
        print(json.dumps(asyncio.run(first_actions(Path(plan), float(idle), kind))))
        return
    with tempfile.TemporaryDirectory() as tmp:
        env = {**os.environ, "MEDIAPLAN_STATE_DIR": str(Path(tmp) / "state"),
               "MEDIAPLAN_CONFIG_DIR": str(Path(tmp) / "config"), "XDG_CACHE_HOME": str(Path(tmp) / "cache")}
        env.pop("PYTHONDONTWRITEBYTECODE", None)
        if args.no_bytecode:
            env["PYTHONDONTWRITEBYTECODE"] = "1"
        else:
            env["PYTHONPYCACHEPREFIX"] = str(Path(tmp) / "pycache")
        os.environ.update({k: env[k] for k in ("MEDIAPLAN_STATE_DIR", "MEDIAPLAN_CONFIG_DIR", "XDG_CACHE_HOME")})
        plan = Path(tmp) / "bench.toml"
        plan.write_text(PLAN)
        starts = cold_starts(plan, args.starts, env, figures=not args.paint_only) if args.starts else {}
        total, ev_only = asyncio.run(edit_latencies(plan, args.edits)) if args.edits else ([], [])
        against = str(Path(args.against).resolve()) if args.against else None
        firsts = ({idle: first_action_runs(plan, args.firsts, idle, env, against) for idle in args.idle}
                  if args.firsts else {})
    if starts:
        bare = starts["bare Textual app"]
        print(f"cold starts ({args.starts} rounds; {'no bytecode kept' if args.no_bytecode else 'bytecode kept'}):")
        for name, runs in starts.items():
            wall, cpu = [w for w, _ in runs], [c for _, c in runs]
            ratio = "" if runs is bare else (f"  x bare: wall {_median_ratio(wall, [w for w, _ in bare]):.2f}, "
                                             f"cpu {_median_ratio(cpu, [c for _, c in bare]):.2f}")
            print(f"  {name:<17} wall median {statistics.median(wall):.3f} s (min {min(wall):.3f}, max {max(wall):.3f})"
                  f"  cpu median {statistics.median(cpu):.3f} s{ratio}")
        print("  target: first paint <= 0.8 s where the bare app takes 0.46 s (ratio <= 1.74)")
    if total:
        med, ev_med = statistics.median(total), statistics.median(ev_only)
        print(f"edit -> refreshed panel:   median {1000 * med:.1f} ms (n={len(total)}; target < 16 ms)")
        print(f"  of which evaluate():     median {1000 * ev_med:.1f} ms  (ratio {ev_med / med:.2f} of the edit)")
    for idle, runs in firsts.items():
        print(f"first actions, {idle:g} s after the first paint (n={args.firsts} fresh interpreters each; "
              "target: screens and loop < 0.2 s):")
        if against is None:
            for name, times in runs.items():
                print(f"  {name:<24} median {statistics.median(times):.3f} s (min {min(times):.3f}, "
                      f"max {max(times):.3f})")
            continue
        print(f"  {'':<24} {'against':>15} {'this':>15}   this/against (median of the rounds' ratios)")
        for name, times in runs["this"].items():
            old = runs["against"].get(name)
            if old is None:
                print(f"  {name:<24} {'-':>15} {statistics.median(times):>13.3f} s")
                continue
            print(f"  {name:<24} {statistics.median(old):>13.3f} s {statistics.median(times):>13.3f} s   "
                  f"{_median_ratio(times, old):.2f}")


if __name__ == "__main__":
    main()
