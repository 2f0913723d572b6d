"""The mediaplan terminal app: compose a medium and watch its water relations change.

The App owns the :class:`~mediaplan.tui.session.Session` (plan, undo history, recovery file) and the
file actions (open, save, save as, new, quit); the main screen owns the recipe actions. Right after the
first paint a worker warms the solver, the series design and fit and the sheet
(:mod:`mediaplan.tui.warm`), so the user's first action does not wait for imports.
"""

from __future__ import annotations

import gc
import os
import threading
from dataclasses import dataclass
from pathlib import Path

from textual import work
from textual.app import App
from textual.message import Message
from textual.theme import Theme
from textual.timer import Timer
from textual.worker import Worker, WorkerState

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import ConflictError, MediaplanError
from mediaplan.tui.actions import bindings
from mediaplan.tui.dialogs.files import ChoiceScreen, PathScreen
from mediaplan.tui.palette import PlanCommands
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session, find_recoveries, restore
from mediaplan.tui.words import in_app_words

#: seconds of quiet after an edit before unsaved work is written to the recovery folder
AUTOSAVE_DELAY = 2.0
#: seconds the warm start waits when a screen is opened while it is at work (the screens open in ~0.15 s)
HOLD_ON_OPEN = 0.25
#: seconds between two priming steps (each a few milliseconds): keys and paints go first
PRIME_PAUSE = 0.01
#: set to 1 to exit right after the first painted screen, or to "figures" to exit once the first screen with
#: the plan's figures is painted (start-up benchmark)
EXIT_AFTER_PAINT = "MEDIAPLAN_TUI_EXIT_AFTER_PAINT"

THEME = Theme(
    name="mediaplan-agar",
    primary="#7fb069",  # leaf green
    secondary="#e6aa68",  # amber of an autoclaved medium
    accent="#8fc1e3",
    warning="#e6aa68",
    error="#e4572e",
    success="#7fb069",
    background="#161b1f",
    surface="#1f262b",
    panel="#2a3339",
    dark=True,
)


class MediaplanApp(App):
    CSS_PATH = "mediaplan.tcss"
    TITLE = "mediaplan"
    COMMANDS = App.COMMANDS | {PlanCommands}
    BINDINGS = bindings("app")
    #: warm the solver, series, fit and sheet after the first paint (tests of other things turn it off)
    WARM_START = True
    #: import the screens and parse their widgets' stylesheets after the first paint (mediaplan.tui.quick)
    PRIME_SCREENS = True

    class EngineReady(Message):
        """The warm start has imported the engine: the main screen can show the plan's figures."""

    @dataclass
    class Warmed(Message):
        """The warm start is done: seconds per step [s] (steps that failed are left out)."""

        took: dict[str, float]

    def __init__(self, session: Session, *, offer_recovery: bool = True, start_dir: Path | None = None) -> None:
        super().__init__()
        # the app's theme from the start, before any CSS is parsed: setting it once running re-parses every
        # stylesheet and re-styles every widget (a few hundredths of a second of the start)
        self.register_theme(THEME)
        self.set_reactive(MediaplanApp.theme, THEME.name)
        self.stylesheet.set_variables(self.get_css_variables())
        self.set_class(True, f"-theme-{THEME.name}", update=False)
        self.session = session
        self.offer_recovery = offer_recovery
        self.start_dir = start_dir or Path.cwd()
        self._autosave: Timer | None = None
        self.warmed: dict[str, float] | None = None
        #: the warm start is importing the engine: the main screen shows "computing" until it is in
        self.warming_engine = False
        #: set when the app closes: the warm start begins no further step (closing never waits for them)
        self._warm_stop = threading.Event()
        #: the warm start's thread is at work (a screen opened meanwhile holds it a moment)
        self._warm_running = False
        #: the priming steps not run yet (mediaplan.tui.quick), and those that wait for the engine
        self._prime_left: list = []
        self._prime_later: list = []
        #: every priming step has run
        self.primed = False

    @property
    def catalog(self) -> Catalog:
        return self.session.catalog

    @property
    def main(self) -> MainScreen:
        return self.get_screen("main")  # type: ignore[return-value]

    def on_mount(self) -> None:
        from mediaplan.tui.warm import engine_ready

        # the first screen is painted without the engine (numpy and the models take a few tenths of a second
        # to import); the warm start's first step imports it and the figures follow
        self.warming_engine = self.WARM_START and not engine_ready()
        self.install_screen(MainScreen(), name="main")
        self.push_screen("main")
        exit_after = os.environ.get(EXIT_AFTER_PAINT)
        if exit_after == "1" or (exit_after == "figures" and not self.warming_engine):
            self.call_after_refresh(self.exit)
            return
        if self.session.plan.path is not None:
            self.call_after_refresh(_remember, self.session.plan.path)
            self.call_after_refresh(self._say_catalog_mismatch)
        if self.WARM_START:
            self.call_after_refresh(self.warm_start)
        if self.PRIME_SCREENS:
            from mediaplan.tui.quick import prime_steps

            first, self._prime_later = prime_steps(self)
            self.call_after_refresh(self._prime, first)
        if self.offer_recovery:
            self.call_after_refresh(self._offer_recovery)

    def _prime(self, steps: list) -> None:
        """Run the next priming step (mediaplan.tui.quick) while the main screen is on top. A screen opened
        meanwhile opens undisturbed: the priming stops, and goes on once the main screen is back. The steps
        for the screens a first action opens run at once; the others once the engine is in (while the warm
        start imports it, every step on this thread slows it: the figures would come later)."""
        if not steps and self._prime_later and not self.warming_engine:
            steps, self._prime_later = self._prime_later, []
        self._prime_left = steps
        if not steps or self._warm_stop.is_set() or not self.is_running:
            self.primed = not steps and not self._prime_later
            return
        if not (self.screen_stack and isinstance(self.screen_stack[-1], MainScreen)):
            self.screen_change_signal.subscribe(self, self._prime_again)
            return
        step = steps.pop(0)
        try:
            step()
        except Exception:  # noqa: BLE001 - priming only saves time; the screen itself will do the work
            pass
        if steps or self._prime_later:
            self.set_timer(PRIME_PAUSE, lambda: self._prime(steps))
        else:
            self.primed = True

    def _prime_again(self, screen) -> None:
        if isinstance(screen, MainScreen):
            self.screen_change_signal.unsubscribe(self)
            self.set_timer(PRIME_PAUSE, lambda: self._prime(self._prime_left))

    @work(thread=True, exclusive=True, exit_on_error=False, group="warm", name="warm start")
    def warm_start(self) -> None:
        """Import and compile what the first solve, series, fit and sheet need (a thin worker)."""
        from mediaplan.tui.warm import warm_up

        self._warm_running = True
        # what the app holds from now on is kept for good (modules, the catalog, the compiled models): the
        # collector's full passes skip it. Without this a full pass over the engine's objects (~70 ms, at
        # moments the collector picks) can land in the middle of opening a screen.
        gc.freeze()

        def step_done(name: str) -> None:
            gc.freeze()
            if name == "engine":
                self.post_message(self.EngineReady())

        try:
            took = warm_up(self.session.recipe, self.catalog, on_step=step_done, stop=self._warm_stop)
        finally:
            self._warm_running = False
        self.post_message(self.Warmed(took))

    def exit(self, *args, **kwargs) -> None:
        from mediaplan.tui import warm

        self._warm_stop.set()
        warm.release()  # the warm start's thread waits for nothing while the app closes
        super().exit(*args, **kwargs)

    def push_screen(self, screen, *args, **kwargs):
        """Open a screen; while the warm start is still at work, it waits a moment (at its next engine
        import or step) so that the screen opens at the full speed of the interpreter."""
        if self._warm_running:
            from mediaplan.tui import warm

            warm.hold(self, HOLD_ON_OPEN)
        return super().push_screen(screen, *args, **kwargs)

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        """A warm start that ended without reaching its engine step (it failed or was cancelled) must not
        leave the screen computing: the screen then evaluates by itself."""
        if event.worker.name == "warm start" and event.state in (WorkerState.ERROR, WorkerState.CANCELLED,
                                                                 WorkerState.SUCCESS):
            self.on_mediaplan_app_engine_ready(self.EngineReady())

    def on_mediaplan_app_engine_ready(self, _event: EngineReady) -> None:
        """The figures of the plan on screen, now that the engine is in."""
        if not self.warming_engine:
            return
        self.warming_engine = False
        if self._prime_later and not self._prime_left:  # the first steps are done: the others now
            self.set_timer(PRIME_PAUSE, lambda: self._prime([]))
        if self.is_screen_installed("main") and self.main.is_mounted:
            self.main.refresh_all()
        if os.environ.get(EXIT_AFTER_PAINT) == "figures":
            self.call_after_refresh(self.exit)

    def on_mediaplan_app_warmed(self, event: Warmed) -> None:
        self.warmed = event.took

    # ---- recovery of unsaved work -------------------------------------------------------------
    def _offer_recovery(self) -> None:
        found = find_recoveries(self.catalog, self.session.plan.path)
        if not found:
            return
        rec = found[0]
        more = f"\n({len(found) - 1} more recovery files are kept for later.)" if len(found) > 1 else ""

        def done(answer: str | None) -> None:
            if answer == "restore":
                self._replace_session(restore(rec, self.catalog))
                self.notify("Unsaved work restored; save it to keep it.", markup=False)
            elif answer == "discard":
                rec.file.unlink(missing_ok=True)

        self.push_screen(ChoiceScreen("unsaved work found", f"Autosaved, never saved:\n{rec.summary}{more}",
                                      [("restore", "Restore"), ("discard", "Discard"), ("later", "Later")]), done)

    def schedule_autosave(self) -> None:
        """Write the recovery file once edits pause for AUTOSAVE_DELAY seconds."""
        if self._autosave is not None:
            self._autosave.stop()
        self._autosave = self.set_timer(AUTOSAVE_DELAY, self.autosave_now)

    def autosave_now(self) -> None:
        try:
            self.session.write_recovery()
        except MediaplanError as exc:
            self.notify(f"autosave failed: {in_app_words(exc)}", severity="warning", markup=False)
        except OSError as exc:
            self.notify(f"autosave failed: {exc}", severity="warning", markup=False)

    def _replace_session(self, session: Session) -> None:
        self.session = session
        self.main.refresh_all()

    # ---- file actions -------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action in ("save", "save_as", "open_plan", "new_plan", "osmometer_reading"):
            return isinstance(self.screen, MainScreen)
        return True

    def action_save(self) -> None:
        if self.session.plan.path is None:
            self.action_save_as()
        else:
            self._save(None)

    def action_save_as(self) -> None:
        plan = self.session.plan
        folder = plan.path.parent if plan.path else self.start_dir
        name = plan.path.name if plan.path else _file_name(plan.title)
        self.push_screen(PathScreen("save as", folder, str(folder / name), must_exist=False),
                         lambda p: p is not None and self._save(p))

    def _save(self, path: Path | None, *, force: bool = False) -> None:
        try:
            saved = self.session.save(path, force=force)
        except ConflictError as exc:
            self._conflict(path or self.session.plan.path, exc)
            return
        except MediaplanError as exc:
            self.notify(in_app_words(exc), title="not saved", severity="error", markup=False)
            return
        self.notify(f"saved {saved}", markup=False)
        _remember(saved)
        self.main.refresh_all()

    def _conflict(self, target: Path, exc: ConflictError) -> None:
        beside = _beside(target)

        def done(answer: str | None) -> None:
            if answer == "beside":
                self._save(beside)
            elif answer == "overwrite":
                self._save(target, force=True)

        self.push_screen(ChoiceScreen("not saved", f"{exc.message}:\n{target}\n\nSave beside it as {beside.name}?",
                                      [("beside", f"Save as {beside.name}"), ("overwrite", "Overwrite"),
                                       ("cancel", "Cancel")]), done)

    def action_open_plan(self) -> None:
        folder = self.session.plan.path.parent if self.session.plan.path else self.start_dir
        from mediaplan.files.recent import recent_plans

        current = self.session.plan.path
        recent = [p for p in recent_plans() if current is None or p != current.resolve()]
        self._if_saved(lambda: self.push_screen(PathScreen("open a plan", folder, must_exist=True, recent=recent),
                                                self._open))

    def _open(self, path: Path | None) -> None:
        if path is None:
            return
        try:
            session = Session.open(path, self.catalog)
        except MediaplanError as exc:
            self.notify(in_app_words(exc), title="not opened", severity="error", markup=False, timeout=10)
            return
        self.session.discard_recovery()
        self._replace_session(session)
        _remember(path)
        self._say_catalog_mismatch()
        self.call_after_refresh(self._offer_recovery)

    def _say_catalog_mismatch(self) -> None:
        """The warnings of the one catalog-mismatch policy (files/sharing.MISMATCH_POLICY) for the plan just
        opened, one notification each: the app computes with the local catalog's entries."""
        from mediaplan.files.sharing import mismatch_notes

        try:
            notes = mismatch_notes(self.session.plan, self.catalog)
        except MediaplanError:
            return
        for n in notes:
            used = "; the local catalog's entry is used" if n.startswith("catalog differs") else ""
            self.notify(n + used, title="catalog differs", severity="warning", markup=False, timeout=12)

    def action_new_plan(self) -> None:
        def fresh() -> None:
            self.session.discard_recovery()
            self._replace_session(Session.new(self.catalog))

        self._if_saved(fresh)

    def action_osmometer_reading(self) -> None:
        from mediaplan.tui.screens.reading import ReadingScreen

        self.push_screen(ReadingScreen(self.session), lambda _: self.main.refresh_all())

    def action_help(self) -> None:
        from mediaplan.tui.screens.help import HelpScreen

        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen())

    async def action_quit(self) -> None:
        def leave() -> None:
            self.session.discard_recovery()
            self.exit(0)

        self._if_saved(leave)

    def _if_saved(self, then) -> None:
        """Run ``then`` now if nothing is unsaved; otherwise ask: save, discard or cancel."""
        if not self.session.dirty:
            then()
            return

        def done(answer: str | None) -> None:
            if answer == "save":
                self.action_save()
                if not self.session.dirty:
                    then()
            elif answer == "discard":
                then()

        self.push_screen(ChoiceScreen("unsaved changes", f"{self.session.label} has changes that are not saved.",
                                      [("save", "Save"), ("discard", "Discard changes"), ("cancel", "Cancel")]), done)


def _remember(path: Path | str | None) -> None:
    """Put a plan on the recent list; a state folder that cannot be written only costs the list."""
    if not path:
        return
    from mediaplan.files.recent import remember_plan

    try:
        remember_plan(path)
    except (OSError, MediaplanError):
        pass


def _file_name(title: str) -> str:
    stem = "".join(ch if ch.isalnum() else "_" for ch in title.lower()).strip("_")
    return (stem[:40] or "plan") + ".toml"


def _beside(path: Path) -> Path:
    """A free file name next to ``path``: NAME-2.toml, NAME-3.toml..."""
    for i in range(2, 1000):
        cand = path.with_name(f"{path.stem}-{i}{path.suffix}")
        if not cand.exists():
            return cand
    raise MediaplanError("no free file name beside the plan", file=str(path), hint="use save as")
