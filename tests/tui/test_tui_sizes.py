"""The terminal app at 80x24 and 140x45, driven by keys: nothing clipped, nothing typed lost.

Each test runs at both sizes and asserts on the rendered lines (what a user reads) and on the state.
"""

from __future__ import annotations

import asyncio
import re

import pytest
from tui_helpers import (
    DEMO_COUNTS,
    SIZE_IDS,
    SIZES,
    app_for,
    half_ms_plan,
    run_async,
    screen_lines,
    screen_text,
    settle,
    shoot_plan,
    type_text,
)

from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.app import MediaplanApp
from mediaplan.tui.dialogs.amount import AmountScreen
from mediaplan.tui.dialogs.files import ChoiceScreen, PathScreen
from mediaplan.tui.screens.main import MainScreen
from mediaplan.tui.session import Session
from mediaplan.tui.widgets.relations import figures

sizes = pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)


def main_of(app) -> MainScreen:
    return app.get_screen("main")


def key_bar(app) -> str:
    return screen_lines(app)[-1]


# ---- the key bar -------------------------------------------------------------------------------

@sizes
@run_async
async def test_the_key_bar_keeps_prep_undo_save_quit_keys_and_nothing_stray(catalog, size):
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        bar = key_bar(app)
        for word in ("Prep", "Undo", "Save", "Quit", "Keys", "Target", "Series"):
            assert re.search(rf"\b{word}\b", bar), (word, bar)
        # the bar ends with the palette's key and label, then only blanks (no stray character)
        assert re.search(r"\^p (Cmds|Commands) *$", bar), bar
        assert len(bar) <= size[0]
        # every key the bar leaves out is in the help screen
        await pilot.press("question_mark")
        await pilot.pause()
        from mediaplan.tui.screens.help import HelpScreen

        assert isinstance(app.screen, HelpScreen)


@sizes
@run_async
async def test_no_action_needs_a_key_that_browser_terminals_keep(catalog, size):
    from mediaplan.tui.actions import ACTIONS
    from mediaplan.tui.screens.plasmolysis import SeriesScreen
    from mediaplan.tui.screens.prep import PrepScreen

    taken = {"ctrl+w", "ctrl+n", "ctrl+t"}  # close a tab, open a window, open a tab
    keys = {k for a in ACTIONS for k in a.keys.split(",")}
    for screen in (SeriesScreen, PrepScreen):
        keys |= {k for b in screen.BINDINGS for k in b.key.split(",")}
    assert not keys & taken
    app = app_for(Session(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.press("S")  # save as
        await pilot.pause()
        assert isinstance(app.screen, PathScreen) and app.screen.title_text == "save as"
        await pilot.press("escape")
        await pilot.press("n")  # a new plan: nothing unsaved, so no question
        await pilot.pause()
        assert isinstance(app.screen, MainScreen) and not app.session.recipe.amounts


# ---- the main screen ---------------------------------------------------------------------------

@sizes
@run_async
async def test_main_screen_shows_names_figures_and_an_unsaved_mark_unclipped(catalog, size):
    plan = shoot_plan(title="A very long title for a medium that will never fit on one line of the top bar")
    app = app_for(Session(plan, catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        ev = evaluate(plan.recipe, catalog)
        text = screen_text(app)
        f = figures(ev)
        for key in ("osmolality", "osmolality_ideal", "potential_mpa", "water_activity", "freezing_point"):
            assert f[key] in text, key
        assert "ammonium nitrate " in text and "potassium nitrate " in text  # names not cut at 80 columns
        assert "25 °C" in text and "degC" not in text
        assert "full-strength Murashige & Sko" in text and "ms1962" not in text  # the base by its name
        main_of(app)._apply(app.session.set_amount, "sucrose", "25 g/L")
        await pilot.pause()
        top = screen_lines(app)[0]
        assert "● unsaved" in top  # the mark stays; a title too long is cut, never the mark
        assert top.rstrip().endswith("…") if size[0] < 100 else top.rstrip().endswith(plan.title)


@sizes
@run_async
async def test_the_panel_says_when_van_t_hoff_is_per_litre(catalog, size):
    for plan, shown in ((half_ms_plan(), True), (shoot_plan(), False)):
        ev = evaluate(plan.recipe, catalog)
        # the van't Hoff osmolality is above the non-ideal one; its potential is above (less negative) too
        # in the half-strength demo, below in the shoot demo
        up = ev.vant_hoff_potential_mpa > ev.osmotic_potential_mpa
        assert ev.osmolality_ideal_mosmol_per_kg > ev.osmolality_mosmol_per_kg and up is shown
        app = app_for(Session(plan, catalog))
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            words = " ".join(ln.split("│")[-2].strip() for ln in screen_lines(app)[1:14] if ln.count("│") >= 2)
            assert ("van't Hoff ψs is per litre of medium" in words) is shown, words


@sizes
@run_async
async def test_detail_line_shows_the_rows_own_amount(catalog, size):
    recipe = Recipe(base="ms1962").with_amount("agar", "8 g/L").with_amount("mannitol", "20 mM")
    app = app_for(Session(Plan(recipe=recipe), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        table = main_of(app).query_one("RecipeTable")
        table.select_id("agar")
        await pilot.pause()
        assert "agar · 8 g/L · added" in screen_text(app)
        table.select_id("mannitol")
        await pilot.pause()
        grams = evaluate(recipe, catalog).component("mannitol").grams_per_litre
        assert f"mannitol C6H14O6 · 20 mM = {grams:.4g} g/L" in screen_text(app)


@sizes
@run_async
async def test_amount_preview_compares_with_the_committed_recipe(catalog, size):
    recipe = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    app = app_for(Session(Plan(recipe=recipe, cells=half_ms_plan().cells), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        main_of(app).query_one("RecipeTable").select_id("sucrose")
        await pilot.press("enter")
        assert isinstance(app.screen, AmountScreen)
        committed = figures(evaluate(recipe, catalog, cell_reference_mosmol=450))
        big = figures(evaluate(recipe.with_amount("sucrose", "350 g/L"), catalog, cell_reference_mosmol=450))
        for amount, now in (("350 g/L", big), ("30 g/L", committed)):
            await pilot.press("ctrl+u")
            await type_text(pilot, amount)
            await pilot.pause()
            preview = str(app.screen.query_one("#amount-preview").render())
            # the left figure is the plan as it stands, every time (not the previous preview)
            assert re.search(rf"osmolality +{re.escape(committed['osmolality'])} → {re.escape(now['osmolality'])} "
                             "mOsm/kg", preview), preview
            assert re.search(rf"ψs +{re.escape(committed['potential_mpa'])} → {re.escape(now['potential_mpa'])} MPa",
                             preview)
            assert f"tonicity   {committed['tonicity']} {committed['tonicity_ratio']}× → {now['tonicity']}" in preview
            for line in preview.splitlines():
                assert line in screen_text(app)  # the comparison is on screen, not clipped
        await pilot.press("escape")
        await pilot.pause()
        assert app.session.recipe == recipe and not app.session.dirty


@sizes
@run_async
async def test_notes_set_cautions_apart_and_speak_plainly(catalog, size):
    from mediaplan.tui.widgets.relations import MARK_CAUTION, MARK_NOTE, NotesPanel

    app = app_for(Session(Plan(recipe=Recipe(base="ms1962").with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        notes = main_of(app).query_one(NotesPanel)
        ev = main_of(app).committed
        assert [w.code for w in ev.warnings] == ["pitzer_default"]  # the model's note on every MS plan
        assert notes.border_title == f"{len(ev.cautions)} cautions · 1 note"  # no "1 warnings"
        plain = notes.plain
        lines = [ln for ln in plain.splitlines() if ln.strip()]
        assert lines[0] == f"{MARK_CAUTION} handling"  # the model's note does not lead
        assert "Pitzer" not in plain and "pairs of ions in this medium have no measured data" in plain
        assert f"{MARK_NOTE} how sure the figures are" in plain
        # the two kinds of note have different marks, not only colours, and neither is a triangle
        assert MARK_CAUTION != MARK_NOTE and not {"△", "⚠", "▲"} & set(plain)
        # details on demand: the models' own words
        await pilot.press("i")
        await pilot.pause()
        detail = notes.plain
        assert "without Pitzer parameters" in detail and notes.detail
        assert "Debye–Hückel" in detail
        await pilot.press("i")
        await pilot.pause()
        assert "Pitzer" not in notes.plain


def test_notes_name_components_not_ids(catalog):
    from mediaplan.medium.evaluate import Warning_
    from mediaplan.tui.widgets.relations import note_text

    names = {"potassium_nitrate": "potassium nitrate", "bap": "6-benzylaminopurine"}
    w = Warning_("reflection_unknown", "no reflection coefficient for potassium_nitrate, bap (3 % of it)")
    assert note_text(w, names, detail=True) == "no reflection coefficient for potassium nitrate, " \
                                               "6-benzylaminopurine (3 % of it)"
    v = Warning_("validity", "bap at 2 mol/kg is beyond its model's range", "bap")
    assert note_text(v, names, detail=False).startswith("6-benzylaminopurine is beyond the range")


def test_chart_groups_growth_regulators_apart(catalog):
    from mediaplan.tui.widgets.relations import app_groups

    recipe = Recipe(base="ms1962").with_amount("bap", "1 mg/L").with_amount("sucrose", "30 g/L")
    ev = evaluate(recipe, catalog)
    groups = app_groups(ev)
    assert "growth regulators" in groups and "organics" not in groups
    assert groups["growth regulators"] == pytest.approx(ev.component("bap").osmolality_mosmol_per_kg)
    # the same osmolality, only grouped differently
    assert sum(groups.values()) == pytest.approx(sum(ev.groups.values()), rel=1e-12)


@sizes
@run_async
async def test_removed_base_lines_are_struck_through_and_restorable(catalog, size):
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962")), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        table = main_of(app).query_one("RecipeTable")
        table.select_id("ammonium_nitrate")
        await pilot.press("x")
        await pilot.pause()
        assert app.session.recipe.amount_of("ammonium_nitrate").is_zero
        row = next(ln for ln in screen_lines(app) if "ammonium nitrate" in ln and "│" in ln)
        assert "- ammonium nitrate" in row and "1650 mg/L" in row and "removed" in row
        strip = table.render_line(1 + table.cursor_row - round(table.scroll_y))
        struck = [seg for seg in strip if "ammonium nitrate" in seg.text]
        assert struck and struck[0].style.strike  # and struck through
        assert "removed from the base" in screen_text(app) and table.selected_id == "ammonium_nitrate"
        await pilot.press("x")  # x again restores the base amount
        await pilot.pause()
        assert app.session.recipe.amount_of("ammonium_nitrate") is None
        assert "- ammonium nitrate" not in screen_text(app)
        assert main_of(app).committed.component("ammonium_nitrate").amount == "1650 mg/L"


@sizes
@run_async
async def test_notes_and_chart_take_their_new_size_after_a_base_is_applied(catalog, size):
    from mediaplan.tui.widgets.relations import GroupChart, NotesPanel, RelationsPanel

    app = app_for(Session.new(catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.pause()
        await pilot.press("b")
        ol = app.screen.query_one("#base-list")
        ol.highlighted = [ol.get_option_at_index(i).id for i in range(ol.option_count)].index("ms1962")
        app.screen.query_one("#strength-input").focus()
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.recipe.base == "ms1962"
        kinds = (GroupChart, NotesPanel, RelationsPanel)
        after = {k: main_of(app).query_one(k).size for k in kinds}
        await pilot.resize_terminal(size[0] + 1, size[1])
        await pilot.pause()
        await pilot.resize_terminal(*size)
        await pilot.pause()
        assert {k: main_of(app).query_one(k).size for k in kinds} == after
        assert main_of(app).query_one(GroupChart).size.height == 3  # carbon source, macro salts, other


def test_recovery_prompt_counts_a_bases_components(catalog, tmp_path):
    from mediaplan.tui.session import find_recoveries

    s = Session(Plan(recipe=Recipe(base="ms1962", strength=0.5)), catalog)
    s.set_amount("sucrose", "20 g/L")
    s.write_recovery()
    (rec,) = find_recoveries(catalog)
    n = len({ln.component for ln in catalog.medium("ms1962").lines} | {"sucrose"})  # the base's lines, sucrose
    assert n > 1 and f"{n} components on Murashige & Skoog (1962) revised medium × 0.5" in rec.summary
    # the recovery file is the plan as the plan writer writes it, under one comment line
    text = s.recovery_path.read_text()
    assert text.splitlines()[0].startswith("# mediaplan recovery: {")
    assert text.split("\n", 1)[1] == planfile.dumps(s.plan)


def test_a_recovery_file_of_the_earlier_kind_is_still_offered(catalog, tmp_path):
    from mediaplan.files.paths import recovery_dir
    from mediaplan.tui.session import find_recoveries

    plan = Plan(recipe=Recipe().with_amount("sucrose", "30 g/L"), title="Older autosave (invented)")
    folder = recovery_dir()
    folder.mkdir(parents=True, exist_ok=True)
    old = planfile.dumps(plan) + '\n[recovery]\npath = ""\ndisk_digest = ""\nsaved = "2024-01-02T03:04:05"\n'
    (folder / "new-20240102-030405-1.toml").write_text(old)
    (rec,) = find_recoveries(catalog)
    assert rec.plan.recipe.amount_of("sucrose").text == "30 g/L" and rec.plan.title == plan.title
    assert rec.saved == "2024-01-02T03:04:05" and "recovery" not in rec.plan.extra


# ---- dialogs -----------------------------------------------------------------------------------

@sizes
@run_async
async def test_conditions_dialog_starts_at_the_title_and_keeps_notes(catalog, size):
    from mediaplan.tui.dialogs.conditions import ConditionsScreen
    from mediaplan.tui.widgets.relations import NotesPanel

    app = app_for(Session(Plan(recipe=Recipe().with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.press("c")
        assert isinstance(app.screen, ConditionsScreen)
        assert app.focused.id == "cond-title"
        temperature = app.screen.query_one("#cond-temperature")
        assert temperature.value == "25 °C"  # shown with the degree sign
        assert "°C" in temperature.placeholder and not temperature.placeholder[:1].isdigit()
        await pilot.press("ctrl+u")
        await type_text(pilot, "Rooting test")
        assert app.screen.query_one("#cond-title").value == "Rooting test"
        assert app.screen.query_one("#cond-volume").value == "1 L"  # nothing landed in the volume
        app.screen.query_one("#cond-notes").text = "for the spring batch"
        app.screen.query_one("#cond-title").focus()
        await pilot.press("enter")
        await pilot.pause()
        plan = app.session.plan
        assert plan.title == "Rooting test" and plan.notes == "for the spring batch"
        assert plan.recipe.temperature == "25 degC"  # the plan's own text when the shown form was kept
        assert "for the spring batch" in main_of(app).query_one(NotesPanel).plain
        # Esc after typing asks before the typed text goes
        await pilot.press("c")
        await pilot.press("end")  # the title is selected when the dialog opens: typing would replace it
        await type_text(pilot, " 2")
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.press("enter")  # the first answer: keep editing
        await pilot.pause()
        assert isinstance(app.screen, ConditionsScreen)
        assert app.screen.query_one("#cond-title").value == "Rooting test 2"


@sizes
@run_async
async def test_projection_placeholders_say_what_empty_means(catalog, size):
    from mediaplan.tui.screens.projection import ProjectionScreen

    app = app_for(Session(Plan(recipe=Recipe(base="ms1962").with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.press("w")
        assert isinstance(app.screen, ProjectionScreen)
        inputs = list(app.screen.query("Input"))
        assert len(inputs) == 3
        for inp in inputs:
            assert inp.value == "" and inp.placeholder.startswith("empty:")
    from mediaplan.tui.actions import ACTIONS

    assert {a.label for a in ACTIONS if a.id == "projection"} == {"After autoclave"}  # not "Weeks"


# ---- the preparation sheet -------------------------------------------------------------------

@sizes
@run_async
async def test_prep_sheet_opens_with_its_keys_working(catalog, size):
    from textual.widgets import Switch

    from mediaplan.tui.screens.prep import PrepScreen

    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=size) as pilot:
        await pilot.press("m")
        assert isinstance(app.screen, PrepScreen)
        await settle(app, pilot)
        assert app.focused.id == "prep-scroll"
        scroll = app.screen.query_one("#prep-scroll")
        await pilot.press("pagedown")  # scrolls at once, no Tab first
        await pilot.pause()
        assert scroll.scroll_y > 0
        await pilot.press("s")  # the advertised key switches the stocks, nothing is typed in the batch
        await settle(app, pilot)
        assert app.screen.query_one(Switch).value is True
        assert app.screen.query_one("#prep-volume").value == "1 L"
        await pilot.press("v")
        assert app.focused.id == "prep-volume"


@run_async
async def test_prep_write_asks_where_for_a_plan_never_saved(catalog, tmp_path):
    from mediaplan.tui.screens.prep import PrepScreen, sheet_name

    (tmp_path / "plan-prep.md").write_text("someone's sheet")
    app = app_for(Session(shoot_plan(), catalog))
    async with app.run_test(size=SIZES[0]) as pilot:
        await pilot.press("m")
        await settle(app, pilot)
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, PathScreen) and app.screen.suffix == ".md"
        assert app.screen.query_one("#path-input").value == str(tmp_path / sheet_name(shoot_plan().title))
        assert sheet_name(shoot_plan().title).startswith("shoot_multiplication_medium")
        await pilot.press("ctrl+u")
        await type_text(pilot, str(tmp_path / "mine"))
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, PrepScreen)
        assert (tmp_path / "mine.md").read_text() == app.screen.markdown
        assert (tmp_path / "plan-prep.md").read_text() == "someone's sheet"  # never touched


@run_async
async def test_prep_write_beside_a_saved_plan_never_overwrites_silently(catalog, tmp_path):
    path = tmp_path / "p.toml"
    planfile.write(shoot_plan(), path)
    (tmp_path / "p-prep.md").write_text("last week's sheet")
    app = app_for(Session.open(path, catalog))
    async with app.run_test(size=SIZES[1]) as pilot:
        await pilot.press("m")
        await settle(app, pilot)
        await pilot.press("w")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        await pilot.click("#choice-cancel")
        await pilot.pause()
        assert (tmp_path / "p-prep.md").read_text() == "last week's sheet"
        await pilot.press("w")
        await pilot.pause()
        await pilot.click("#choice-overwrite")
        await pilot.pause()
        assert (tmp_path / "p-prep.md").read_text().startswith("# ")


# ---- the plasmolysis series ---------------------------------------------------------------------

def series_plan(catalog, *, counted: bool = True) -> Plan:
    """A designed series of 8 levels, with the invented demo counts when ``counted``."""
    from mediaplan.files.plan_tables import series_record_of
    from mediaplan.tasks.plasmolysis import design_series, potentials_between

    design = design_series(Recipe(volume="50 mL"), "mannitol", potentials_between(-0.4e6, -1.8e6, 8), catalog=catalog,
                           stock="1 mol/kg", spacing="8 levels evenly spaced in water potential")
    series = series_record_of(design)
    if counted:
        for i, counts in enumerate(DEMO_COUNTS):
            series = series.with_counts(i, counts)
    return Plan(recipe=Recipe(volume="50 mL"), title="Series demo (invented)", series=series)


async def open_series(app, pilot):
    from mediaplan.tui.screens.plasmolysis import SeriesScreen

    await pilot.pause()
    await pilot.press("p")
    await pilot.pause()
    assert isinstance(app.screen, SeriesScreen)
    return app.screen


@sizes
@run_async
async def test_series_fields_counts_and_plot_are_unclipped(catalog, size):
    from mediaplan.tui.screens.plasmolysis import counts_text

    app = app_for(Session(series_plan(catalog), catalog))
    async with app.run_test(size=size) as pilot:
        screen = await open_series(app, pilot)
        lines = screen_lines(app)
        text = "\n".join(lines)
        for label, value in (("first ψ", "-0.4 MPa"), ("last ψ", "-1.8 MPa"), ("levels", "8"),
                             ("osmoticum", "mannitol"), ("volume each", "50 mL")):
            assert re.search(rf"{re.escape(label)} +{re.escape(value)}\b", text), label
        assert "plasmolysed/total" in text

        def rows(lines):
            for lv in screen.series.levels:
                row = next((ln for ln in lines if re.match(rf"\s*{lv.level}\s+{lv.water_potential_mpa:.3f}", ln)),
                           None)
                if row is not None:
                    yield lv, row

        assert len(list(rows(lines))) == 8  # every level on screen before the fit, at 80x24 too
        for lv, row in rows(lines):
            assert counts_text(lv) in row, row
        await pilot.press("f")
        await settle(app, pilot)
        assert screen.fit is not None
        lines = screen_lines(app)
        assert "incipient plasmolysis (50 %)" in "\n".join(lines)
        shown = list(rows(lines))
        assert shown if size[0] >= 120 else True  # wide: the table and the plot side by side
        for lv, row in shown:
            # the whole counts text, and no tick label of the plot on a row
            assert counts_text(lv) in row and not re.search(r"\d┤", row), row
        # the plot's ticks are round values, and its x axis is in view after the fit
        ticks = [m.group(1) for ln in lines for m in re.finditer(r"(\S+)┤", ln)]
        assert set(ticks) <= {"0", "50%", "100%"} and "50%" in ticks
        axis = next(i for i, ln in enumerate(lines) if "└" in ln and "┬" in ln)
        last_row = max(lines.index(row) for _, row in shown) if shown else -1
        if size[0] < 120:  # narrow: the plot under the table, not beside it
            assert axis > last_row and all("┤" not in row for _, row in shown)
        values = re.findall(r"-?\d+(?:\.\d+)?", lines[axis + 1])
        assert values and all(round(float(v) * 100) % 5 == 0 for v in values), values
        # the cursor brings the levels back into view
        await pilot.press("home")
        await pilot.pause()
        assert len(list(rows(screen_lines(app)))) == 8


@sizes
@run_async
async def test_redesign_over_counts_asks_and_can_be_undone(catalog, size):
    app = app_for(Session(series_plan(catalog), catalog))
    async with app.run_test(size=size) as pilot:
        screen = await open_series(app, pilot)
        before = screen.series
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen)
        assert "8 levels hold counts" in screen_text(app)
        await pilot.press("enter")  # the default answer keeps the levels
        await settle(app, pilot)
        assert app.screen is screen and screen.series == before
        await pilot.press("d")
        await pilot.pause()
        await pilot.click("#choice-redesign")
        await settle(app, pilot)
        assert screen.series is not None and not any(lv.counts for lv in screen.series.levels)
        await pilot.press("u")  # the counted levels come back
        await pilot.pause()
        assert screen.series == before


@sizes
@run_async
async def test_leaving_with_counts_not_kept_asks(catalog, size):
    app = app_for(Session(series_plan(catalog, counted=False), catalog))
    async with app.run_test(size=size) as pilot:
        screen = await open_series(app, pilot)
        screen.query_one("#series-levels").focus()
        await pilot.press("enter")
        await type_text(pilot, "3/50")
        await pilot.press("enter")
        await pilot.pause()
        assert screen.series.levels[0].counts == [(3, 50)]
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceScreen) and "not keep yet" in screen_text(app)
        await pilot.click("#choice-stay")
        await pilot.pause()
        assert app.screen is screen
        await pilot.press("escape")
        await pilot.pause()
        await pilot.click("#choice-keep")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)
        assert app.session.plan.series.levels[0].counts == [(3, 50)]
        # once kept, leaving asks nothing
        screen = await open_series(app, pilot)
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, MainScreen)


@sizes
@run_async
async def test_enter_on_an_empty_counts_field_keeps_the_level(catalog, size):
    from mediaplan.tui.screens.plasmolysis import CountsScreen

    app = app_for(Session(series_plan(catalog), catalog))
    async with app.run_test(size=size) as pilot:
        screen = await open_series(app, pilot)
        screen.query_one("#series-levels").focus()
        await pilot.press("enter")
        assert isinstance(app.screen, CountsScreen)
        await pilot.press("ctrl+u", "enter")
        await pilot.pause()
        assert app.screen is screen
        assert screen.series.levels[0].counts == DEMO_COUNTS[0]
        # clearing is a key of its own, and u brings the counts back
        table = screen.query_one("#series-levels")
        table.move_cursor(row=0)
        await pilot.press("delete")
        await pilot.pause()
        assert screen.series.levels[0].counts == []
        await pilot.press("u")
        await pilot.pause()
        assert screen.series.levels[0].counts == DEMO_COUNTS[0]


# ---- warm start ---------------------------------------------------------------------------------

@pytest.mark.warm_start
@run_async
async def test_warm_start_readies_solver_series_and_sheet(catalog):
    seen = []
    app = MediaplanApp(Session(shoot_plan(), catalog), offer_recovery=False)
    async with app.run_test(size=SIZES[0], message_hook=seen.append) as pilot:
        for _ in range(600):  # the worker starts after the first paint; a loaded machine may take seconds
            await settle(app, pilot)
            if app.warmed is not None:
                break
            await asyncio.sleep(0.1)
        warmed = [m for m in seen if isinstance(m, MediaplanApp.Warmed)]
        assert len(warmed) == 1 and {"solve", "series", "sheet", "screens"} <= set(warmed[0].took)
        assert app.warmed == warmed[0].took
        assert isinstance(app.screen, MainScreen) and not app.session.dirty  # warming changed nothing


@run_async
async def test_a_detail_line_too_long_for_80_columns_ends_in_an_ellipsis(catalog):
    """At 80x24 the detail line has one row: a cut line says so with "…", never ends mid-word silently."""
    app = app_for(Session(Plan(recipe=Recipe(base="ms1962").with_amount("sucrose", "30 g/L")), catalog))
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        main_of(app).query_one("RecipeTable").select_id("ammonium_nitrate")
        await pilot.pause()
        line = next(ln for ln in screen_text(app).splitlines() if "ammonium nitrate NH4NO3 ·" in ln)
        shown = line.split("│")[0].strip() if "│" in line else line.strip()
        assert shown.startswith("ammonium nitrate NH4NO3 · 1650 mg/L")
        assert shown.endswith("…"), shown
