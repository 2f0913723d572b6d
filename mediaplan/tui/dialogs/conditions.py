"""Plan conditions: title, notes, batch volume, temperature, storage temperature and the cell reference.

The fields come in the order they are shown, the title first. Esc after a change asks before the typed
text is dropped.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, TextArea

from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import (
    FieldInput,
    FieldMessage,
    TargetValidator,
    TemperatureValidator,
    VolumeValidator,
    validated_value,
)


@dataclass(frozen=True)
class Conditions:
    title: str
    volume: str
    temperature: str
    cells: str  # "" = no cell reference
    notes: str = ""
    storage: str = ""  # "" = the plan states none (solubility is then checked at 4 °C for cold storage)


def shown_temperature(text: str) -> str:
    """A temperature as the dialog shows it: ``25 degC`` reads ``25 °C``."""
    return text.replace("degC", "°C").replace("deg_C", "°C")


def kept_temperature(typed: str, original: str) -> str:
    """The text to keep: the plan's own text when the user left the shown form unchanged."""
    return original if typed.strip() == shown_temperature(original).strip() else typed


class ConditionsScreen(StyledOnce, ModalScreen[Conditions | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="conditions.cancel", tooltip="Keep the conditions")]

    def __init__(self, current: Conditions) -> None:
        super().__init__()
        self.current = current

    def compose(self) -> ComposeResult:
        c = self.current
        with Vertical(classes="dialog", id="conditions-dialog") as box:
            box.border_title = "conditions"
            with Grid(id="conditions-grid"):
                yield Label("title", classes="field-label")
                yield FieldInput(c.title, id="cond-title", placeholder="a name for this medium")
                yield Label("volume", classes="field-label")
                yield FieldInput(c.volume, id="cond-volume", validators=[VolumeValidator()],
                                 placeholder="batch volume, e.g. 1 L")
                yield Label("temperature", classes="field-label")
                yield FieldInput(shown_temperature(c.temperature), id="cond-temperature",
                                 validators=[TemperatureValidator()], placeholder="e.g. 25 °C")
                yield Label("kept at", classes="field-label")
                yield FieldInput(shown_temperature(c.storage), id="cond-storage",
                                 validators=[TemperatureValidator(allow_empty=True)],
                                 placeholder="e.g. 4 °C")
                yield Label("cells", classes="field-label")
                yield FieldInput(c.cells, id="cond-cells", validators=[TargetValidator(allow_empty=True)],
                                 placeholder="e.g. 450 mOsm/kg")
            yield Label("notes (kept in the plan file)", classes="field-label", id="cond-notes-label")
            yield TextArea(c.notes, id="cond-notes", soft_wrap=True, show_line_numbers=False,
                           placeholder="what this medium is for, who made it, what to watch")
            yield FieldMessage("kept at: storage · cells: their sap, for tonicity · Enter applies",
                               id="cond-message")
            with Horizontal(classes="buttons"):
                yield Button("Apply", variant="primary", id="cond-apply")
                yield Button("Cancel", id="cond-cancel")

    def on_mount(self) -> None:
        self.query_one("#cond-title", Input).focus()

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)

    @on(Input.Submitted)
    @on(Button.Pressed, "#cond-apply")
    def _apply(self) -> None:
        msg = self.query_one(FieldMessage)
        for key in ("volume", "temperature", "storage", "cells"):
            inp = self.query_one(f"#cond-{key}", Input)
            if validated_value(inp, msg) is None:
                inp.focus()
                return
        self.dismiss(self._typed())

    def _typed(self) -> Conditions:
        """What the fields hold now (unchecked), in the plan's words."""
        c = self.current
        return Conditions(self.query_one("#cond-title", Input).value.strip() or "Untitled medium",
                          self.query_one("#cond-volume", Input).value.strip(),
                          kept_temperature(self.query_one("#cond-temperature", Input).value, c.temperature),
                          self.query_one("#cond-cells", Input).value.strip(),
                          self.query_one("#cond-notes", TextArea).text.strip(),
                          kept_temperature(self.query_one("#cond-storage", Input).value, c.storage).strip())

    @on(Button.Pressed, "#cond-cancel")
    def action_cancel(self) -> None:
        """Close; when something was typed, ask before dropping it."""
        from mediaplan.tui.dialogs.files import ChoiceScreen

        c = self.current
        if self._typed() == replace(c, title=c.title.strip() or "Untitled medium", notes=c.notes.strip()):
            self.dismiss(None)
            return

        def done(answer: str | None) -> None:
            if answer == "discard":
                self.dismiss(None)

        self.app.push_screen(ChoiceScreen("drop the changes?", "The conditions have changes that are not applied.",
                                          [("keep", "Keep editing"), ("discard", "Drop the changes")]), done)
