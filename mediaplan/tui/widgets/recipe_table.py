"""The recipe table: a view of Evaluation.components (the Recipe is the source of truth).

A Line API widget: each row is one ``Strip`` built straight from ``Segment``s with styles taken from
the component classes below (so the theme and the stylesheet still colour it). Strips are cached per
(row content, zebra parity, cursor); an edit that changes every row's share re-renders each row in
microseconds instead of laying out Rich renderables cell by cell.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, ClassVar, NamedTuple

from rich.cells import cell_len, set_cell_size
from rich.segment import Segment
from rich.style import Style
from textual import events
from textual.binding import Binding, BindingType
from textual.geometry import Region, Size
from textual.message import Message
from textual.scroll_view import ScrollView
from textual.strip import Strip

from mediaplan.tui.session import RemovedLine

if TYPE_CHECKING:  # the engine is imported after the first paint (mediaplan.tui.warm)
    from mediaplan.medium.evaluate import ComponentResult, Evaluation
    from mediaplan.medium.recipe import Line

#: column keys and headings
COLUMNS = (("name", "component"), ("amount", "amount"), ("molality", "mmol/kg"), ("share", "share"))
BAR_WIDTH = 4
#: widths of the columns other than the name [characters]
FIXED_WIDTHS = {"amount": 12, "molality": 8, "share": 7 + BAR_WIDTH}
#: when the table is narrower than this [characters], it leaves out the molality and the bar, so that
#: names stay readable (the detail line under the table gives the figures of the selected row)
COMPACT_BELOW = 60
COMPACT_WIDTHS = {"amount": 12, "share": 7}
_ORIGIN_MARK = {"user": "+", "override": "*", "base": " "}
#: strips kept per table before the cache is emptied (rows x parity x cursor, many edits' worth)
_CACHE_LIMIT = 2048


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


def fit_left(text: str, width: int) -> str:
    """``text`` in exactly ``width`` cells: padded on the right, or cut with an ellipsis."""
    if cell_len(text) > width:
        return set_cell_size(text, width - 1) + "…"
    return set_cell_size(text, width)


def fit_right(text: str, width: int) -> str:
    """``text`` right-aligned in exactly ``width`` cells (cut with an ellipsis when too long)."""
    n = cell_len(text)
    return fit_left(text, width) if n >= width else " " * (width - n) + text


class RowText(NamedTuple):
    """What one row shows, as plain strings (chemical names like ``K[+]`` are never markup)."""

    name: str
    amount: str
    numbers: str  # molality and share percent
    bar: str
    emphasis: bool  # amounts the user set are bold
    removed: bool = False  # a base line the user removed: struck through, restorable


def row_text(c: ComponentResult, name_width: int = 30, *, compact: bool = False) -> RowText:
    """The cells of one component row, each padded to its column width (compact: no molality, no bar)."""
    mark = _ORIGIN_MARK.get(c.origin, " ") + ("!" if c.hazard else " ")
    pct = 100 * c.share
    share = f" {pct:4.1f}% " if round(pct, 1) < 100 else "  100% "  # always 7 cells
    amount = fit_right(" " + c.amount, FIXED_WIDTHS["amount"])
    if compact:
        return RowText(fit_left(mark + c.name, name_width), amount, share, "", c.origin != "base")
    numbers = fit_right(" " + molality_text(c.molality_mmol_per_kg), FIXED_WIDTHS["molality"]) + share
    return RowText(fit_left(mark + c.name, name_width), amount, numbers, share_bar(c.share), c.origin != "base")


#: what the share column shows while the figures are being computed
PENDING_MARK = "…"


def pending_row_text(line: Line, name_width: int = 30, *, compact: bool = False) -> RowText:
    """A recipe line before its figures are computed: its name and amount, ``…`` for the figures."""
    widths = COMPACT_WIDTHS if compact else FIXED_WIDTHS
    rest = sum(widths.values()) - widths["amount"]
    mark = _ORIGIN_MARK.get(line.origin, " ") + " "
    numbers = fit_right(PENDING_MARK + " ", rest - (0 if compact else BAR_WIDTH))
    return RowText(fit_left(mark + line.component.name, name_width),
                   fit_right(" " + line.amount.text, widths["amount"]), numbers,
                   "" if compact else " " * BAR_WIDTH, line.origin != "base")


def removed_row_text(line: RemovedLine, name_width: int = 30, *, compact: bool = False) -> RowText:
    """A removed base line: marked ``-`` (not by the strike alone), its base amount, and the word removed."""
    widths = COMPACT_WIDTHS if compact else FIXED_WIDTHS
    rest = sum(widths.values()) - widths["amount"]
    numbers = fit_right("removed" if compact else "removed ", rest - (0 if compact else BAR_WIDTH))
    return RowText(fit_left("- " + line.name, name_width), fit_right(" " + line.amount, widths["amount"]),
                   numbers, "" if compact else " " * BAR_WIDTH, False, removed=True)


def header_text(name_width: int, *, compact: bool = False) -> str:
    widths = COMPACT_WIDTHS if compact else FIXED_WIDTHS
    return fit_left("  " + COLUMNS[0][1], name_width) + "".join(
        fit_right(" " + label, widths[key]) for key, label in COLUMNS[1:] if key in widths)


class RecipeTable(ScrollView, can_focus=True):
    """One row per component, a fixed header line, a row cursor; no sideways scrolling."""

    BINDINGS: ClassVar[list[BindingType]] = [
        Binding("enter", "select_cursor", "Select", show=False),
        Binding("up", "cursor_up", "Cursor up", show=False),
        Binding("down", "cursor_down", "Cursor down", show=False),
        Binding("pageup", "page_up", "Page up", show=False),
        Binding("pagedown", "page_down", "Page down", show=False),
        Binding("home,ctrl+home", "first", "First row", show=False),
        Binding("end,ctrl+end", "last", "Last row", show=False),
    ]

    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "recipe-table--header",
        "recipe-table--cursor",
        "recipe-table--even-row",
        "recipe-table--odd-row",
    }

    DEFAULT_CSS = """
    RecipeTable {
        background: $surface;
        color: $foreground;
        overflow-x: hidden;
        overflow-y: auto;
        &:focus {
            background-tint: $foreground 5%;
            & > .recipe-table--cursor {
                background: $block-cursor-background;
                color: $block-cursor-foreground;
                text-style: $block-cursor-text-style;
            }
            & > .recipe-table--header {
                background-tint: $foreground 5%;
            }
        }
        &:dark > .recipe-table--even-row {
            background: $surface-darken-1 40%;
        }
        & > .recipe-table--header {
            text-style: bold;
            background: $panel;
            color: $foreground;
        }
        &:ansi > .recipe-table--header {
            background: ansi_bright_blue;
            color: ansi_default;
        }
        & > .recipe-table--even-row {
            background: $surface-lighten-1 50%;
        }
        & > .recipe-table--cursor {
            background: $block-cursor-blurred-background;
            color: $block-cursor-blurred-foreground;
            text-style: $block-cursor-blurred-text-style;
        }
    }
    """

    @dataclass
    class RowHighlighted(Message):
        """The cursor moved to another row (or the rows under it changed)."""

        table: RecipeTable
        cursor_row: int
        component_id: str | None

        @property
        def control(self) -> RecipeTable:
            return self.table

    @dataclass
    class RowSelected(Message):
        """Enter, or a click on the row under the cursor: edit this component."""

        table: RecipeTable
        cursor_row: int
        component_id: str

        @property
        def control(self) -> RecipeTable:
            return self.table

    def __init__(self, **kw) -> None:
        super().__init__(**kw)
        self._ids: list[str] = []
        self._rows: list[RowText] = []
        self._evaluation: Evaluation | None = None
        self._pending: list[Line] = []
        self._removed: list[RemovedLine] = []
        self.cursor_row = 0
        self.name_width = 30
        self.compact = False
        self._highlighted: tuple[int, str | None] = (0, None)  # last announced (row, id)
        self._strips: dict[tuple, Strip] = {}
        self._strip_basis: tuple = ()  # (width, styles) the cached strips were made for
        self._styles: dict[tuple[int, bool], tuple[Style, Style]] = {}
        self._header_style = Style()

    # ---- data ---------------------------------------------------------------------------
    @property
    def selected_id(self) -> str | None:
        if 0 <= self.cursor_row < len(self._ids):
            return self._ids[self.cursor_row]
        return None

    def show(self, ev: Evaluation | None, removed: list[RemovedLine] | None = None, *,
             pending: list[Line] | None = None) -> None:
        """Show an evaluation (and the base lines the plan removed); only rows whose text changed are
        repainted. Without an evaluation, ``pending`` lines (the recipe's, while its figures are being
        computed) are shown with their amounts and no figures."""
        self._evaluation = ev
        self._pending = list(pending or []) if ev is None else []
        if removed is not None:
            self._removed = list(removed)
        comps = ev.components if ev else []
        ids = [c.id for c in comps]
        rows = [row_text(c, self.name_width, compact=self.compact) for c in comps]
        if self._pending:
            ids = [ln.component.id for ln in self._pending]
            rows = [pending_row_text(ln, self.name_width, compact=self.compact) for ln in self._pending]
        for line in self._removed:
            at = ids.index(line.after) + 1 if line.after in ids else 0
            ids.insert(at, line.id)
            rows.insert(at, removed_row_text(line, self.name_width, compact=self.compact))
        if ids == self._ids:
            changed = [i for i, (old, new) in enumerate(zip(self._rows, rows, strict=True)) if old != new]
            self._rows = rows
            if changed:  # one region from the first to the last changed row (line 0 is the header)
                self.refresh_lines(changed[0] + 1, changed[-1] - changed[0] + 1)
            return
        keep = self.selected_id
        self._ids, self._rows = ids, rows
        widths = COMPACT_WIDTHS if self.compact else FIXED_WIDTHS
        self.virtual_size = Size(self.name_width + sum(widths.values()), len(rows) + 1)
        self.cursor_row = ids.index(keep) if keep in ids else min(self.cursor_row, max(len(ids) - 1, 0))
        self.refresh()
        self._cursor_moved()

    @property
    def selected_is_removed(self) -> bool:
        """The cursor is on a base line the plan removed."""
        return any(line.id == self.selected_id for line in self._removed)

    def select_id(self, component_id: str) -> None:
        if component_id in self._ids:
            self.move_cursor(self._ids.index(component_id))

    def move_cursor(self, row: int, *, scroll: bool = True) -> None:
        """Put the cursor on ``row`` (clamped to the rows there are) and scroll it into view."""
        row = max(0, min(row, len(self._ids) - 1))
        if row != self.cursor_row:
            self.refresh_line(self.cursor_row + 1)
            self.refresh_line(row + 1)
            self.cursor_row = row
        if scroll:
            self._scroll_to_cursor()
        self._cursor_moved()

    def _cursor_moved(self) -> None:
        now = (self.cursor_row, self.selected_id)
        if now != self._highlighted:
            self._highlighted = now
            self.post_message(self.RowHighlighted(self, *now))

    @property
    def _page(self) -> int:
        """Rows that fit below the header."""
        return max(1, self.scrollable_content_region.height - 1)

    def _scroll_to_cursor(self) -> None:
        top = round(self.scroll_y)
        if self.cursor_row < top:
            self.scroll_to(y=self.cursor_row, animate=False)
        elif self.cursor_row >= top + self._page:
            self.scroll_to(y=self.cursor_row - self._page + 1, animate=False)

    def on_resize(self) -> None:
        """Give the name column whatever the other columns leave (no sideways scrolling)."""
        compact = self.size.width < COMPACT_BELOW
        rest = sum((COMPACT_WIDTHS if compact else FIXED_WIDTHS).values()) + 1  # 1: the vertical scrollbar
        width = max(12, self.size.width - rest)
        if (width, compact) != (self.name_width, self.compact):
            self.name_width, self.compact = width, compact
            self._ids = []  # re-cut every name at the new width
            self.show(self._evaluation, pending=self._pending)
        self._scroll_to_cursor()

    # ---- keys and mouse ---------------------------------------------------------------------
    def action_cursor_up(self) -> None:
        self.move_cursor(self.cursor_row - 1)

    def action_cursor_down(self) -> None:
        self.move_cursor(self.cursor_row + 1)

    def action_page_up(self) -> None:
        self._page_by(-self._page)

    def action_page_down(self) -> None:
        self._page_by(self._page)

    def _page_by(self, rows: int) -> None:
        """Scroll a page and move the cursor as far, so it keeps its place on the screen."""
        self.scroll_to(y=round(self.scroll_y) + rows, animate=False)
        self.move_cursor(self.cursor_row + rows)

    def action_first(self) -> None:
        self.move_cursor(0)

    def action_last(self) -> None:
        self.move_cursor(len(self._ids) - 1)

    def action_select_cursor(self) -> None:
        if (cid := self.selected_id) is not None:
            self.post_message(self.RowSelected(self, self.cursor_row, cid))

    def on_click(self, event: events.Click) -> None:
        """A click moves the cursor to the row; a click on the cursor's row selects it."""
        offset = event.get_content_offset(self)
        if offset is None or offset.y < 1:
            return
        row = round(self.scroll_y) + offset.y - 1
        if row >= len(self._ids):
            return
        event.stop()
        if row == self.cursor_row:
            self.action_select_cursor()
        else:
            self.move_cursor(row)

    # ---- rendering ------------------------------------------------------------------------
    def render_lines(self, crop: Region) -> list[Strip]:
        """Take the row styles from the component classes once per render."""
        get = self.get_component_rich_style
        base = self.rich_style
        parity = {0: get("recipe-table--even-row"), 1: get("recipe-table--odd-row")}
        cursor = get("recipe-table--cursor")
        bold = Style(bold=True)
        styles = {}
        for p, row_style in parity.items():
            for on in (False, True):
                s = row_style + cursor if on else row_style
                styles[p, on] = (s, s + bold)
        basis = (self.size.width, base, tuple(styles.values()), get("recipe-table--header"))
        if basis != self._strip_basis:
            self._strip_basis, self._styles, self._header_style = basis, styles, basis[-1]
            self._strips.clear()
        return super().render_lines(crop)

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        if y == 0:
            return self._strip(("header", self.name_width, self.compact), width)
        i = y - 1 + round(self.scroll_y)
        if i >= len(self._rows):
            return Strip.blank(width, self.rich_style)
        return self._strip((self._rows[i], i % 2, i == self.cursor_row), width)

    def _strip(self, key: tuple, width: int) -> Strip:
        strip = self._strips.get(key)
        if strip is None:
            if len(self._strips) > _CACHE_LIMIT:
                self._strips.clear()
            strip = self._strips[key] = self._build(key, width)
        return strip

    def _build(self, key: tuple, width: int) -> Strip:
        if key[0] == "header":
            style = self._header_style
            return Strip([Segment(header_text(self.name_width, compact=self.compact), style)]
                         ).adjust_cell_length(width, style)
        row, parity, on = key
        plain, bold = self._styles[parity, on]
        strong = bold if row.emphasis else plain
        if row.removed:
            struck = plain + Style(strike=True, dim=True)
            segments = [Segment(row.name[:2], plain), Segment(row.name[2:], struck), Segment(row.amount, struck),
                        Segment(row.numbers, plain + Style(italic=True)), Segment(row.bar, plain)]
            return Strip(segments).adjust_cell_length(width, plain)
        segments = [Segment(row.name, strong), Segment(row.amount, strong), Segment(row.numbers, plain),
                    Segment(row.bar, bold)]
        return Strip(segments).adjust_cell_length(width, plain)
