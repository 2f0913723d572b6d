"""Edit one component's amount: a validated input with a live preview of the figures."""

from __future__ import annotations

from collections.abc import Callable

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Label, Static

from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import AmountValidator, FieldInput, FieldMessage, validated_value

#: preview(text or None) -> one line describing the figures with that amount (None: restore)
Preview = Callable[[str | None], str]


class AmountScreen(StyledOnce, ModalScreen[str | None]):
    """Dismisses with the new amount text, or None when cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="amount.cancel", tooltip="Keep the old amount")]

    def __init__(self, name: str, amount: str, preview: Preview | None = None) -> None:
        super().__init__()
        self.component_name = name
        self.amount = amount
        self._preview = preview

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="amount-dialog") as box:
            box.border_title = "amount"
            yield Label(self.component_name, markup=False, classes="dialog-title")
            yield FieldInput(self.amount, id="amount-input", validators=[AmountValidator()],
                             validate_on=["changed", "submitted"], placeholder="e.g. 30 g/L, 20 mM, 0.5 mol/kg")
            yield FieldMessage("Enter applies · Esc keeps the old amount · 0 removes it", id="amount-message")
            yield Static("", id="amount-preview", markup=False)

    def on_mount(self) -> None:
        self.query_one(Input).focus()
        self._show_preview(self.amount)

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        ok = self.query_one(FieldMessage).show(event.validation_result)
        self._show_preview(event.value if ok else None)

    def _show_preview(self, text: str | None) -> None:
        if self._preview is not None:
            self.query_one("#amount-preview", Static).update(self._preview(text.strip() if text else None))

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        value = validated_value(event.input, self.query_one(FieldMessage))
        if value is not None:
            self.dismiss(value)

    def action_cancel(self) -> None:
        if self._preview is not None:
            self._preview(None)
        self.dismiss(None)
