"""Screens that open at once (mediaplan.tui.quick): the work left out or done ahead changes nothing shown.

- a screen styled once (when its widgets mount) has the very styles a full restyle would give it;
- its width class is the one Textual gives for the terminal's width;
- the tinted backdrop of a dialog is Textual's own, segment for segment;
- after the priming steps, opening the target dialog and the series screen parses no stylesheet;
- the series screen shows a line of text where the curve will be, and the plot after the first fit.
"""

from __future__ import annotations

import asyncio

import pytest
from rich.segment import Segment
from rich.style import Style
from textual.color import Color
from textual.renderables.background_screen import BackgroundScreen
from tui_helpers import DEMO_COUNTS, SIZE_IDS, SIZES, app_for, run_async, screen_text, settle, shoot_plan

from mediaplan.tui import quick
from mediaplan.tui.screens.plasmolysis import PLOT_EMPTY, SeriesScreen
from mediaplan.tui.screens.target import TargetScreen
from mediaplan.tui.session import Session

sizes = pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)


def _styles(screen) -> dict:
    """Every node's applied styles, its component classes' too, as CSS text."""
    out = {}
    for node in screen.walk_children(with_self=True):
        out[node] = [node.styles.css] + [node.get_component_styles(name).css
                                         for name in sorted(node._get_component_classes())]
    return out


async def _open(app, pilot, key: str, kind: type):
    await pilot.press(key)
    while not (isinstance(app.screen, kind) and app.screen.is_mounted):
        await asyncio.sleep(0.005)
    await pilot.pause()
    return app.screen


def _same_as_a_full_restyle(app, screen) -> None:
    assert screen._shown_before
    shown = _styles(screen)
    assert len(shown) >= 4  # the screen, its dialog box and widgets
    app.stylesheet.update(screen)  # what Textual would have done on showing it
    assert _styles(screen) == shown


@sizes
@run_async
async def test_screens_styled_once_have_the_styles_of_a_full_restyle(catalog, size):
    from mediaplan.tui.screens.main import MainScreen

    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        main = app.screen
        assert isinstance(main, MainScreen) and main.has_class("-wide") == (size[0] >= 110)
        _same_as_a_full_restyle(app, main)
        for key, kind in (("t", TargetScreen), ("p", SeriesScreen)):
            screen = await _open(app, pilot, key, kind)
            _same_as_a_full_restyle(app, screen)
            # the width class: the one Textual's own resize handling keeps
            wide = size[0] >= 120
            assert screen.has_class("-wide") == (wide and kind is SeriesScreen)
            assert screen.has_class("-narrow") == (not wide and kind is SeriesScreen)
            await pilot.press("escape")
            await pilot.pause()
            assert app.screen is main
        _same_as_a_full_restyle(app, main)  # shown again: restyled by Textual as before


@run_async
async def test_the_other_dialogs_styled_once_have_the_styles_of_a_full_restyle(catalog):
    from mediaplan.tui.dialogs.conditions import ConditionsScreen
    from mediaplan.tui.dialogs.picker import PickerScreen
    from mediaplan.tui.screens.reading import ReadingScreen

    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        for key, kind in (("a", PickerScreen), ("c", ConditionsScreen), ("g", ReadingScreen)):
            screen = await _open(app, pilot, key, kind)
            _same_as_a_full_restyle(app, screen)
            await pilot.press("escape")
            await pilot.pause()


@pytest.mark.parametrize(("breakpoints", "width", "expected"), [
    ([(0, "-narrow"), (120, "-wide")], 80, "-narrow"),
    ([(0, "-narrow"), (120, "-wide")], 119, "-narrow"),
    ([(0, "-narrow"), (120, "-wide")], 120, "-wide"),
    ([(120, "-wide"), (0, "-narrow")], 140, "-wide"),
    ([(100, "-wide")], 80, None),
    (None, 80, None),
])
def test_width_class_is_the_widest_breakpoint_not_wider_than_the_terminal(breakpoints, width, expected):
    assert quick.width_class(breakpoints, width) == expected


def test_backdrop_tints_every_segment_as_textual_does():
    styles = [Style(color="#7fb069", bgcolor="#161b1f"), Style(color="red"), Style(bgcolor="#2a3339", bold=True),
              Style(), None, Style(color="#8fc1e3", link="https://example.org")]
    segments = [Segment(f"text {i}", styles[i % len(styles)]) for i in range(40)]
    segments.insert(7, Segment("\n", None, [(1, 0)]))  # a control segment passes through
    for color in (Color(22, 27, 31, 0.6), Color(0, 0, 0, 0.0), Color(255, 255, 255, 0.25)):
        ours = list(quick.Backdrop.process_segments(segments, color))
        textual = list(BackgroundScreen.process_segments(segments, color))
        assert ours == textual


@pytest.fixture
def quick_priming(monkeypatch):
    """The priming steps one millisecond apart (not 10 ms), so a test sees them through quickly."""
    import mediaplan.tui.app as app_module

    monkeypatch.setattr(app_module, "PRIME_PAUSE", 0.001)


@pytest.mark.prime_screens
@run_async
async def test_after_priming_the_first_screens_parse_no_stylesheet(catalog, quick_priming):
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        for _ in range(400):
            if app.primed:
                break
            await asyncio.sleep(0.01)
        assert app.primed and not app._prime_left and not app._prime_later
        parsed = set(app.stylesheet._parse_cache.keys())
        for key, kind in (("t", TargetScreen), ("p", SeriesScreen)):
            await _open(app, pilot, key, kind)
            await pilot.press("escape")
            await pilot.pause()
        assert set(app.stylesheet._parse_cache.keys()) <= parsed


async def _target_opened_mid_priming(app) -> None:
    """Open the target dialog once the priming has begun, before it is through."""
    while not app._prime_left:  # the priming has begun
        await asyncio.sleep(0.001)
    app.get_screen("main").action_set_target()
    while not isinstance(app.screen, TargetScreen):
        await asyncio.sleep(0.005)


@pytest.mark.prime_screens
@run_async
async def test_priming_waits_while_a_screen_is_open_and_goes_on_after(catalog, quick_priming):
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await _target_opened_mid_priming(app)
        left = len(app._prime_left)
        assert left > 0
        await asyncio.sleep(0.1)
        assert len(app._prime_left) == left  # nothing runs while the dialog is open
        await pilot.press("escape")
        for _ in range(400):
            if app.primed:
                break
            await asyncio.sleep(0.01)
        assert app.primed


@pytest.mark.prime_screens
@run_async
async def test_a_priming_step_due_while_the_app_closes_raises_nothing(catalog):
    # closing with a dialog open and priming steps left (a pilot's close, a signal): the last timers may
    # fire once the app has stopped running, and must neither subscribe to its signals nor run a step
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]):
        await _target_opened_mid_priming(app)
        left = list(app._prime_left)
    assert not app.is_running
    ran = []
    app._prime([lambda: ran.append(1)])  # what a timer set before the close does
    app._prime(left)
    assert ran == []


@run_async
async def test_series_plot_place_holds_a_line_until_the_first_fit(catalog):
    from textual_plotext import PlotextPlot

    from mediaplan.tui.screens.main import MainScreen  # noqa: F401 - the app's main screen

    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        screen = await _open(app, pilot, "p", SeriesScreen)
        assert PLOT_EMPTY in screen_text(app) and not screen.query(PlotextPlot)
        await pilot.press("d")
        await settle(app, pilot)
        for i, counts in enumerate(DEMO_COUNTS):
            screen.series = screen.series.with_counts(i, counts)
        await pilot.press("f")
        await settle(app, pilot)
        text = screen_text(app)
        assert screen.fit is not None and PLOT_EMPTY not in text
        assert len(screen.query(PlotextPlot)) == 1 and "50%" in text
        await pilot.press("l")  # a second fit (probit) draws into the same plot
        await settle(app, pilot)
        assert len(screen.query(PlotextPlot)) == 1 and screen.fit.link == "probit"


class _Held:
    """warm.QUIET while a screen is held open: never set; each wait of the warm start is recorded and
    advances a clock by its timeout (warm.time.perf_counter reads it)."""

    def __init__(self) -> None:
        self.waits: list[float] = []
        self.now = 0.0

    def is_set(self) -> bool:
        return False

    def wait(self, timeout: float) -> bool:
        self.waits.append(timeout)
        self.now += timeout
        return False

    def set(self) -> None:
        pass


@pytest.fixture
def held(monkeypatch):
    import types

    from mediaplan.tui import warm

    held = _Held()
    monkeypatch.setattr(warm, "QUIET", held)
    monkeypatch.setattr(warm, "time", types.SimpleNamespace(perf_counter=lambda: held.now))
    monkeypatch.setattr(warm, "_lower_priority", lambda: None)
    return held


def test_warm_start_waits_at_engine_imports_and_steps_while_a_screen_is_held(catalog, monkeypatch, held):
    import builtins

    from mediaplan.tui import warm

    real_import = builtins.__import__
    monkeypatch.setattr(warm, "WAIT_AT_MOST", 0.25)
    tried = []

    def importing(*names):
        def run(recipe, cat):
            for name in names:
                tried.append(name)
                try:
                    __import__(name)  # an import statement's way in
                except ImportError:
                    pass
        return run

    # a module the screen's thread may import too is never waited for (it could hold that module's lock)
    monkeypatch.setattr(warm, "STEPS", (("screen side", importing("textual.mediaplan_no_such_module")),))
    warm._holds[0] += 1
    warm.warm_up(shoot_plan().recipe, catalog)
    assert tried == ["textual.mediaplan_no_such_module"] and held.waits == [0.25]  # before the step only
    # an engine module is waited for, within one budget per hold
    held.waits.clear()
    monkeypatch.setattr(warm, "STEPS", (("engine", importing("mediaplan_no_such_engine_module", "math")),))
    warm._holds[0] += 1
    held.now = 0.0
    monkeypatch.setattr(_Held, "wait", lambda self, t: (self.waits.append(t), setattr(self, "now", self.now + 0.1)))
    warm.warm_up(shoot_plan().recipe, catalog)
    assert held.waits == pytest.approx([0.25, 0.15, 0.05])  # before the step, then each import: 0.25 s in all
    assert builtins.__import__ is real_import  # the gate is gone


def test_the_gate_waits_only_on_the_warm_start_thread_and_only_for_engine_modules(held):
    import builtins
    import threading

    from mediaplan.tui import warm

    warm._holds[0] += 1
    other = warm._Gate(threading.get_ident() + 1, builtins.__import__)
    other("math")
    assert held.waits == []
    gate = warm._Gate(threading.get_ident(), builtins.__import__)
    gate("math")
    assert held.waits == [warm.WAIT_AT_MOST]  # the budget of this hold is spent at once here
    warm._holds[0] += 1  # a new hold: a new budget
    gate("textual.widgets")
    gate("widgets", {"__package__": "textual"}, None, ("Static",), 1)  # a relative import inside textual
    assert len(held.waits) == 1
    gate("math", {"__package__": "mediaplan.thermo"}, None, (), 0)
    assert len(held.waits) == 2


#: (seconds after the first paint at which the app is closed, the key pressed just before: none, the
#: target dialog, the series screen)
CLOSING_MOMENTS = [(delay, key) for delay in (0.0, 0.01, 0.08) for key in (None, "t", "p")]


@pytest.mark.warm_start
@pytest.mark.prime_screens
@pytest.mark.parametrize(("delay", "key"), CLOSING_MOMENTS, ids=[f"{d}s-{k}" for d, k in CLOSING_MOMENTS])
@run_async
async def test_closing_at_any_moment_of_the_start_raises_nothing(catalog, delay, key):
    # a pilot's close (as a signal or a lost terminal closes the app): no app.exit(), so the warm start and
    # the priming timers learn of it only from the app itself; run_test raises whatever the app raised
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        if key is not None:
            await pilot.press(key)
        await asyncio.sleep(delay)
    assert not app.is_running
