"""Plan conditions: title, batch volume, temperature and the cell reference for tonicity."""

from __future__ import annotations

from dataclasses import dataclass

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label

from mediaplan.tui.widgets.fields import (
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


class ConditionsScreen(ModalScreen[Conditions | None]):
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
                yield Input(c.title, id="cond-title")
                yield Label("volume", classes="field-label")
                yield Input(c.volume, id="cond-volume", validators=[VolumeValidator()], placeholder="1 L")
                yield Label("temperature", classes="field-label")
                yield Input(c.temperature, id="cond-temperature", validators=[TemperatureValidator()],
                            placeholder="25 degC")
                yield Label("cells", classes="field-label")
                yield Input(c.cells, id="cond-cells", validators=[TargetValidator(allow_empty=True)],
                            placeholder="sap: 450 mOsm/kg or -1.1 MPa (empty: none)")
            yield FieldMessage("cells: the sap of the cells you culture, for tonicity", id="cond-message")
            with Horizontal(classes="buttons"):
                yield Button("Apply", variant="primary", id="cond-apply")
                yield Button("Cancel", id="cond-cancel")

    def on_mount(self) -> None:
        self.query_one("#cond-volume", Input).focus()

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)

    @on(Input.Submitted)
    @on(Button.Pressed, "#cond-apply")
    def _apply(self) -> None:
        msg = self.query_one(FieldMessage)
        values = {}
        for key in ("volume", "temperature", "cells"):
            inp = self.query_one(f"#cond-{key}", Input)
            value = validated_value(inp, msg)
            if value is None:
                inp.focus()
                return
            values[key] = value
        title = self.query_one("#cond-title", Input).value.strip() or "Untitled medium"
        self.dismiss(Conditions(title, values["volume"], values["temperature"], values["cells"]))

    @on(Button.Pressed, "#cond-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
