"""Two plans side by side: the open plan (with its unsaved edits) against a plan file.

The comparison is :func:`mediaplan.tasks.compare.plan_diff` (the same one ``mediaplan diff`` prints):
each figure for both plans and its change, the settings that differ, and the components added,
removed or changed. The other plan is read with its embedded catalog entries in force, as it would be
made in the lab that wrote it.
"""

from __future__ import annotations

from types import SimpleNamespace

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Static

from mediaplan.tui.quick import StyledOnce

#: settings shown by label
SETTING_LABELS = {"volume": "batch volume", "temperature": "temperature", "base": "base formulation",
                  "strength": "strength"}


def _short(text: str | None, width: int = 28) -> str:
    text = text or "–"
    return text if len(text) <= width else text[: width - 1] + "…"


def figures_table(d: dict) -> Table:
    """Each figure in both plans and the change (B − A) in its unit."""
    table = Table(box=None, padding=(0, 1), expand=True)
    table.add_column("figure")
    table.add_column("this plan", justify="right")
    table.add_column("other plan", justify="right")
    table.add_column("change", justify="right")
    for r in d["results"]:
        fmt = _format_of(r["quantity"])
        unit = f" {r['unit']}" if r["unit"] else ""
        change = r["change"]
        sign = "+" if change > 0 else ("−" if change < 0 else "±")
        table.add_row(Text(r["label"]), _signed(fmt.format(r["a"])) + unit, _signed(fmt.format(r["b"])) + unit,
                      sign + fmt.format(abs(change)))
    return table


def _signed(text: str) -> str:
    """A typographic minus for negative figures, as the main panel shows them."""
    return "−" + text[1:] if text.startswith("-") else text


def _format_of(quantity: str) -> str:
    from mediaplan.tasks.compare import RESULTS

    return next((f for key, _, _, f in RESULTS if key == quantity), "{:.4g}")


def lines_table(d: dict) -> Table | None:
    """Settings and components that differ (None when none do)."""
    if not d["settings"] and not d["components"]:
        return None
    table = Table(box=None, padding=(0, 1), expand=True)
    table.add_column("what differs")
    table.add_column("this plan", justify="right")
    table.add_column("other plan", justify="right")
    for s in d["settings"]:
        table.add_row(Text(SETTING_LABELS.get(s["field"], s["field"])), _short(_setting(s["a"])),
                      _short(_setting(s["b"])))
    for c in d["components"]:
        mark = {"added": "+ ", "removed": "− ", "changed": "~ "}[c["change"]]
        table.add_row(Text(mark + _short(c["name"], 30)), _short(c["a"] or "not in it"), _short(c["b"] or "not in it"))
    return table


def _setting(value) -> str:
    if value is None:
        return "none"
    return f"{value:g}" if isinstance(value, float) else str(value)


class CompareScreen(StyledOnce, ModalScreen[None]):
    """The open plan against another plan file (read only; Esc closes)."""

    BINDINGS = [Binding("escape,q", "close", "Close", id="compare.close", tooltip="Back to the recipe")]

    def __init__(self, diff: dict, other_label: str) -> None:
        super().__init__()
        self.diff = diff
        self.other_label = other_label

    def compose(self) -> ComposeResult:
        d = self.diff
        with Vertical(classes="dialog", id="compare-dialog") as box:
            box.border_title = "compare plans"
            head = Text()
            head.append("this plan  ", style="bold")
            head.append(_short(d["title_a"] or "untitled", 60) + "\n")
            head.append("other plan ", style="bold")
            head.append(_short(d["title_b"] or "untitled", 40) + f"  ({_short(self.other_label, 30)})")
            yield Static(head, id="compare-head")
            with VerticalScroll(id="compare-body"):
                yield Static(figures_table(d), id="compare-figures")
                lines = lines_table(d)
                if lines is None:
                    yield Static("Same medium: same settings and components (titles and notes aside).",
                                 id="compare-lines")
                else:
                    yield Static(lines, id="compare-lines")
            yield Static("+ only in the other · − only in this one · ~ amount differs · Esc closes",
                         classes="hint", id="compare-hint")

    def on_mount(self) -> None:
        self.query_one("#compare-body").focus()

    def action_close(self) -> None:
        self.dismiss(None)


def compare_with(session, path) -> tuple[dict, list[str]]:
    """The open plan (unsaved edits included) against the plan at ``path``: (diff, notes about the other
    plan's catalog entries). Raises MediaplanError for a plan that cannot be read or evaluated."""
    from mediaplan.files.sharing import read_plan
    from mediaplan.tasks.compare import plan_diff

    other, other_catalog, notes = read_plan(path, session.catalog)
    this = SimpleNamespace(recipe=session.recipe, title=session.plan.title, path=session.plan.path)
    return plan_diff(this, session.catalog, other, other_catalog), notes
