"""Recent plans in the open dialog, and two plans side by side, driven by keyboard at both sizes."""

from __future__ import annotations

import pytest

from mediaplan.files import planfile
from mediaplan.files.catalog import get_catalog
from mediaplan.files.planfile import Plan
from mediaplan.files.recent import recent_plans
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.dialogs.files import PathScreen
from mediaplan.tui.screens.compare import CompareScreen
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session
from tests.tui.tui_helpers import SIZE_IDS, SIZES, app_for, run_async, screen_lines


def _write(path, recipe, title):
    planfile.write(Plan(recipe=recipe, title=title), path)
    return path


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
@run_async
async def test_a_plan_saved_once_is_offered_first_when_opening(tmp_path, size):
    cat = get_catalog()
    first = _write(tmp_path / "wash.toml", Recipe().with_amount("mannitol", "0.5 mol/L"), "Wash (invented)")
    second = _write(tmp_path / "sub" / "other.toml" if (tmp_path / "sub").mkdir() is None else None,
                    Recipe().with_amount("sucrose", "30 g/L"), "Other (invented)")
    app = app_for(Session.open(first, cat))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        assert recent_plans() == [first.resolve()]  # opening the app on a plan records it
        app._open(second)
        await pilot.pause()
        assert recent_plans()[0] == second.resolve()
        await pilot.press("o")
        await pilot.pause()
        assert isinstance(app.screen, PathScreen)
        text = "\n".join(screen_lines(app))
        assert "recent plans" in text and "wash.toml" in text
        assert "other.toml  (" not in text  # the plan that is open is not offered again
        await pilot.press("tab")  # from the name field to the recent list
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert app.session.plan.path == first
        assert app.session.recipe.amount_of("mannitol").text == "0.5 mol/L"


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
@run_async
async def test_compare_shows_both_plans_figures_and_what_differs(tmp_path, size):
    cat = get_catalog()
    mine = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    other_recipe = Recipe(base="ms1962").with_amount("sucrose", "20 g/L").with_amount("mannitol", "0.1 mol/kg")
    other = _write(tmp_path / "other.toml", other_recipe, "Other medium (invented)")
    app = app_for(Session(Plan(recipe=mine, title="Mine (invented)"), cat))
    async with app.run_test(size=size) as pilot:
        await pilot.press("v")
        await pilot.pause()
        assert isinstance(app.screen, PathScreen)
        for ch in str(other):
            await pilot.press(ch if ch != "/" else "slash")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, CompareScreen)
        lines = screen_lines(app)
        text = "\n".join(lines)
        ea, eb = evaluate(mine, cat), evaluate(other_recipe, cat)
        # both plans' figures as evaluate gives them, and the change between them
        assert f"{ea.osmolality_mosmol_per_kg:.1f} mOsm/kg" in text
        assert f"{eb.osmolality_mosmol_per_kg:.1f} mOsm/kg" in text
        assert f"+{eb.osmolality_mosmol_per_kg - ea.osmolality_mosmol_per_kg:.1f}" in text
        assert f"−{abs(ea.osmotic_potential_mpa):.4f} MPa" in text
        # what differs: sucrose changed, mannitol only in the other plan
        assert any("~ sucrose" in ln and "30 g/L" in ln and "20 g/L" in ln for ln in lines)
        assert any("+ " in ln and "annitol" in ln and "not in it" in ln for ln in lines)
        assert all(len(ln) <= size[0] for ln in lines)
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)


@run_async
async def test_compare_with_a_broken_plan_says_so_and_stays(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[medium\n")
    app = app_for(Session(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L")), get_catalog()))
    async with app.run_test(size=SIZES[0]) as pilot:
        app.get_screen("main")._compare_with(bad)
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert any("bad.toml" in str(n.message) for n in app._notifications)
    assert bad.read_text() == "[medium\n"


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
@run_async
async def test_the_panel_shows_the_95_percent_interval_of_the_budget(size):
    from mediaplan.tasks.uncertainty import budget

    cat = get_catalog()
    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    app = app_for(Session(Plan(recipe=recipe, title="Interval (invented)"), cat))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        b = budget(recipe, cat)
        osm, psi = f"±{b.osmolality.half_width():.1f} mOsm/kg", f"±{b.osmotic_potential.half_width():.3f} MPa"
        text = "\n".join(screen_lines(app))
        assert f"{osm} {psi}" in text
        assert 0 < b.osmolality.half_width() < 0.1 * b.osmolality.value  # a real, not a vacuous, interval
        # the preview of an edit shows the candidate's interval
        app.get_screen("main").preview("sucrose", "60 g/L")
        await pilot.pause()
        b2 = budget(recipe.with_amount("sucrose", "60 g/L"), cat)
        assert f"±{b2.osmolality.half_width():.1f} mOsm/kg" in "\n".join(screen_lines(app))


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
@run_async
async def test_the_storage_temperature_is_set_in_the_conditions_and_checks_solubility_there(size):
    from mediaplan.tui.dialogs.conditions import ConditionsScreen

    cat = get_catalog()
    # 0.8 mol/kg mannitol: soluble at 25 °C, not when the medium is kept at 4 °C (catalog solubility table)
    recipe = Recipe().with_amount("mannitol", "0.8 mol/kg")
    app = app_for(Session(Plan(recipe=recipe, title="Cold wash (invented)"), cat))
    async with app.run_test(size=size) as pilot:
        await pilot.press("c")
        await pilot.pause()
        assert isinstance(app.screen, ConditionsScreen)
        lines = screen_lines(app)
        assert any("Apply" in ln for ln in lines) and any("kept at" in ln for ln in lines)  # nothing clipped
        app.screen.query_one("#cond-storage").value = "-300 °C"
        await pilot.pause()
        await pilot.click("#cond-apply")
        await pilot.pause()
        assert isinstance(app.screen, ConditionsScreen)  # refused inline, nothing applied
        app.screen.query_one("#cond-storage").value = "4 °C"
        await pilot.pause()
        await pilot.click("#cond-apply")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert app.session.recipe.storage_temperature == "4 °C"
        ev = evaluate(app.session.recipe, cat)
        assert any(w.code == "solubility" and "4 °C (the stated storage temperature)" in w.message
                   for w in ev.warnings)
        # the plan stating none is checked at a cold room's 4 °C, and says that it states none
        assert any("the plan states no storage temperature" in w.message for w in evaluate(recipe, cat).warnings)
        # undo gives the plan back without a stated storage temperature
        await pilot.press("u")
        await pilot.pause()
        assert app.session.recipe.storage_temperature is None


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
@run_async
async def test_tonicity_with_a_permeant_shows_the_first_minutes_and_the_lasting_state(size):
    from mediaplan.tasks.cells import CellReference

    cat = get_catalog()
    # 0.2 mol/kg mannitol + 0.3 mol/kg glycerol against 450 mOsm/kg cells: isotonic at first, hypotonic once
    # glycerol (a permeant; catalog reflection coefficient) has entered (an invented case)
    recipe = Recipe().with_amount("mannitol", "0.2 mol/kg").with_amount("glycerol", "0.3 mol/kg")
    plan = Plan(recipe=recipe, title="Permeant (invented)", cells=CellReference(osmolality="450 mOsm/kg"))
    app = app_for(Session(plan, cat))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        t = evaluate(recipe, cat, cell_reference_mosmol=450.0).tonicity
        assert t["class"] == "isotonic" and t["steady_state"]["class"] == "hypotonic"
        text = " ".join(ln.strip("│ ") for ln in screen_lines(app))
        assert "once inside glycerol" in text and f"{t['steady_state']['ratio']:.2f} ×" in text
        assert "swell;" not in text  # walled cells: turgor, not swelling
        if size[0] >= 140:
            assert "turgor rises, the" in text  # the full sentence where there is room
        else:
            assert "turgor rises (water enters)" in text
