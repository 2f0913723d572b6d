"""The one table layout of the text views: columns with a header, an alignment and an optional rule.

:func:`text_table` lays out rows for a terminal (monospace, columns padded to the widest cell);
:func:`markdown_table` writes the same columns as a Markdown table. Every renderer that prints columns
goes through these two.

Layout rules of :func:`text_table` (they keep the printed output stable):

- a column is as wide as its widest cell (and its header, when the header is shown), at least
  ``min_width`` and at most ``max_width`` characters; a longer cell is cut and ends in ``cut``;
- cells are padded to the column width on the side their alignment says, except the last column
  when it is left-aligned, which is never padded (so a line ends where its text ends, unless that
  column is empty, in which case the separator before it stays);
- columns are joined by ``sep`` (or a column's own ``sep``) and every line starts with ``indent``;
- control characters in a cell are shown as escapes (:func:`mediaplan.views.safe_text.terminal`) before
  the widths are measured, and numbers are tidied (:func:`mediaplan.views.safe_text.tidy_numbers`: no
  ``-0.0000``, no ``1e+02 %``, no float noise).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from mediaplan.views.safe_text import markdown, terminal, tidy_numbers

LEFT = "left"
RIGHT = "right"


@dataclass(frozen=True)
class Column:
    """One column: ``header`` text, ``align`` (``"left"`` or ``"right"``), ``min_width`` and
    ``max_width`` [characters], the mark ``cut`` that ends a cell cut to ``max_width``, and ``sep``, the
    text in front of this column when it is not the table's separator (e.g. ``" "`` beside a ``/``)."""

    header: str = ""
    align: str = LEFT
    min_width: int = 0
    max_width: int | None = None
    cut: str = "…"
    sep: str | None = None

    def __post_init__(self) -> None:
        if self.align not in (LEFT, RIGHT):
            raise ValueError(f"align must be {LEFT!r} or {RIGHT!r}, not {self.align!r}")


def _widths(columns: Sequence[Column], rows: Sequence[Sequence[str]], header: bool) -> list[int]:
    widths = []
    for i, col in enumerate(columns):
        w = max([len(col.header) if header else 0, col.min_width, *(len(r[i]) for r in rows)])
        widths.append(min(w, col.max_width) if col.max_width is not None else w)
    return widths


def _fit(cell: str, width: int, col: Column) -> str:
    return cell if len(cell) <= width else cell[: width - len(col.cut)] + col.cut


def text_table(columns: Sequence[Column], rows: Sequence[Sequence[str]], *, header: bool = True,
               rule: str | None = None, indent: str = "", sep: str = "  ") -> list[str]:
    """The table as lines of text (no newlines).

    columns : the columns, left to right
    rows : one list of cell texts per row, as many as there are columns
    header : print the header line (and count it in the widths)
    rule : a character repeated under every header (e.g. ``"─"``), or None for no rule line
    indent : text in front of every line
    sep : text between two columns
    """
    for r in rows:
        if len(r) != len(columns):
            raise ValueError(f"a row has {len(r)} cells for {len(columns)} columns")
    rows = [[tidy_numbers(terminal(c)) for c in r] for r in rows]  # escapes first, so the columns line up
    widths = _widths(columns, rows, header)
    last = len(columns) - 1

    def line(cells: Sequence[str]) -> str:
        out = [indent]
        for i, (cell, w, col) in enumerate(zip(cells, widths, columns, strict=True)):
            if i:
                out.append(sep if col.sep is None else col.sep)
            cell = _fit(cell, w, col)
            if col.align == RIGHT:
                out.append(cell.rjust(w))
            else:
                out.append(cell if i == last else cell.ljust(w))
        return "".join(out)

    lines = []
    if header:
        lines.append(line([c.header for c in columns]))
    if rule:
        lines.append(line([rule * w for w in widths]))
    return lines + [line(r) for r in rows]


def pairs_table(pairs: Sequence[tuple[str, str]], *, indent: str = "", key_width: int = 0) -> list[str]:
    """Label and value on each line, the values lined up (``key_width``: the least label width)."""
    return text_table([Column(min_width=key_width), Column()], [list(p) for p in pairs], header=False,
                      indent=indent)


def markdown_table(columns: Sequence[Column | str], rows: Sequence[Sequence[str]]) -> list[str]:
    """The table as Markdown lines: a header row, a ``|---|`` line, one line per row; ``|`` in a cell is
    escaped, HTML and control characters too (:func:`mediaplan.views.safe_text.markdown`), and a newline
    becomes a space. Alignment is left to the Markdown reader."""
    def cell(x) -> str:
        return tidy_numbers(markdown(x)).replace("|", "\\|")

    heads = [c.header if isinstance(c, Column) else c for c in columns]
    out = ["| " + " | ".join(cell(h) for h in heads) + " |", "|" + "|".join("---" for _ in heads) + "|"]
    out += ["| " + " | ".join(cell(c) for c in r) + " |" for r in rows]
    return out
