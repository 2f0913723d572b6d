"""The terminal app in its own words: domain field names become the app's input labels, never flags."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

from mediaplan.cli.common import FLAG_OF_FIELD
from mediaplan.medium.errors import AmountError, ConflictError, FitError, MediaplanError
from mediaplan.tui.words import (
    APP_LABELS,
    PLAIN_WORDS,
    SERIES_LABELS,
    app_label,
    in_app_words,
    without_command_lines,
)

TUI = Path(__file__).resolve().parents[2] / "mediaplan" / "tui"
#: text that sends a user to a command line: a subcommand of mediaplan, or a --flag
COMMAND_LINE = re.compile(r"\bmediaplan (calc|solve|series|fit|prep|catalog|check|diff|open|locate|reading)\b"
                          r"|(?<![\w-])--[a-z]")

#: every domain field an error may name, and what the app calls it
FIELDS = [
    ("osmoticum", "osmotica"), ("target", "target"), ("cells", "cells"), ("cells.tolerance", "isotonic band of the cells"),
    ("ratio", "osmotica"), ("hold", "osmotica"), ("link", "link (l: logit or probit)"),
    ("series.first", "first ψ"), ("series.last", "last ψ"), ("series.step", "spacing of the levels"),
    ("series.steps", "levels"), ("series.stock", "stock solution"), ("batch_volume", "batch"),
    ("stock_volume", "stock volume"), ("stock_factor", "stock strength"), ("form", "form on the shelf"),
    ("format", "sheet format"), ("trust", "which catalog entry to trust"),
    ("force", "permission to replace the file"),
]


@pytest.mark.parametrize("field, label", FIELDS)
def test_each_domain_field_has_the_apps_name(field, label):
    text = in_app_words(AmountError("cannot use it", field=field, hint="try again"))
    assert text == f"{label}: cannot use it (try again)"
    assert not COMMAND_LINE.search(text)


def test_every_field_the_command_line_maps_the_app_names_too():
    assert set(FLAG_OF_FIELD) <= set(APP_LABELS) | set(PLAIN_WORDS)


def test_a_screen_names_its_own_inputs():
    exc = MediaplanError("mannitol is named twice", field="osmoticum", hint="name two different osmotica")
    assert in_app_words(exc) == "osmotica: mannitol is named twice (name two different osmotica)"
    assert in_app_words(exc, SERIES_LABELS).startswith("osmoticum: ")


def test_the_input_that_would_settle_it_is_named_in_the_apps_words():
    exc = FitError("the counts do not say which osmoticum", field="counts.csv", asks_for="osmoticum")
    assert in_app_words(exc, SERIES_LABELS) == ("counts.csv: the counts do not say which osmoticum "
                                                "(set it in the osmoticum field)")
    # nothing in the app settles trust: no flag, no field, the hint as the domain gave it
    conflict = MediaplanError("embedded component 'x' differs", file="p.toml", field="provenance.embedded.components.x",
                              hint="choose which entry of x is trusted", asks_for="trust")
    assert in_app_words(conflict) == ("p.toml: provenance.embedded.components.x: embedded component 'x' differs "
                                      "(choose which entry of x is trusted)")


def test_a_field_read_from_a_plan_file_keeps_the_files_name():
    exc = AmountError("cannot read 'x'", file="p.toml", line=12, field="cells.osmolality")
    assert in_app_words(exc) == str(exc)


@pytest.mark.parametrize("field, words", [
    ("series.levels[3]", "level 3"),
    ("series.levels[2].plasmolysed[1]", "counts of level 2, sample 1"),
    ("series.levels[4].water_potential_mpa", "level 4"),
    ("medium.components.sucrose", "medium.components.sucrose"),  # no input for it: the domain's own name
])
def test_fields_of_the_series_levels(field, words):
    assert app_label(field) == words


@pytest.mark.parametrize("hint, kept", [
    ("save beside it under another name, then compare (mediaplan diff)",
     "save beside it under another name, then compare"),
    ("design one with: mediaplan series ... --write PLAN.toml", None),
    ("choose another name; or give --force", "choose another name"),
    ('e.g. "-0.4 MPa" to "-1.8 MPa"', 'e.g. "-0.4 MPa" to "-1.8 MPa"'),
    (None, None),
])
def test_hints_that_send_the_user_to_a_command_line_are_left_out(hint, kept):
    assert without_command_lines(hint) == kept


def test_a_save_conflict_in_the_apps_words():
    exc = ConflictError("the file changed on disk since it was opened", file="p.toml",
                        hint="save beside it under another name, then compare (mediaplan diff)")
    assert not COMMAND_LINE.search(in_app_words(exc))


def _strings(path: Path):
    """The string constants of a module that are not docstrings."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    docs = {id(n.body[0].value) for n in ast.walk(tree)
            if isinstance(n, (ast.Module, ast.ClassDef, ast.FunctionDef, ast.AsyncFunctionDef))
            and n.body and isinstance(n.body[0], ast.Expr) and isinstance(n.body[0].value, ast.Constant)}
    for node in ast.walk(tree):
        if isinstance(node, ast.Constant) and isinstance(node.value, str) and id(node) not in docs:
            yield node.lineno, node.value


def test_no_text_of_the_app_tells_the_user_to_run_a_command_line():
    found = [f"{p.name}:{line}: {text!r}" for p in sorted(TUI.rglob("*.py")) for line, text in _strings(p)
             if COMMAND_LINE.search(text)]
    assert found == []
    assert not COMMAND_LINE.search((TUI / "mediaplan.tcss").read_text(encoding="utf-8"))
