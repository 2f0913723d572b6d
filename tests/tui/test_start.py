"""The app's first moments: the screen paints before the engine is in, says it is computing, and fills in the
figures when the warm start has the engine; the first actions open their screens at once.

The engine and the plotting library are imported in this process (tests/tui/conftest.py), so these tests
make the readiness checks of mediaplan.tui.warm answer "not yet" and then "ready", as in a fresh start.
"""

from __future__ import annotations

import threading

import pytest
from tui_helpers import SIZE_IDS, SIZES, app_for, run_async, screen_text, settle, shoot_plan

from mediaplan.medium.evaluate import evaluate
from mediaplan.tui import warm
from mediaplan.tui.app import MediaplanApp
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session
from mediaplan.tui.widgets.relations import COMPUTING, figures

sizes = pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)


class _NotYet:
    """The engine "being imported" until :meth:`arrive`; the app's warm start stands in for the real one."""

    def __init__(self, monkeypatch) -> None:
        self.ready = False
        monkeypatch.setattr(warm, "ENGINE_READY", threading.Event())
        monkeypatch.setattr(warm, "engine_ready", lambda: self.ready)
        monkeypatch.setattr(MediaplanApp, "WARM_START", True)
        # the warm start's worker does nothing by itself here: the test says when the engine arrives
        monkeypatch.setattr(MediaplanApp, "warm_start", lambda app: None)

    def arrive(self, app) -> None:
        self.ready = True
        app.post_message(MediaplanApp.EngineReady())


@sizes
@run_async
async def test_first_paint_shows_the_recipe_computing_then_the_figures(catalog, size, monkeypatch):
    engine = _NotYet(monkeypatch)
    session = Session(shoot_plan(), catalog)
    app = app_for(session)
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        main = app.screen
        assert isinstance(main, MainScreen) and main.pending and main.committed is None
        text = screen_text(app)
        assert COMPUTING in text  # the panel says what is going on, never "No figures"
        assert "No figures" not in text
        # the recipe's rows with their amounts are there already (the base's first line, the user's agar)
        assert "ammonium nitrate" in text and "1650 mg/L" in text
        # an edit while computing is kept and shown; its figures come with the engine
        main._apply(session.set_amount, "agar", "8 g/L")
        await pilot.pause()
        assert session.recipe.amount_of("agar").text == "8 g/L" and main.pending
        engine.arrive(app)
        await settle(app, pilot)
        assert not main.pending and main.committed is not None
        text = screen_text(app)
        assert COMPUTING not in text
        want = figures(evaluate(session.recipe, catalog))
        assert want["osmolality"] in text and want["potential_mpa"] in text  # the edited recipe's figures
        from mediaplan.tui.widgets.recipe_table import RecipeTable

        main.query_one(RecipeTable).select_id("agar")  # the edited row, brought into view
        await pilot.pause()
        assert "agar · 8 g/L · added" in screen_text(app)


@run_async
async def test_a_warm_start_that_ends_early_never_leaves_the_screen_computing(catalog, monkeypatch):
    monkeypatch.setattr(warm, "ENGINE_READY", threading.Event())
    monkeypatch.setattr(warm, "engine_ready", lambda: False)
    monkeypatch.setattr(MediaplanApp, "WARM_START", True)

    def failing(self):  # the worker fails before its engine step
        raise RuntimeError("no warm start today")

    from textual import work

    monkeypatch.setattr(MediaplanApp, "warm_start",
                        work(thread=True, exit_on_error=False, group="warm", name="warm start")(failing))
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await settle(app, pilot)
        await pilot.pause()
        main = app.get_screen("main")
        assert not app.warming_engine and not main.pending and main.committed is not None
        assert COMPUTING not in screen_text(app)


@run_async
async def test_without_a_warm_start_the_first_paint_has_its_figures(catalog):
    app = app_for(Session(shoot_plan(), catalog))  # WARM_START is off in these tests
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        main = app.screen
        assert not main.pending and main.committed is not None
        assert COMPUTING not in screen_text(app)


@run_async
async def test_amount_preview_while_computing_says_so(catalog, monkeypatch):
    engine = _NotYet(monkeypatch)
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        main = app.screen
        assert main.preview("agar", "9 g/L") == COMPUTING
        assert app.session.recipe.amount_of("agar").text == "7 g/L"  # a preview changes nothing
        engine.arrive(app)
        await settle(app, pilot)
        assert "→" in main.preview("agar", "9 g/L")  # committed → candidate, once figures exist


def test_the_target_check_never_imports_the_solver_on_the_screens_thread(monkeypatch):
    from mediaplan.medium.errors import MediaplanError
    from mediaplan.tui.screens import target

    monkeypatch.setattr(warm, "module_ready", lambda name: False)
    assert target.check_target("nonsense") == "nonsense"  # left to the solve, in its worker
    monkeypatch.undo()
    import mediaplan.tasks.solve  # noqa: F401 - as after the warm start

    with pytest.raises(MediaplanError):
        target.check_target("nonsense")  # the solver's own reading once it is in


def test_module_ready_tells_a_half_imported_module_from_a_whole_one(monkeypatch):
    import sys
    import types

    half = types.ModuleType("mediaplan_half_imported")
    half.__spec__ = types.SimpleNamespace(_initializing=True)
    monkeypatch.setitem(sys.modules, "mediaplan_half_imported", half)
    assert not warm.module_ready("mediaplan_half_imported")
    half.__spec__._initializing = False
    assert warm.module_ready("mediaplan_half_imported")
    assert not warm.module_ready("mediaplan_never_imported")


@run_async
async def test_series_screen_shows_at_once_and_its_plot_follows(catalog, monkeypatch):
    from tui_helpers import DEMO_COUNTS

    from mediaplan.tui.screens.plasmolysis import SeriesScreen

    real_ready = warm.module_ready
    monkeypatch.setattr(warm, "module_ready", lambda name: False if name == "textual_plotext" else real_ready(name))
    monkeypatch.setattr(SeriesScreen, "_import_plot", lambda screen: None)  # the test says when it is in
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        await pilot.press("p")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, SeriesScreen)
        assert "the plot is being prepared" in screen_text(app)
        await pilot.press("d")  # design and fit before the plot is in: the curve waits for it
        await settle(app, pilot)
        for i, counts in enumerate(DEMO_COUNTS):
            screen.series = screen.series.with_counts(i, counts)
        await pilot.press("f")
        await settle(app, pilot)
        assert screen.fit is not None and screen._points_waiting is not None
        screen.post_message(SeriesScreen.PlotReady())
        await settle(app, pilot)
        text = screen_text(app)
        assert "the plot is being prepared" not in text and screen._points_waiting is None
        assert "50%" in text and "┤" in text  # the curve's axis is drawn


def test_warm_up_stops_between_steps_when_told(catalog, monkeypatch):
    ran = []
    stop = threading.Event()

    def step(name):
        def run(recipe, cat):
            ran.append(name)
            if name == "b":
                stop.set()  # the app closes while this step runs
        return run

    monkeypatch.setattr(warm, "STEPS", tuple((n, step(n)) for n in ("a", "b", "c")))
    monkeypatch.setattr(warm, "_lower_priority", lambda: None)
    took = warm.warm_up(shoot_plan().recipe, catalog, stop=stop)
    assert ran == ["a", "b"] and set(took) == {"a", "b"}
