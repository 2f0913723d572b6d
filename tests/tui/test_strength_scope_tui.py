"""The terminal app: the base dialog chooses which lines the strength scales, the panel says it."""

from __future__ import annotations

import pytest

from mediaplan.files.planfile import Plan
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.session import Session
from mediaplan.tui.widgets.relations import scope_words
from tests.tui.tui_helpers import app_for, run_async, screen_text


@pytest.mark.parametrize(("strength", "scope", "said"), [
    (0.5, "salts", " (salts)"), (0.5, "macro", " (macro salts)"), (0.5, "all", " (every line)"),
    (1.0, "salts", ""), (0.5, None, "")])
def test_scope_words(strength, scope, said):
    assert scope_words(strength, scope) == said


@run_async
async def test_the_base_dialog_sets_the_scope_and_the_panel_shows_it(catalog):
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962", strength=0.5, strength_scope="all")), catalog))
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        assert "(every line)" in screen_text(app)
        await pilot.press("b")
        await pilot.pause()
        select = app.screen.query_one("#scope-select")
        assert select.value == "all"  # the dialog opens on the recipe's scope
        select.value = "salts"
        await pilot.pause()
        await pilot.click("#base-apply")
        await pilot.pause()
        r = app.session.recipe
        assert (r.base, r.strength, r.strength_scope) == ("ms1962", 0.5, "salts")
        assert "half-strength (salts) Mu" in screen_text(app)
        expected = evaluate(Recipe(base="ms1962", strength=0.5, strength_scope="salts"), catalog)
        ev = app.screen.query_one("#relations").evaluation
        assert ev.osmolality_mosmol_per_kg == pytest.approx(expected.osmolality_mosmol_per_kg, rel=1e-12)
