"""Preparation sheet for a batch volume: weights on the shelf and, optionally, stock solutions.

The sheet is built by mediaplan.tasks.prep in a worker and shown as the Markdown that mediaplan.views.export
writes; ``w`` writes it next to the plan (a plan never saved asks where; an existing sheet is never
overwritten without a question). The sheet has the focus, so its keys and PageDown work at once; ``v``
goes to the batch volume.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Input, Label, Markdown, Static, Switch
from textual.worker import Worker, WorkerState

from mediaplan.medium.errors import MediaplanError
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput, FieldMessage, VolumeValidator, report, validated_value
from mediaplan.tui.widgets.keybar import KeyBar
from mediaplan.tui.words import in_app_words


def sheet_name(title: str) -> str:
    """A file name for the sheet of a plan never saved, from its title."""
    stem = "".join(ch if ch.isalnum() else "_" for ch in title.lower()).strip("_")
    return (stem[:40] or "plan") + "-prep.md"


def sheet_markdown(plan, catalog, volume: str, stocks: bool) -> str:
    """Build the sheet and format it (pure; runs in a worker thread)."""
    from mediaplan.files.plan_tables import provenance_table
    from mediaplan.tasks import prep
    from mediaplan.views import export

    sheet = prep.build_sheet(plan.recipe, catalog, volume=volume, stocks=stocks, title=plan.title)
    recorded = provenance_table(plan.provenance) if plan.provenance is not None else None
    return export.prep_sheet(sheet, plan, "md", provenance=recorded)


class PrepScreen(StyledOnce, Screen):
    BINDINGS = [
        Binding("escape", "close", "Back", id="prep.close", tooltip="Back to the recipe"),
        Binding("s", "toggle_stocks", "Stocks", id="prep.stocks", tooltip="Weigh everything, or use stock solutions"),
        Binding("v", "batch", "Batch volume", id="prep.batch", tooltip="Type another batch volume"),
        Binding("w", "write", "Write .md", id="prep.write", tooltip="Write the sheet as Markdown beside the plan"),
    ]

    @dataclass
    class Ready(Message):
        """A sheet was built (or could not be: ``error`` says why, in words)."""

        markdown: str | None
        error: str | None = None

    def __init__(self) -> None:
        super().__init__()
        self.markdown: str | None = None

    def compose(self) -> ComposeResult:
        recipe = self.app.session.recipe
        yield Static("", id="topbar", markup=False)
        with Horizontal(id="prep-controls"):
            yield Label("batch", classes="field-label")
            yield FieldInput(recipe.volume, id="prep-volume", validators=[VolumeValidator()])
            yield Label("stock solutions", classes="field-label")
            yield Switch(False, id="prep-stocks")
        yield FieldMessage("Enter rebuilds the sheet for this volume", id="prep-message")
        with VerticalScroll(id="prep-scroll"):
            yield Markdown("", id="prep-sheet")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#topbar", Static).update(f" preparation sheet · {self.app.session.plan.title}")
        self.query_one("#prep-scroll").focus()
        self.rebuild()

    def action_batch(self) -> None:
        self.query_one("#prep-volume", Input).focus()

    def rebuild(self) -> None:
        volume = validated_value(self.query_one("#prep-volume", Input), self.query_one(FieldMessage))
        if volume is not None:
            self.query_one(FieldMessage).update("building…")
            self.build(volume, self.query_one(Switch).value)

    @work(thread=True, exclusive=True, exit_on_error=False)
    def build(self, volume: str, stocks: bool) -> None:
        session = self.app.session
        try:
            self.post_message(self.Ready(sheet_markdown(session.plan, session.catalog, volume, stocks)))
        except MediaplanError as exc:
            self.post_message(self.Ready(None, in_app_words(exc)))

    @on(Ready)
    def _ready(self, event: Ready) -> None:
        if not report(self.query_one(FieldMessage), event.error,
                      "s switches stock solutions · w writes the sheet beside the plan"):
            return
        self.markdown = event.markdown
        self.query_one(Markdown).update(event.markdown or "")

    @on(Worker.StateChanged)
    def _failed(self, event: Worker.StateChanged) -> None:
        if event.state == WorkerState.ERROR:
            self.query_one(FieldMessage).update(f"✗ the sheet could not be built: {event.worker.error}")

    @on(Input.Submitted, "#prep-volume")
    def _volume_entered(self) -> None:
        self.rebuild()
        if not self.query_one(FieldMessage).has_class("-error"):
            self.query_one("#prep-scroll").focus()

    @on(Switch.Changed)
    def _changed(self) -> None:
        self.rebuild()

    def action_toggle_stocks(self) -> None:
        self.query_one(Switch).toggle()

    def action_write(self) -> None:
        """Write beside a saved plan; a plan never saved asks where. An existing file is not overwritten
        without a question."""
        from mediaplan.tui.dialogs.files import PathScreen

        if not self.markdown:
            return
        plan = self.app.session.plan
        if plan.path is None:
            folder = getattr(self.app, "start_dir", None) or Path.cwd()
            self.app.push_screen(PathScreen("write the sheet as", folder, str(folder / sheet_name(plan.title)),
                                            must_exist=False, suffix=".md"),
                                 lambda path: path is not None and self._write(path))
            return
        self._write(plan.path.parent / f"{plan.path.stem}-prep.md")

    def _write(self, target: Path, *, overwrite: bool = False) -> None:
        from mediaplan.files.planfile import atomic_write
        from mediaplan.tui.dialogs.files import ChoiceScreen, PathScreen

        if target.exists() and not overwrite:
            def done(answer: str | None) -> None:
                if answer == "overwrite":
                    self._write(target, overwrite=True)
                elif answer == "other":
                    self.app.push_screen(PathScreen("write the sheet as", target.parent, str(target),
                                                    must_exist=False, suffix=".md"),
                                         lambda path: path is not None and self._write(path))

            self.app.push_screen(ChoiceScreen("the sheet exists", f"{target}\nis there already.",
                                              [("other", "Another name"), ("overwrite", "Overwrite"),
                                               ("cancel", "Cancel")]), done)
            return
        try:
            atomic_write(target, (self.markdown or "").encode("utf-8"))
        except OSError as exc:
            self.notify(f"not written: {exc}", severity="error", markup=False)
            return
        self.notify(f"written {target}", markup=False)

    def action_close(self) -> None:
        self.dismiss()
