"""Warm start: import and compile what the figures, the first solve, series, fit and preparation sheet need.

The app paints its first screen without the engine (numpy, the models: a few tenths of a second to
import) and runs :func:`warm_up` in a worker thread right after that paint. Its first step imports the
engine and evaluates the plan once (:data:`ENGINE_READY` is then set and the app fills in the figures);
the later steps ready the user's first target, series design, fit or sheet, so none of them waits for
imports or for a medium model to be compiled. Plain Python; nothing here touches a widget.

The screen's thread never imports an engine module while this runs (it could wait on the import lock
held by the worker): it asks :func:`engine_ready` and shows a "computing" state until then.
"""

from __future__ import annotations

import builtins
import os
import sys
import threading
import time
from collections.abc import Callable

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.recipe import Recipe

#: the osmoticum the target dialog and the series screen offer first
FIRST_OSMOTICUM = "mannitol"


#: the modules the main screen's figures need (the engine and the uncertainty budget)
ENGINE_MODULES = ("mediaplan.medium.evaluate", "mediaplan.tasks.cells", "mediaplan.tasks.uncertainty")
#: set once the engine modules are imported and a medium has been evaluated
ENGINE_READY = threading.Event()


def module_ready(name: str) -> bool:
    """Is the module ``name`` imported completely (not half-way through an import in another thread)?"""
    m = sys.modules.get(name)
    spec = getattr(m, "__spec__", None)
    return m is not None and not getattr(spec, "_initializing", False)


def engine_ready() -> bool:
    """Can the screen's thread evaluate a medium now without importing the engine?"""
    if not ENGINE_READY.is_set() and all(module_ready(n) for n in ENGINE_MODULES):
        ENGINE_READY.set()
    return ENGINE_READY.is_set()


def _engine(recipe: Recipe, catalog: Catalog) -> None:
    from mediaplan.medium.evaluate import evaluate
    from mediaplan.tasks.cells import cell_reference  # noqa: F401 - the session's figures use both
    from mediaplan.tasks.uncertainty import budget

    try:
        ev = evaluate(recipe, catalog)
        budget(recipe, catalog, evaluation=ev)
    finally:  # a medium that cannot be evaluated still leaves the engine imported
        ENGINE_READY.set()


def _solve(recipe: Recipe, catalog: Catalog) -> None:
    from mediaplan.medium.evaluate import evaluate
    from mediaplan.tasks.solve import solve_target

    start = evaluate(recipe, catalog).osmotic_potential_mpa
    solve_target(recipe, catalog, f"{start - 0.2:.3f} MPa", [FIRST_OSMOTICUM])


def _series(recipe: Recipe, catalog: Catalog) -> None:
    from mediaplan.tasks.plasmolysis import design_series, fit_counts, potentials_between
    from mediaplan.tasks.plasmolysis.counts import counts_from_rows
    from mediaplan.views.plot import curve_points

    background = Recipe(volume="50 mL", temperature=recipe.temperature)
    design_series(background, FIRST_OSMOTICUM, potentials_between(-0.4e6, -1.8e6, 8), catalog=catalog,
                  stock="1 mol/kg", spacing="warm start")
    # invented counts on a rising curve (only to run the fit's code once)
    rows = [(-0.4, 1, 50), (-0.8, 10, 50), (-1.2, 30, 50), (-1.6, 48, 50)]
    curve_points(fit_counts(counts_from_rows(rows), "logit"))


def _sheet(recipe: Recipe, catalog: Catalog) -> None:
    from mediaplan.tasks import prep
    from mediaplan.views import export  # noqa: F401 - imported for the sheet's first showing

    if recipe.lines(catalog):
        prep.build_sheet(recipe, catalog, volume=recipe.volume, stocks=False, title="warm start")


def _screens(recipe: Recipe, catalog: Catalog) -> None:
    import textual_plotext  # noqa: F401
    from textual.widgets import DataTable, Markdown  # noqa: F401

    import mediaplan.tui.screens.compare  # noqa: F401
    import mediaplan.tui.screens.plasmolysis  # noqa: F401
    import mediaplan.tui.screens.prep  # noqa: F401
    import mediaplan.tui.screens.projection  # noqa: F401
    import mediaplan.tui.screens.reading  # noqa: F401
    import mediaplan.tui.screens.target  # noqa: F401


STEPS: tuple[tuple[str, Callable[[Recipe, Catalog], None]], ...] = (
    ("engine", _engine), ("solve", _solve), ("series", _series), ("sheet", _sheet), ("screens", _screens),
)


#: set while the screen's thread may run at full speed; cleared for a moment after a screen is opened
#: (:func:`hold`). The warm start then waits at its next import statement of an engine module and before
#: its next step, so that the two threads do not share the interpreter while the user waits for the screen
QUIET = threading.Event()
QUIET.set()
#: the most the warm start waits in all for one hold [s]: should the screen's thread be waiting for a module
#: that the warm start holds half-imported, it waits no longer than this
WAIT_AT_MOST = 0.25
#: modules the screen's thread imports itself: the warm start never waits at these imports
SCREEN_SIDE = ("textual", "rich", "mediaplan.tui", "mediaplan.files", "mediaplan.medium.units",
               "mediaplan.medium.errors", "mediaplan.medium.recipe", "mediaplan.medium.catalog", "encodings")

_hold_timer = None
#: how many holds were made (the warm start's budget of waiting starts anew with each)
_holds = [0]


def hold(app, seconds: float) -> None:
    """The warm start waits (at engine imports and between steps) for ``seconds`` [s] from now, or until
    :func:`release`; a later hold replaces it. Called on the screen's thread (``app`` runs the timer)."""
    global _hold_timer
    _holds[0] += 1
    QUIET.clear()
    if _hold_timer is not None:
        _hold_timer.stop()
    _hold_timer = app.set_timer(seconds, release)


def release() -> None:
    """The warm start goes on (the screen it waited for is painted, or the hold's time is over)."""
    global _hold_timer
    if _hold_timer is not None:
        _hold_timer.stop()
    _hold_timer = None
    QUIET.set()


class _Gate:
    """The interpreter's ``__import__`` while the warm start runs: on the warm start's thread, an import
    statement of an engine module first waits while a hold lasts (at most :data:`WAIT_AT_MOST` in all for
    one hold). It waits between module imports, never inside the import machinery (which holds the
    interpreter's global import lock there); other threads' imports pass straight through."""

    def __init__(self, thread_id: int, real: Callable) -> None:
        self.thread_id = thread_id
        self.real = real
        self.hold = -1
        self.waited = 0.0

    def __call__(self, name, globals=None, locals=None, fromlist=(), level=0):
        if not QUIET.is_set() and threading.get_ident() == self.thread_id:
            where = name if level == 0 else ((globals or {}).get("__package__") or "")
            if not where.startswith(SCREEN_SIDE):
                self.wait()
        return self.real(name, globals, locals, fromlist, level)

    def wait(self) -> None:
        if self.hold != _holds[0]:
            self.hold, self.waited = _holds[0], 0.0
        left = WAIT_AT_MOST - self.waited
        if left > 0 and not QUIET.is_set():
            t0 = time.perf_counter()
            QUIET.wait(left)
            self.waited += time.perf_counter() - t0


#: while warming, the interpreter hands the GIL between threads this often [s] (default 0.005): the screen's
#: thread then waits at most this long for its turn, so keys and paints stay quick during the imports
SWITCH_INTERVAL = 0.0005


def warm_up(recipe: Recipe, catalog: Catalog, on_step: Callable[[str], None] | None = None,
            stop: threading.Event | None = None) -> dict[str, float]:
    """Run each step once; returns the seconds each took [s] (a step that fails is left out: the user's own
    action will meet the same problem and report it in words). ``on_step(name)`` is called after each step
    (from this thread), failed or not; once ``stop`` is set no further step starts (the app is closing and
    must not wait for the rest).

    Meant for a worker thread: the GIL is handed over more often until the steps are done, and after the
    engine step (which the figures on screen wait for) the thread asks the system for a low priority.
    """
    interval = sys.getswitchinterval()
    sys.setswitchinterval(min(interval, SWITCH_INTERVAL))
    took: dict[str, float] = {}
    gate = _Gate(threading.get_ident(), builtins.__import__)
    builtins.__import__ = gate
    try:
        for name, step in STEPS:
            gate.wait()
            if stop is not None and stop.is_set():
                break
            t0 = time.perf_counter()
            try:
                step(recipe, catalog)
                took[name] = time.perf_counter() - t0
            except Exception:  # noqa: BLE001 - warming must never disturb the session
                pass
            if on_step is not None:
                on_step(name)
            if name == "engine":
                _lower_priority()
    finally:
        sys.setswitchinterval(interval)
        if builtins.__import__ is gate:
            builtins.__import__ = gate.real
    return took


#: the niceness the warm start's thread takes after its engine step (0: none). A low priority keeps a
#: single-core machine's screen quick, but on a busy machine the starved thread holds the import lock of a
#: module the screen's thread or the user's own solve or fit then waits for (measured in bench_tui.py)
WARM_NICENESS = 19


def _lower_priority() -> None:
    if not WARM_NICENESS:
        return
    try:  # this thread only (Linux gives each thread its own priority)
        os.setpriority(os.PRIO_PROCESS, threading.get_native_id(), WARM_NICENESS)
    except (AttributeError, OSError):
        pass
