"""Pick a component from the catalog: search as you type by name, alias or formula."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Label, OptionList
from textual.widgets.option_list import Option

from mediaplan.medium.catalog import GROUP_LABELS, Catalog, Component
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput


def option_for(c: Component, present: bool) -> Option:
    t = Text(c.name, style="bold" if not present else "dim")
    if c.formula:
        t.append(f"  {c.formula}", style="italic")
    t.append(f"  · {GROUP_LABELS.get(c.group, c.group)}", style="dim")
    if present:
        t.append("  (in the recipe)", style="dim")
    return Option(t, id=c.id)


class PickerScreen(StyledOnce, ModalScreen[str | None]):
    """Dismisses with the chosen component id, or None."""

    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="picker.cancel", tooltip="Close without adding"),
        Binding("down", "focus_list", "To list", show=False, id="picker.list", tooltip="Move into the results"),
    ]

    def __init__(self, catalog: Catalog, present: set[str] = frozenset(), query: str = "") -> None:
        super().__init__()
        self.catalog = catalog
        self.present = set(present)
        self.query_text = query

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="picker-dialog") as box:
            box.border_title = "add a component"
            yield FieldInput(self.query_text, placeholder="name, alias or formula (KNO3, sucrose, BAP…)", id="picker-input")
            yield OptionList(id="picker-list")
            yield Label("", id="picker-count", markup=False)

    def on_mount(self) -> None:
        self.query_one(Input).focus()
        self._fill(self.query_text)

    def _fill(self, text: str) -> None:
        hits = self.catalog.search(text, limit=60) if text.strip() else sorted(
            self.catalog.components.values(), key=lambda c: (c.group, c.name))
        ol = self.query_one(OptionList)
        ol.clear_options()
        ol.add_options([option_for(c, c.id in self.present) for c in hits])
        if hits:
            ol.highlighted = 0
        count = f"{len(hits)} found" if text.strip() else f"{len(hits)} in the catalog"
        self.query_one("#picker-count", Label).update(
            count + " · ↓ to the list · Enter adds" if hits else f"nothing matches {text!r}: try a formula or part of a name")

    @on(Input.Changed, "#picker-input")
    def _typed(self, event: Input.Changed) -> None:
        self._fill(event.value)

    @on(Input.Submitted, "#picker-input")
    def _enter(self) -> None:
        ol = self.query_one(OptionList)
        if ol.highlighted is not None and ol.option_count:
            self.dismiss(ol.get_option_at_index(ol.highlighted).id)

    @on(OptionList.OptionSelected)
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(event.option.id)

    def action_focus_list(self) -> None:
        self.query_one(OptionList).focus()

    def action_cancel(self) -> None:
        self.dismiss(None)
