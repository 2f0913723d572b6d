"""Keys and a few words on reading the main screen."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from mediaplan.tui.actions import ACTIONS
from mediaplan.tui.quick import StyledOnce

NOTES = (
    "Rows marked + were added to the base, * replace a base amount, - were removed from the base (struck "
    "through; x restores them), ! carry a handling caution.",
    "Notes: '!' marks a handling caution for a component; 'i' marks a note about how far the figures can be "
    "trusted (plain words; i shows the models' own words).",
    "Osmolality: non-ideal (Pitzer, Norrish, Michel, mixed by ZSR) beside the van't Hoff ideal sum.",
    "ψs is the osmotic potential of the medium; tonicity needs the cells' sap (c, conditions).",
    "Amounts: 30 g/L, 1900 mg/L, 3 % w/v, 20 mM, 0.4 mol/L, 0.5 mol/kg (per kg water); 0 removes.",
    "Ctrl+P opens the command palette: every action, and 'add NAME' / 'amount of NAME' by typing.",
    "The key bar shows the keys that fit the window; every key is listed here.",
)


def _keys(text: str) -> str:
    def one(k: str) -> str:
        if len(k) == 1 and k.isupper():
            return f"Shift+{k}"
        k = k.replace("question_mark", "?").replace("delete", "Del")
        return "Ctrl+" + k[5:].upper() if k.startswith("ctrl+") else k

    return " ".join(one(k) for k in text.split(","))


def bindings_table() -> Table:
    table = Table.grid(padding=(0, 2))
    table.add_column(style="bold", no_wrap=True)
    table.add_column()
    for a in ACTIONS:  # one line each (the title); the tooltip says more where the key is shown
        table.add_row(_keys(a.keys), a.title)
    table.add_row("Ctrl+P", "Command palette")
    table.add_row("Tab", "Move between table, panels and dialog fields")
    return table


class HelpScreen(StyledOnce, ModalScreen[None]):
    BINDINGS = [Binding("escape,question_mark,q", "close", "Close", id="help.close", tooltip="Close the help")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(classes="dialog", id="help-dialog") as box:
            box.border_title = "keys · Esc closes"
            yield Static(bindings_table())
            yield Static(Text("\n".join(NOTES), style="dim"), id="help-notes")

    def action_close(self) -> None:
        self.dismiss(None)
