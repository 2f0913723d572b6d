"""Choose a published base formulation, its strength and which of its lines the strength scales."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, OptionList, Select, Static
from textual.widgets.option_list import Option

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.recipe import DEFAULT_STRENGTH_SCOPE
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import (
    FieldInput,
    FieldMessage,
    StrengthValidator,
    parse_strength,
    validated_value,
)

NO_BASE = "-none-"
#: the strength scopes in the dialog's words (salts first: a new recipe's scope)
SCOPES = (("salts only", "salts"), ("macro salts only", "macro"), ("every line", "all"))


class BaseScreen(StyledOnce, ModalScreen[tuple[str | None, float, str] | None]):
    """Dismisses with (base id or None, strength, strength scope), or None when cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="base.cancel", tooltip="Keep the current base")]

    def __init__(self, catalog: Catalog, base: str | None, strength: float,
                 scope: str = DEFAULT_STRENGTH_SCOPE) -> None:
        super().__init__()
        self.catalog = catalog
        self.base = base
        self.strength = strength
        self.scope = scope

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="base-dialog") as box:
            box.border_title = "base formulation"
            options = [Option(Text("none: only the components I add"), id=NO_BASE)]
            for m in self._media():
                options.append(Option(Text(m.name), id=m.id))
            yield OptionList(*options, id="base-list")
            yield Static("", id="base-info", markup=False)
            with Horizontal(classes="row"):
                yield Label("strength ×", classes="field-label")
                yield FieldInput(f"{self.strength:g}", id="strength-input", validators=[StrengthValidator()],
                                 placeholder="e.g. 1 (full) or 1/2 (half)")
                scope = Select(SCOPES, value=self.scope, allow_blank=False, id="scope-select",
                               tooltip="which lines of the base the strength scales")
                scope.styles.width = 22
                yield scope
            yield FieldMessage("1 = full strength · 0.5 or 1/2 or 50 % = half", id="strength-message")
            with Horizontal(classes="buttons"):
                yield Button("Apply", variant="primary", id="base-apply")
                yield Button("Cancel", id="base-cancel")

    def on_mount(self) -> None:
        ol = self.query_one(OptionList)
        ids = [NO_BASE, *(m.id for m in self._media())]
        ol.highlighted = ids.index(self.base) if self.base in ids else 0
        ol.focus()

    def _media(self):
        """The base formulations by their display names."""
        return sorted(self.catalog.media.values(), key=lambda m: m.name.lower())

    @on(OptionList.OptionHighlighted)
    def _info(self, event: OptionList.OptionHighlighted) -> None:
        mid = event.option.id
        info = self.query_one("#base-info", Static)
        if mid == NO_BASE or mid not in self.catalog.media:
            info.update("The recipe holds only the components listed in the plan.")
            return
        m = self.catalog.media[mid]
        text = f"{len(m.lines)} components · {m.citation}"
        if m.confidence != "A":
            text += f" · confidence {m.confidence}"
        info.update(text)

    @on(OptionList.OptionSelected)
    def _selected(self) -> None:
        self.query_one("#strength-input", Input).focus()

    @on(Input.Changed, "#strength-input")
    def _strength_typed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)

    @on(Input.Submitted, "#strength-input")
    @on(Button.Pressed, "#base-apply")
    def _apply(self) -> None:
        text = validated_value(self.query_one("#strength-input", Input), self.query_one(FieldMessage))
        if text is None:
            return
        ol = self.query_one(OptionList)
        mid = ol.get_option_at_index(ol.highlighted).id if ol.highlighted is not None else NO_BASE
        scope = str(self.query_one("#scope-select", Select).value)
        self.dismiss((None if mid == NO_BASE else mid, parse_strength(text), scope))

    @on(Button.Pressed, "#base-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
