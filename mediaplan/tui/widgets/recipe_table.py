"""The recipe table: a view of Evaluation.components (the Recipe is the source of truth)."""

from __future__ import annotations

from rich.text import Text
from textual.widgets import DataTable

from mediaplan.evaluate import ComponentResult, Evaluation

#: column keys and headings
COLUMNS = (("name", "component"), ("amount", "amount"), ("molality", "mmol/kg"), ("share", "share"))
BAR_WIDTH = 4
#: widths of the columns other than the name [characters]
FIXED_WIDTHS = {"amount": 12, "molality": 8, "share": 7 + BAR_WIDTH}
_ORIGIN_MARK = {"user": "+", "override": "*", "base": " "}


def share_bar(share: float, width: int = BAR_WIDTH) -> str:
    """A bar of eighth-blocks for a fraction 0..1."""
    eighths = max(0, min(width * 8, round(share * width * 8)))
    full, part = divmod(eighths, 8)
    return ("█" * full + ("" if part == 0 else " ▏▎▍▌▋▊▉"[part])).ljust(width)


def molality_text(x: float) -> str:
    """[mmol/kg] in at most 7 characters."""
    if x >= 100:
        return f"{x:.0f}"
    if x >= 0.01:
        return f"{x:.3g}"
    return f"{x:.1g}" if x >= 1e-4 else "<0.0001"


def row_cells(c: ComponentResult, name_width: int = 30) -> dict[str, Text]:
    """The cells of one component row, as plain Text (chemical names are never markup)."""
    mark = _ORIGIN_MARK.get(c.origin, " ") + ("!" if c.hazard else " ")
    name = Text(mark + c.name, style="" if c.origin == "base" else "bold")
    name.truncate(name_width, overflow="ellipsis", pad=True)
    amount = Text(" " + c.amount, justify="right", style="" if c.origin == "base" else "bold")
    share = Text(f" {100 * c.share:4.1f}% ", justify="left")
    share.append(share_bar(c.share), style="bold")
    return {"name": name, "amount": amount, "molality": Text(" " + molality_text(c.molality_mmol_per_kg), justify="right"),
            "share": share}


class RecipeTable(DataTable):
    """One row per component (row key = component id); cells re-rendered by row and column keys."""

    DEFAULT_CSS = ""

    def __init__(self, **kw) -> None:
        super().__init__(cursor_type="row", zebra_stripes=True, cell_padding=0, **kw)
        self._ids: list[str] = []
        self._evaluation: Evaluation | None = None
        self._shown: dict[tuple[str, str], tuple[str, object]] = {}  # what each cell shows now
        self.name_width = 30

    def on_mount(self) -> None:
        self._add_columns()

    def _add_columns(self) -> None:
        for key, label in COLUMNS:
            head = Text((" " + label).rjust(FIXED_WIDTHS.get(key, 0)) if key != "name" else "  " + label)
            self.add_column(head, key=key, width=FIXED_WIDTHS.get(key, self.name_width))

    def on_resize(self) -> None:
        """Give the name column whatever the other columns leave (no sideways scrolling)."""
        rest = sum(FIXED_WIDTHS.values()) + 1  # + vertical scrollbar
        width = max(12, self.scrollable_content_region.width - rest)
        if width != self.name_width:
            self.name_width = width
            self.clear(columns=True)  # rebuild the columns and rows at the new width
            self._add_columns()
            self._ids = []
            self.show(self._evaluation)

    @property
    def selected_id(self) -> str | None:
        if not self._ids or self.cursor_row < 0 or self.cursor_row >= len(self._ids):
            return None
        return self._ids[self.cursor_row]

    def show(self, ev: Evaluation | None) -> None:
        """Show an evaluation: update cells in place when the rows are the same, else rebuild."""
        self._evaluation = ev
        comps = ev.components if ev else []
        ids = [c.id for c in comps]
        if ids == self._ids:
            for c in comps:
                for col, cell in row_cells(c, self.name_width).items():
                    key = (c.id, col)
                    if self._shown.get(key) != (cell.plain, cell.style):
                        self._shown[key] = (cell.plain, cell.style)
                        self.update_cell(c.id, col, cell)
            return
        keep = self.selected_id
        self.clear()
        self._ids = ids
        self._shown = {}
        for c in comps:
            cells = row_cells(c, self.name_width)
            self._shown.update({(c.id, k): (v.plain, v.style) for k, v in cells.items()})
            self.add_row(*(cells[k] for k, _ in COLUMNS), key=c.id)
        if keep in ids:
            self.move_cursor(row=ids.index(keep))

    def select_id(self, component_id: str) -> None:
        if component_id in self._ids:
            self.move_cursor(row=self._ids.index(component_id))
