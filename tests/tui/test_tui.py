"""Terminal app, driven by Textual's pilot: state and posted messages, not only pixels."""

from __future__ import annotations

import asyncio
import functools
import html
import re

import pytest

from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.app import MediaplanApp
from mediaplan.tui.dialogs.amount import AmountScreen
from mediaplan.tui.dialogs.files import ChoiceScreen
from mediaplan.tui.dialogs.picker import PickerScreen
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session, find_recoveries
from mediaplan.tui.widgets.relations import RelationsPanel, figures
from tests.tui.tui_helpers import screen_lines

SIZE = (100, 32)


def run_async(fn):
    """Run a pilot scenario in its own event loop (no async pytest plugin needed)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        return asyncio.run(fn(*args, **kwargs))
    return wrapper


def write_plan(path, recipe: Recipe, title="Test medium (invented)"):
    planfile.write(Plan(recipe=recipe, title=title), path)
    return path


def app_for(session, messages=None) -> MediaplanApp:
    return MediaplanApp(session, offer_recovery=False, start_dir=session.plan.path.parent if session.plan.path else None)


def panel(app) -> RelationsPanel:
    return app.get_screen("main").query_one(RelationsPanel)


def screen_text(app) -> str:
    """The visible text of the screen (from the SVG screenshot; one string per styled run)."""
    svg = app.export_screenshot()
    return "\n".join(html.unescape(t).replace("\xa0", " ") for t in re.findall(r">([^<]*)</text>", svg))


async def type_text(pilot, text: str) -> None:
    for ch in text:
        await pilot.press("space" if ch == " " else ch)


@run_async
async def test_panel_shows_evaluate_figures(catalog, tmp_path):
    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    path = write_plan(tmp_path / "p.toml", recipe)
    seen = []
    app = app_for(Session.open(path, catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.pause()
        ev = panel(app).evaluation
        ref = evaluate(recipe, catalog)
        assert ev.osmolality_mosmol_per_kg == pytest.approx(ref.osmolality_mosmol_per_kg, rel=1e-12)
        assert ev.water_activity == pytest.approx(ref.water_activity, rel=1e-12)
        assert ev.osmotic_potential_mpa == pytest.approx(ref.osmotic_potential_mpa, rel=1e-12)
        # the rendered panel carries the same figures, formatted
        shown = screen_text(app)
        for key in ("osmolality", "osmolality_ideal", "water_activity", "potential_mpa"):
            assert figures(ref)[key] in shown
        assert any(isinstance(m, MainScreen.Evaluated) and m.outcome.evaluation is not None for m in seen)
        # cautions of hazardous components (ammonium nitrate in MS) reach the notes
        assert ref.cautions and "ammonium nitrate" in shown


@run_async
async def test_add_component_and_edit_amount(catalog):
    seen = []
    app = app_for(Session.new(catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("a")
        assert isinstance(app.screen, PickerScreen)
        await type_text(pilot, "KNO3")
        await pilot.press("enter")
        assert isinstance(app.screen, AmountScreen)
        await type_text(pilot, "1900 mg/L")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        recipe = app.session.recipe
        assert recipe.amount_of("potassium_nitrate").text == "1900 mg/L"
        assert app.session.dirty
        ref = evaluate(recipe, catalog)
        assert panel(app).evaluation.osmolality_mosmol_per_kg == pytest.approx(ref.osmolality_mosmol_per_kg)
        # edit it through the table: Enter on the row opens the amount dialog
        await pilot.press("enter")
        assert isinstance(app.screen, AmountScreen)
        await pilot.press("ctrl+u")  # clear the input
        await type_text(pilot, "3.8 g/L")
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.recipe.amount_of("potassium_nitrate").text == "3.8 g/L"
        after = evaluate(app.session.recipe, catalog)
        assert panel(app).evaluation.osmolality_mosmol_per_kg == pytest.approx(after.osmolality_mosmol_per_kg)
        assert after.osmolality_mosmol_per_kg > ref.osmolality_mosmol_per_kg
        # undo brings the first amount back
        await pilot.press("u")
        assert app.session.recipe.amount_of("potassium_nitrate").text == "1900 mg/L"
        evaluated = [m for m in seen if isinstance(m, MainScreen.Evaluated)]
        assert len(evaluated) >= 3


@run_async
async def test_bad_amount_is_shown_inline_and_changes_nothing(catalog):
    app = app_for(Session(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("e")
        assert isinstance(app.screen, AmountScreen)
        await pilot.press("ctrl+u")
        await type_text(pilot, "30 g/xyz")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, AmountScreen)  # still open: nothing applied
        message = app.screen.query_one("#amount-message")
        assert message.has_class("-error")
        assert "unknown unit" in str(message.render())
        await pilot.press("escape")
        await pilot.pause()
        assert app.session.recipe.amount_of("sucrose").text == "30 g/L"
        assert not app.session.dirty


@run_async
async def test_base_and_strength(catalog):
    app = app_for(Session.new(catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("b")
        ol = app.screen.query_one("#base-list")
        ids = [ol.get_option_at_index(i).id for i in range(ol.option_count)]
        assert ids[0] == "-none-" and sorted(ids[1:]) == sorted(catalog.media)
        ol.highlighted = ids.index("ms1962")
        app.screen.query_one("#strength-input").value = "1/2"
        await pilot.pause()
        await pilot.click("#base-apply")
        await pilot.pause()
        assert app.session.recipe.base == "ms1962"
        assert app.session.recipe.strength == 0.5
        half = evaluate(app.session.recipe, catalog)
        assert panel(app).evaluation.osmolality_mosmol_per_kg == pytest.approx(half.osmolality_mosmol_per_kg)


@run_async
async def test_save_reopen_and_conflict(catalog, tmp_path):
    path = write_plan(tmp_path / "plan.toml", Recipe().with_amount("sucrose", "30 g/L"))
    app = app_for(Session.open(path, catalog))
    async with app.run_test(size=SIZE) as pilot:
        app.get_screen("main")._apply(app.session.set_amount, "sucrose", "45 g/L")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not app.session.dirty
        assert planfile.read(path, catalog=catalog).recipe.amount_of("sucrose").text == "45 g/L"
        # someone else changes the file: the next save is refused and offered beside it
        path.write_text(path.read_text().replace("45 g/L", "50 g/L"))
        app.get_screen("main")._apply(app.session.set_amount, "sucrose", "60 g/L")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.click("#choice-beside")
        await pilot.pause()
        beside = tmp_path / "plan-2.toml"
        assert beside.exists()
        assert planfile.read(beside, catalog=catalog).recipe.amount_of("sucrose").text == "60 g/L"
        assert planfile.read(path, catalog=catalog).recipe.amount_of("sucrose").text == "50 g/L"
    reopened = Session.open(beside, catalog)
    assert reopened.recipe.amount_of("sucrose").text == "60 g/L"


@run_async
async def test_quit_with_unsaved_work_asks_first(catalog):
    app = app_for(Session(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=SIZE) as pilot:
        app.get_screen("main")._apply(app.session.set_amount, "sucrose", "20 g/L")
        await pilot.press("q")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.press("escape")
        await pilot.pause()
        assert app.is_running and isinstance(app.screen, MainScreen)


@run_async
async def test_autosave_recovery_is_offered(catalog, tmp_path):
    path = write_plan(tmp_path / "plan.toml", Recipe().with_amount("sucrose", "30 g/L"))
    app = app_for(Session.open(path, catalog))
    async with app.run_test(size=SIZE) as pilot:
        app.get_screen("main")._apply(app.session.set_amount, "mannitol", "0.2 mol/kg")
        app.autosave_now()  # what the debounce timer does after a pause
        await pilot.pause()
    found = find_recoveries(catalog, path)
    assert len(found) == 1 and found[0].plan.recipe.amount_of("mannitol").text == "0.2 mol/kg"
    # the next start on the same plan offers it
    app2 = MediaplanApp(Session.open(path, catalog))
    async with app2.run_test(size=SIZE) as pilot:
        await pilot.pause()
        assert isinstance(app2.screen, ChoiceScreen)
        await pilot.click("#choice-restore")
        await pilot.pause()
        assert app2.session.recipe.amount_of("mannitol").text == "0.2 mol/kg"
        assert app2.session.dirty and app2.session.plan.path == path.resolve()


@run_async
async def test_palette_offers_state_dependent_commands(catalog):
    from mediaplan.tui.palette import PlanCommands

    app = app_for(Session.new(catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        provider = PlanCommands(app.screen)
        titles = [t for t, _, _ in provider._available()]
        assert "Add a component" in titles
        assert "Edit the selected amount" not in titles  # empty recipe: nothing to edit
        assert "Undo the last change" not in titles
        hits = [h.text async for h in provider.search("mannitol")]
        assert "add D-mannitol" in hits


def _help_keys(keys: str) -> str:
    from mediaplan.tui.screens.help import _keys

    return _keys(keys)


@run_async
async def test_help_lists_every_binding(catalog):
    from mediaplan.tui.actions import ACTIONS

    app = app_for(Session.new(catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("question_mark")
        await pilot.pause()
        shown = screen_lines(app)
        text = "\n".join(shown)
        for a in ACTIONS:  # every action on a line of its own with its keys, none below the window's edge
            row = re.compile(rf"│ {re.escape(_help_keys(a.keys))} +{re.escape(a.title)}")
            assert any(row.search(ln) for ln in shown), a
        assert "Command palette" in text
        ids = {b.id for b in app.screen.query_one("Static").screen.app.BINDINGS}
        assert "mediaplan.save" in ids


@run_async
async def test_prep_sheet_is_built_in_a_worker(catalog):
    from mediaplan.tui.screens.prep import PrepScreen

    seen = []
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962").with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("m")
        assert isinstance(app.screen, PrepScreen)
        await app.workers.wait_for_complete()
        await pilot.pause()
        ready = [m for m in seen if isinstance(m, PrepScreen.Ready)]
        assert ready and ready[-1].error is None
        assert "sucrose" in ready[-1].markdown and "**batch:** 1 L" in ready[-1].markdown
        # a bad batch volume is refused inline, in words (v goes to the batch field)
        await pilot.press("v")
        app.screen.query_one("#prep-volume").value = "2 parsecs"
        await pilot.press("enter")
        await pilot.pause()
        assert app.screen.query_one("#prep-message").has_class("-error")
        app.screen.query_one("#prep-volume").value = "2 L"
        await pilot.pause()
        app.screen.rebuild()
        await app.workers.wait_for_complete()
        await pilot.pause()
        ready = [m for m in seen if isinstance(m, PrepScreen.Ready)]
        assert "**batch:** 2 L" in ready[-1].markdown and "**batch:** 2 L" in app.screen.markdown
        await pilot.press("escape")
        assert isinstance(app.screen, MainScreen)


@run_async
async def test_solve_a_target_and_apply(catalog):
    from mediaplan.tasks.solve import solve_target
    from mediaplan.tui.screens.target import TargetScreen

    start = Recipe(base="ms1962", strength=0.5).with_amount("sucrose", "20 g/L")
    seen = []
    app = app_for(Session(Plan(recipe=start), catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("t")
        assert isinstance(app.screen, TargetScreen)
        app.screen.query_one("#target-value").value = "-0.9 MPa"
        app.screen.query_one("#target-osmotica").value = "mannitol"
        await pilot.pause()
        await pilot.click("#target-solve")
        await app.workers.wait_for_complete()
        await pilot.pause()
        solved = [m for m in seen if isinstance(m, TargetScreen.Solved)]
        assert solved and solved[-1].error is None
        await pilot.click("#target-apply")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        ref = solve_target(start, catalog, "-0.9 MPa", ["mannitol"])
        assert app.session.recipe.amount_of("mannitol").text == ref.recipe.amount_of("mannitol").text
        assert app.session.plan.target.value == "-0.9 MPa" and app.session.plan.target.osmotica == ("mannitol",)
        # the panel shows the solved medium, which sits on the target
        assert panel(app).evaluation.osmotic_potential_mpa == pytest.approx(-0.9, abs=0.002)


@run_async
async def test_projection_figures_follow_the_fractions(catalog):
    from mediaplan.tasks.projection import ProjectionRecord, project, settings_from
    from mediaplan.tui.screens.projection import ProjectionScreen

    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    app = app_for(Session(Plan(recipe=recipe), catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("w")
        assert isinstance(app.screen, ProjectionScreen)
        app.screen.query_one("#proj-autoclave_hydrolysis").value = "15 %"
        app.screen.query_one("#proj-water_loss_per_week").value = "2 %"
        app.screen.query_one("#proj-weeks").value = "6"
        await pilot.pause()
        shown = screen_text(app)
        ref = project(recipe, catalog, settings_from(ProjectionRecord(autoclave_hydrolysis="15 %",
                                                                      water_loss_per_week="2 %", weeks="6")))
        for st in ref.stages:
            assert f"{st.evaluation.osmolality_mosmol_per_kg:.1f}" in shown
        app.screen.query_one("#proj-weeks").value = "two hundred"
        await pilot.pause()
        assert app.screen.query_one("#proj-message").has_class("-error")
        app.screen.query_one("#proj-weeks").value = "6"
        await pilot.pause()
        await pilot.click("#proj-keep")
        await pilot.pause()
        kept = app.session.plan.projection
        assert (kept.autoclave_hydrolysis, kept.water_loss_per_week, kept.weeks) == pytest.approx((0.15, 0.02, 6))


@run_async
async def test_plasmolysis_series_design_counts_fit_keep(catalog):
    from mediaplan.tasks.plasmolysis import counts_from_series, fit_counts
    from mediaplan.tui.screens.plasmolysis import CountsScreen, SeriesScreen

    seen = []
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962", strength=0.5).with_amount("sucrose", "20 g/L")), catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("p")
        screen = app.screen
        assert isinstance(screen, SeriesScreen)
        screen.query_one("#series-steps").value = "5"
        screen.action_design()
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert len(screen.series.levels) == 5
        # invented counts (a demo scenario), entered through the counts dialog for the first level
        screen.query_one("#series-levels").focus()
        await pilot.press("enter")
        assert isinstance(app.screen, CountsScreen)
        await pilot.press("ctrl+u", *"1/50,0/40", "enter")
        await pilot.pause()
        for i, counts in enumerate(([(6, 50)], [(24, 50)], [(44, 50)], [(50, 50)]), start=1):
            screen.series = screen.series.with_counts(i, counts)
        assert screen.series.levels[0].plasmolysed == (1, 0) and screen.series.levels[0].total == (50, 40)
        screen.action_fit()
        await app.workers.wait_for_complete()
        await pilot.pause()
        fitted = [m for m in seen if isinstance(m, SeriesScreen.Fitted)]
        assert fitted and fitted[-1].error is None
        ref = fit_counts(counts_from_series(screen.series, temperature_k=298.15), "logit")
        assert fitted[-1].fit.water_potential_50_mpa == pytest.approx(ref.water_potential_50_mpa, rel=1e-9)
        await pilot.press("k", "escape")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert app.session.plan.series == screen.series  # the record from the screen, counts and all
        assert app.session.plan.series.levels[0].plasmolysed == (1, 0)
        assert app.session.plan.cells.osmolality == f"{ref.osmolality_50_mosmol_per_kg:.4g} mOsm/kg"
        assert app.session.plan.cells.potential is None  # one reference: the osmolality
        # the fitted cell sap becomes the tonicity reference of the main panel
        assert panel(app).evaluation.tonicity is not None
        assert panel(app).evaluation.tonicity["reference_mosmol_per_kg"] == pytest.approx(
            ref.osmolality_50_mosmol_per_kg, rel=1e-3)


# ---- the recipe table (a Line API view) -----------------------------------------------------

def table(app):
    from mediaplan.tui.widgets.recipe_table import RecipeTable

    return app.get_screen("main").query_one(RecipeTable)


def visible_rows(t) -> range:
    """Indices of the rows on screen below the header line."""
    top = round(t.scroll_y)
    return range(top, top + t.scrollable_content_region.height - 1)


@run_async
async def test_table_keys_move_the_cursor_and_keep_it_in_view(catalog):
    from mediaplan.tui.widgets.recipe_table import RecipeTable

    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    ids = [c.id for c in evaluate(recipe, catalog).components]
    seen = []
    app = app_for(Session(Plan(recipe=recipe), catalog))
    async with app.run_test(size=(80, 24), message_hook=seen.append) as pilot:
        await pilot.pause()
        t = table(app)
        assert t.has_focus and t.selected_id == ids[0]
        assert len(visible_rows(t)) < len(ids)  # the table has to scroll at this size
        start = len(seen)
        keys = ("down", "down", "up", "end", "down", "pageup", "home", "pagedown")
        at = []
        for key in keys:
            await pilot.press(key)
            await pilot.pause()
            at.append(t.cursor_row)
            assert t.cursor_row in visible_rows(t), key
        page = len(visible_rows(t))
        last = len(ids) - 1
        assert at == [1, 2, 1, last, last, last - page, 0, page]
        assert round(t.scroll_y) > 0  # pagedown scrolled a page, the cursor kept its screen line
        # every move was announced once, with the component under the cursor (the hook sees a
        # bubbling message at each level: keep each message once)
        distinct = {id(m): m for m in seen[start:] if isinstance(m, RecipeTable.RowHighlighted)}
        moved = [m.component_id for m in distinct.values()]
        assert moved == [ids[r] for i, r in enumerate(at) if i == 0 or r != at[i - 1]]
        # the detail line follows the cursor
        assert evaluate(recipe, catalog).components[t.cursor_row].name in screen_text(app)


@run_async
async def test_enter_on_a_row_opens_its_amount(catalog):
    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    app = app_for(Session(Plan(recipe=recipe), catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        table(app).select_id("sucrose")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, AmountScreen)
        assert app.screen.component_name.startswith("sucrose") and app.screen.amount == "30 g/L"
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen) and table(app).selected_id == "sucrose"


@run_async
async def test_click_selects_a_row_and_a_second_click_edits_it(catalog):
    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    ids = [c.id for c in evaluate(recipe, catalog).components]
    app = app_for(Session(Plan(recipe=recipe), catalog))
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        t = table(app)
        # border line, header line, then row 0: row 3 is four lines below the table's top edge
        await pilot.click(t, offset=(6, 5))
        await pilot.pause()
        assert t.selected_id == ids[3] and isinstance(app.screen, MainScreen)
        await pilot.click(t, offset=(6, 1))  # the header selects nothing
        await pilot.pause()
        assert t.selected_id == ids[3] and isinstance(app.screen, MainScreen)
        await pilot.click(t, offset=(6, 5))
        await pilot.pause()
        assert isinstance(app.screen, AmountScreen)
        assert app.screen.component_name.startswith(catalog.components[ids[3]].name)


def test_row_text_is_plain_and_fits_its_columns(catalog):
    from dataclasses import replace

    from mediaplan.tui.widgets.recipe_table import FIXED_WIDTHS, header_text, row_text

    c = evaluate(Recipe().with_amount("sucrose", "30 g/L"), catalog).components[0]
    odd = replace(c, name="K[+] [bold]not markup[/bold] with a very long tail", hazard="oxidiser")
    row = row_text(odd, name_width=20)
    assert row.name == "+!K[+] [bold]not ma…"  # brackets kept as typed, cut with an ellipsis
    assert len(row.amount) == FIXED_WIDTHS["amount"] and row.amount.endswith("30 g/L")
    assert len(row.numbers) + len(row.bar) == FIXED_WIDTHS["molality"] + FIXED_WIDTHS["share"]
    assert row.numbers.endswith("  100% ") and row.bar == "████"  # the only solute holds the whole share
    # a large molality and a full share stay apart (0.5 M mannitol: 533 mmol/kg, 100 %)
    big = evaluate(Recipe().with_amount("mannitol", "0.5 M"), catalog).components[0]
    assert row_text(big).numbers.split() == ["533", "100%"]
    assert len(header_text(20)) == 20 + sum(FIXED_WIDTHS.values())


# ---- the app in its own words ------------------------------------------------------------------------
#: text that sends a user to a command line: a subcommand of mediaplan, or a --flag
COMMAND_LINE = re.compile(r"\bmediaplan (calc|solve|series|fit|prep|catalog|check|diff|open|locate|reading)\b"
                          r"|(?<![\w-])--[a-z]")


def shown(widget) -> str:
    return str(widget.content)


@run_async
async def test_plasmolysis_errors_name_the_screens_own_fields(catalog):
    from mediaplan.tui.screens.plasmolysis import SeriesScreen

    seen = []
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962", strength=0.5)), catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("p")
        screen = app.screen
        assert isinstance(screen, SeriesScreen)
        message = screen.query_one("#series-message")
        cases = [
            ({"#series-osmoticum": "unobtainium"}, "osmoticum: unknown component 'unobtainium'"),
            ({"#series-osmoticum": "mannitol", "#series-steps": "1"},
             "levels: a series needs at least 2 levels (got 1)"),
            ({"#series-steps": "5", "#series-to": "-0.4 MPa"},
             "last ψ: the first and last level are the same potential"),
        ]
        for inputs, words in cases:
            for selector, value in inputs.items():
                screen.query_one(selector).value = value
            await pilot.pause()
            screen.action_design()
            await app.workers.wait_for_complete()
            await pilot.pause()
            assert shown(message).startswith("✗ " + words) and message.has_class("-error")
            assert not COMMAND_LINE.search(shown(message))
        designed = [m.error for m in seen if isinstance(m, SeriesScreen.Designed)]
        assert designed and designed[0].startswith("osmoticum: ")  # the worker's error, posted in app words
        assert not any(COMMAND_LINE.search(e or "") for e in designed)
        assert not COMMAND_LINE.search(screen_text(app))
        assert screen.series is None  # nothing designed, nothing kept


@run_async
async def test_target_errors_name_the_dialogs_own_fields(catalog):
    from mediaplan.tui.screens.target import TargetScreen

    seen = []
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962")), catalog))
    async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
        await pilot.press("t")
        assert isinstance(app.screen, TargetScreen)
        result = app.screen.query_one("#target-result")
        cases = [
            ("-0.9 MPa", "mannitol, mannitol", "osmotica: mannitol is named twice (name two different osmotica)"),
            ("isotonic", "mannitol", "target: target 'isotonic' needs a cell reference"),
        ]
        for target, osmotica, words in cases:
            app.screen.query_one("#target-value").value = target
            app.screen.query_one("#target-osmotica").value = osmotica
            await pilot.pause()
            await pilot.click("#target-solve")
            await app.workers.wait_for_complete()
            await pilot.pause()
            solved = [m for m in seen if isinstance(m, TargetScreen.Solved)]
            assert solved[-1].solution is None and solved[-1].error.startswith(words)
            assert shown(result).startswith("✗ " + words)
            assert app.screen.query_one("#target-apply").disabled
            assert not COMMAND_LINE.search(shown(result)) and not COMMAND_LINE.search(screen_text(app))
        assert app.session.plan.target is None


@run_async
async def test_a_plan_with_a_malformed_table_is_refused_in_words(catalog, tmp_path):
    path = write_plan(tmp_path / "p.toml", Recipe().with_amount("sucrose", "30 g/L"))
    path.write_text(path.read_text() + '\n[cells]\nosmolality = 450\n')
    app = app_for(Session.new(catalog))
    notes = []
    notify = app.notify

    def record(message, **kw):
        notes.append(message)
        return notify(message, **kw)

    app.notify = record
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("ctrl+o")
        app.screen.query_one("#path-input").value = str(path)
        await pilot.press("enter")
        await pilot.pause()
        # the file's own line and key: the place to fix it
        assert any(n.startswith(f"{path}:") and "cells.osmolality: osmolality must be text" in n for n in notes)
        assert not any(COMMAND_LINE.search(n) for n in notes)
        assert app.session.plan.path is None  # still the new plan
