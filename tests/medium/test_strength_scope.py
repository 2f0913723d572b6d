"""What the strength of a base formulation scales: every line, the mineral salts, or the macro salts."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError
from mediaplan.medium.recipe import STRENGTH_SCOPES, Recipe, strength_note

SALT_GROUPS = {"macro", "salt", "micro", "iron"}


@pytest.mark.parametrize("scope", list(STRENGTH_SCOPES))
def test_each_scope_halves_its_lines_and_keeps_the_rest(catalog, scope):
    full = {ln.component.id: ln for ln in Recipe(base="ms1962").lines(catalog)}
    half = Recipe(base="ms1962", strength=0.5, strength_scope=scope).lines(catalog)
    groups = STRENGTH_SCOPES[scope]
    for ln in half:
        inside = groups is None or ln.component.group in groups
        assert ln.scaled == inside
        expected = full[ln.component.id].amount.value * (0.5 if inside else 1.0)
        assert ln.amount.value == pytest.approx(expected, rel=1e-12)


def test_salts_scope_leaves_the_sucrose_of_ms_as_published(catalog):
    lines = {ln.component.id: ln for ln in Recipe(base="ms1962", strength=0.5, strength_scope="salts").lines(catalog)}
    assert lines["sucrose"].amount.value == pytest.approx(30.0)  # 30 g/L in MS (Murashige & Skoog 1962)
    assert not lines["sucrose"].scaled and lines["potassium_nitrate"].scaled
    assert {ln.component.group for ln in lines.values() if ln.scaled} <= SALT_GROUPS


def test_a_new_recipe_scales_the_salts_and_scope_all_every_line(catalog):
    assert Recipe(base="ms1962", strength=0.5).strength_scope == "salts"
    r = Recipe(base="ms1962", strength=0.5, strength_scope="all")
    assert all(ln.scaled for ln in r.lines(catalog))
    assert "alike" in strength_note(r, catalog)
    assert strength_note(Recipe(base="ms1962"), catalog) is None


def test_an_unknown_scope_is_refused():
    with pytest.raises(AmountError, match="strength scope"):
        Recipe(base="ms1962", strength=0.5, strength_scope="sugars")


def test_the_command_line_names_the_scope_it_used(capsys):
    assert main(["calc", "--base", "ms1962", "--strength", "0.5", "--strength-scope", "salts", "--json"]) == 0
    out, err = capsys.readouterr()
    assert json.loads(out)["strength"] == 0.5
    assert "note: strength 0.5 of ms1962 scales 14 of its 20 lines (the mineral salts" in err  # 14 salts, 6 organics
