"""The two whole tasks of the app, by keyboard only, at 80x24, asserting on the rendered text (each screen on
the way is also tested at 140x45 in test_tui_sizes.py; the whole tasks run at the smallest size only, to keep
the suite's time).

A technician: new plan -> base and strength -> an addition -> a target -> the projection -> the preparation
sheet -> save -> reopen. A physiologist: a series designed -> counts entered -> fitted -> kept as the cells'
reference -> an isotonic wash solved against it. Every figure checked is recomputed here by the engine.
"""

from __future__ import annotations

import re

import pytest
from tui_helpers import DEMO_COUNTS, SIZES, app_for, run_async, screen_text, settle, type_text

from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.dialogs.amount import AmountScreen
from mediaplan.tui.dialogs.files import PathScreen
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session
from mediaplan.tui.widgets.relations import figures


async def retype(pilot, text: str) -> None:
    """Clear the focused field (Ctrl+U from its end) and type ``text``."""
    await pilot.press("end", "ctrl+u")
    await type_text(pilot, text)


def assert_figures_shown(app, catalog) -> None:
    """The panel's osmolality and potential are those of the plan's recipe, as the engine gives them."""
    want = figures(evaluate(app.session.recipe, catalog, cell_reference_mosmol=app.session.cell_reference_mosmol()))
    text = screen_text(app)
    assert re.search(rf"mOsm/kg +{re.escape(want['osmolality'])}\b", text), (want, text)
    assert re.search(rf"ψs MPa +{re.escape(want['potential_mpa'])}\b", text), (want, text)


@run_async
async def test_technician_builds_solves_prepares_saves_and_reopens_by_keys(catalog, tmp_path):
    from mediaplan.tui.screens.prep import PrepScreen
    from mediaplan.tui.screens.projection import ProjectionScreen
    from mediaplan.tui.screens.target import TargetScreen

    app = app_for(Session.new(catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        # base and strength: the list has the focus; down to MS, Enter moves to the strength, Enter applies
        await pilot.press("b")
        await pilot.pause()
        listing = app.screen.query_one("#base-list")
        for _ in range(listing.option_count):
            if listing.get_option_at_index(listing.highlighted).id == "ms1962":
                break
            await pilot.press("down")
        await pilot.press("enter")
        await retype(pilot, "1/2")
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        assert app.session.recipe.base == "ms1962" and app.session.recipe.strength == 0.5
        assert "half-strength" in screen_text(app)
        assert_figures_shown(app, catalog)
        # an addition through the picker and the amount dialog
        await pilot.press("a")
        await type_text(pilot, "sucrose")
        await pilot.press("enter")
        assert isinstance(app.screen, AmountScreen)
        await retype(pilot, "20 g/L")
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.session.recipe.amount_of("sucrose").text == "20 g/L"
        assert_figures_shown(app, catalog)
        # a target: Enter solves, the Apply button takes the focus, Enter applies
        await pilot.press("t")
        await pilot.pause()
        assert isinstance(app.screen, TargetScreen)
        await retype(pilot, "-0.9 MPa")
        await pilot.press("enter")
        await settle(app, pilot)
        assert re.search(r"ψs -?\d\.\d{3} → -0\.900 MPa", screen_text(app))  # the solver's answer, shown
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen) and app.session.recipe.amount_of("mannitol") is not None
        assert figures(evaluate(app.session.recipe, catalog))["potential_mpa"] == "-0.900"
        assert_figures_shown(app, catalog)
        # the projection after autoclaving: Enter keeps the default settings in the plan
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, ProjectionScreen)
        await settle(app, pilot)
        assert "autoclav" in screen_text(app)
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen) and app.session.plan.projection is not None
        # the preparation sheet, built in a worker; Escape goes back
        await pilot.press("m")
        await settle(app, pilot)
        assert isinstance(app.screen, PrepScreen)
        assert "ammonium nitrate" in screen_text(app)  # the sheet's first line
        for _ in range(20):  # PageDown pages through the sheet to the additions
            if "mannitol" in screen_text(app):
                break
            await pilot.press("pagedown")
            await pilot.pause()
        assert "mannitol" in screen_text(app)
        await pilot.press("escape")
        await settle(app, pilot)
        # save: a new plan asks where, with a name made from its title; Enter takes it
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, PathScreen)
        await retype(pilot, str(tmp_path / "technician.toml"))
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen) and not app.session.dirty
        assert "technician.toml" in screen_text(app).splitlines()[0]
        saved = app.session.recipe
        # reopen it: o, the path, Enter
        await pilot.press("o")
        await pilot.pause()
        assert isinstance(app.screen, PathScreen)
        await retype(pilot, str(tmp_path / "technician.toml"))
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        assert app.session.recipe == planfile.read(tmp_path / "technician.toml", catalog=catalog).recipe == saved
        assert_figures_shown(app, catalog)


@run_async
async def test_physiologist_designs_counts_fits_keeps_and_solves_an_isotonic_wash_by_keys(catalog):
    from mediaplan.tui.screens.plasmolysis import CountsScreen, SeriesScreen
    from mediaplan.tui.screens.target import TargetScreen

    app = app_for(Session(Plan(recipe=Recipe(volume="50 mL"), title="Wash (invented)"), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.pause()
        await pilot.press("p")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, SeriesScreen)
        await pilot.press("d")
        await settle(app, pilot)
        assert len(screen.series.levels) == 8
        # counts: Enter on a level opens its field; Enter keeps them and the cursor moves to the next level
        for counts in DEMO_COUNTS:
            await pilot.press("enter")
            await pilot.pause()
            assert isinstance(app.screen, CountsScreen)
            await retype(pilot, ", ".join(f"{k}/{n}" for k, n in counts))
            await pilot.press("enter")
            await pilot.pause()
        assert [lv.counts for lv in screen.series.levels] == [list(c) for c in DEMO_COUNTS]
        await pilot.press("f")
        await settle(app, pilot)
        assert screen.fit is not None and "incipient plasmolysis (50 %)" in screen_text(app)
        await pilot.press("k")
        await settle(app, pilot)
        await pilot.press("escape")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        reference = app.session.cell_reference_mosmol()
        assert reference == pytest.approx(screen.fit.osmolality_50_mosmol_per_kg, abs=0.05)  # kept to 0.1
        # the isotonic wash: a target of "isotonic" against the fitted reference
        await pilot.press("t")
        await pilot.pause()
        assert isinstance(app.screen, TargetScreen)
        await retype(pilot, "isotonic")
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MainScreen)
        ev = evaluate(app.session.recipe, catalog, cell_reference_mosmol=reference)
        assert ev.tonicity["class"] == "isotonic"
        assert "isotonic" in screen_text(app)
        assert_figures_shown(app, catalog)
