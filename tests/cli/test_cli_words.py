"""The domain names fields in its own words; the command line names its flags."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from mediaplan.cli.common import FLAG_OF_FIELD, in_cli_words
from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError, MediaplanError

PACKAGE = Path(__file__).resolve().parents[2] / "mediaplan"
BELOW_FRONT_ENDS = ["thermo", "medium", "tasks", "files", "views"]
# a flag inside a string literal: "--with", '--factor micro=100', f"--form {x}"
FLAG_IN_TEXT = re.compile(r"""(?:field|hint)=f?["'][^"']*(?<![\w-])--[a-z][a-z-]+""")


@pytest.mark.parametrize("layer", BELOW_FRONT_ENDS)
def test_no_message_below_the_front_ends_names_a_flag(layer):
    hits = []
    for path in sorted((PACKAGE / layer).rglob("*.py")):
        for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1):
            if FLAG_IN_TEXT.search(line):
                hits.append(f"{path.relative_to(PACKAGE)}:{n}: {line.strip()}")
    assert not hits, "\n".join(hits)


@pytest.mark.parametrize(("field", "flag"), sorted(FLAG_OF_FIELD.items()))
def test_every_domain_field_maps_to_its_flag(field, flag):
    assert in_cli_words(AmountError("bad", field=field)).field == flag


def test_a_field_with_a_detail_keeps_the_detail():
    assert in_cli_words(AmountError("bad", field="form kno3=x")).field == "--form kno3=x"
    assert in_cli_words(AmountError("bad", field="stock_factor micro")).field == "--factor micro"


def test_a_field_read_from_a_file_keeps_the_file_name_for_it():
    exc = in_cli_words(AmountError("bad", file="plan.toml", line=4, field="target"))
    assert exc.field == "target"


def test_what_would_settle_it_is_named_as_a_flag():
    exc = in_cli_words(MediaplanError("which entry?", file="p.toml", hint="choose one", asks_for="trust"))
    assert str(exc).endswith("(choose one; give it with --trust)")
    exc = in_cli_words(MediaplanError("which osmoticum?", asks_for="osmoticum"))
    assert str(exc).endswith("(give it with --with)")


@pytest.mark.parametrize(("argv", "flag"), [
    (["series", "--from", "-0.2 MPa", "--to", "-0.2 MPa", "--steps", "4", "--with", "mannitol"], "--to"),
    (["series", "--from", "-0.2 MPa", "--to", "-1 MPa", "--steps", "1", "--with", "mannitol"], "--steps"),
    (["series", "--from", "-0.2 MPa", "--to", "-1 MPa", "--steps", "4", "--with", "no_such_thing"], "--with"),
    (["prep", "--volume", "1 L", "--base", "ms1962", "--factor", "macro=10"], "--factor"),
])
def test_the_command_line_names_the_flag_to_fix(argv, flag, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and f"{flag}:" in err, err
