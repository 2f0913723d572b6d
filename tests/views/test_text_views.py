"""The text views of catalog entries, plan checks and plan comparisons (layout through views/table.py)."""

from __future__ import annotations

from mediaplan.views.catalog import entry_dict, entry_text, search_rows, search_text
from mediaplan.views.check import check_line
from mediaplan.views.diff import diff_text


def test_search_lines_up_ids_names_and_formulas_and_cuts_long_names():
    rows = [{"id": "a", "name": "n" * 50, "formula": "X", "group": "salt"},
            {"id": "bbb", "name": "short", "formula": None, "group": "carbon"}]
    assert search_text(rows).splitlines() == ["a    " + "n" * 40 + "  X  salt",
                                              "bbb  " + "short".ljust(40) + "  " + " " + "  carbon"]


def test_search_of_the_bundled_catalog_finds_sucrose(catalog):
    assert any(r["id"] == "sucrose" for r in search_rows(catalog, "sucrose"))


def test_a_medium_lists_its_lines_under_their_heading_with_values_lined_up(catalog):
    text = entry_text(entry_dict(catalog, "ms1962"))
    lines = text.splitlines()
    assert lines[0].startswith("kind") and lines[0].endswith("medium")
    at = lines.index("components:")
    assert lines[at + 1].startswith("  ammonium_nitrate: 1650 mg/L")  # Murashige & Skoog 1962, Table 6
    column = max(len(k) for k in entry_dict(catalog, "ms1962")) + 2  # the longest field name, then two spaces
    assert all(ln[column - 2:column] == "  " and ln[column] != " " for ln in lines[:at])


def test_check_line_says_ok_with_warnings_or_invalid_with_the_reason():
    ok = {"path": "p.toml", "status": "ok", "reason": None, "differences": [],
          "warnings": [{"code": "ph"}, {"code": "gel"}]}
    assert check_line(ok) == "p.toml: ok (2 warnings: ph; gel)"
    bad = {**ok, "status": "invalid", "reason": "unknown component 'x'"}
    assert check_line(bad) == "p.toml: invalid: unknown component 'x'"


def test_diff_results_are_lined_up_under_their_labels():
    d = {"a": "a.toml", "b": "b.toml", "title_a": "A", "title_b": "B", "settings": [], "components": [],
         "results": [{"label": "osmolality", "text": "1 → 2 mOsm/kg (+1)"},
                     {"label": "water activity", "text": "0.99 → 0.98 (-0.01)"}]}
    lines = diff_text(d).splitlines()
    assert lines[-2:] == ["  osmolality      1 → 2 mOsm/kg (+1)", "  water activity  0.99 → 0.98 (-0.01)"]
    assert "Components: no differences" in lines
