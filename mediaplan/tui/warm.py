"""Warm start: import and compile what the first solve, series, fit and preparation sheet need.

The app runs :func:`warm_up` in a worker thread right after its first paint, so the user's first target,
series design, fit or sheet does not wait for imports (the solver's root finder alone takes about a second
to import) or for a medium model to be compiled. Plain Python; nothing here touches a widget.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.recipe import Recipe

#: the osmoticum the target dialog and the series screen offer first
FIRST_OSMOTICUM = "mannitol"


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
    ("solve", _solve), ("series", _series), ("sheet", _sheet), ("screens", _screens),
)


#: while warming, the interpreter hands the GIL between threads this often [s] (default 0.005): the screen's
#: thread then waits at most this long for its turn, so keys and paints stay quick during the imports
SWITCH_INTERVAL = 0.0005


def warm_up(recipe: Recipe, catalog: Catalog) -> dict[str, float]:
    """Run each step once; returns the seconds each took [s] (a step that fails is left out: the user's own
    action will meet the same problem and report it in words).

    Meant for a worker thread: the thread asks the system for a low priority, and the GIL is handed over
    more often until the steps are done.
    """
    import sys
    import threading

    try:  # this thread only (Linux gives each thread its own priority)
        os.setpriority(os.PRIO_PROCESS, threading.get_native_id(), 19)
    except (AttributeError, OSError):
        pass
    interval = sys.getswitchinterval()
    sys.setswitchinterval(min(interval, SWITCH_INTERVAL))
    took: dict[str, float] = {}
    try:
        for name, step in STEPS:
            t0 = time.perf_counter()
            try:
                step(recipe, catalog)
            except Exception:  # noqa: BLE001 - warming must never disturb the session
                continue
            took[name] = time.perf_counter() - t0
    finally:
        sys.setswitchinterval(interval)
    return took
