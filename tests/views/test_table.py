"""The one table helper of the text views: widths, alignment, rule, cutting, Markdown."""

from __future__ import annotations

import pytest

from mediaplan.views.table import RIGHT, Column, markdown_table, pairs_table, text_table


def test_columns_are_as_wide_as_their_widest_cell_or_header():
    lines = text_table([Column("name"), Column("g/L", RIGHT)], [["sucrose", "30"], ["KNO3", "1.9"]])
    assert lines == ["name     g/L",
                     "sucrose   30",
                     "KNO3     1.9"]


def test_rule_under_every_header_and_indent():
    lines = text_table([Column("a", RIGHT), Column("bb", RIGHT)], [["1", "22"]], rule="─", indent="  ")
    assert lines == ["  a  bb", "  ─  ──", "  1  22"]


def test_last_left_column_is_not_padded_but_keeps_its_separator():
    lines = text_table([Column(), Column()], [["x", "long text"], ["yy", ""]], header=False)
    assert lines == ["x   long text", "yy  "]  # the empty last cell keeps the separator, as the group bars print


def test_a_cell_longer_than_max_width_is_cut_with_its_mark():
    cols = [Column("component", max_width=8), Column("n", RIGHT)]
    lines = text_table(cols, [["magnesium sulfate", "1"], ["agar", "2"]])
    assert lines[1] == "magnesi…  1" and len(lines[1]) == len(lines[2])
    plain = text_table([Column(max_width=4, cut=""), Column()], [["abcdefg", "x"]], header=False)
    assert plain == ["abcd  x"]


def test_min_width_keeps_a_column_from_shrinking():
    assert pairs_table([("id", "1")], key_width=6, indent=" ") == [" id      1"]
    assert text_table([Column(align=RIGHT, min_width=5)], [["3.1"]], header=False) == ["  3.1"]


def test_a_row_with_the_wrong_number_of_cells_is_refused():
    with pytest.raises(ValueError, match="2 cells for 3 columns"):
        text_table([Column(), Column(), Column()], [["a", "b"]])
    with pytest.raises(ValueError, match="align"):
        Column("x", "centre")


def test_no_rows_gives_the_header_and_rule_only():
    assert text_table([Column("level", RIGHT), Column("ψ MPa", RIGHT)], [], rule="─") == [
        "level  ψ MPa", "─────  ─────"]


def test_markdown_escapes_bars_and_newlines():
    lines = markdown_table([Column("a"), "b"], [["x|y", "two\nlines"]])
    assert lines == ["| a | b |", "|---|---|", "| x\\|y | two lines |"]


def test_a_column_can_have_its_own_separator():
    cols = [Column(align=RIGHT), Column(sep=" "), Column(sep=" ")]
    assert text_table(cols, [["12", "/", "40"], ["3", "/", "7"]], header=False) == ["12 / 40", " 3 / 7"]
