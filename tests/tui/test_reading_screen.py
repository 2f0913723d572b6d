"""The osmometer reading screen (g): verdict, interval and ranked slips as you type, bad input inline, the
reading recorded in the plan and saved with it, every other byte of the file kept."""

from __future__ import annotations

import datetime

from mediaplan.files.planfile import Plan, read
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.session import Session
from tests.tui.tui_helpers import app_for, run_async, screen_lines

SIZE = (110, 40)
# an invented wash (demo scenario)
WASH = (Recipe(volume="500 mL", temperature="22 degC").with_amount("mannitol", "0.5 mol/L")
        .with_amount("calcium_chloride_dihydrate", "10 mM"))


def _text(app) -> str:
    return "\n".join(screen_lines(app))


@run_async
async def test_reading_screen_verdict_slips_and_record(catalog, tmp_path):
    from mediaplan.tui.screens.reading import ReadingScreen

    path = tmp_path / "wash.toml"
    session = Session(Plan(recipe=WASH, title="Wash (invented)"), catalog)
    session.save(path)
    before = path.read_bytes()
    session = Session.open(path, catalog)
    predicted = evaluate(WASH, catalog).osmometer_mosmol_per_kg
    lower = evaluate(WASH.with_amount("mannitol", "0.05 mol/L"), catalog).osmometer_mosmol_per_kg
    app = app_for(session)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("g")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, ReadingScreen)
        assert screen.query_one("#reading-record").disabled
        # bad input: said inline, nothing to record
        screen.query_one("#reading-value").value = "-3 mOsm/kg"
        await pilot.pause()
        assert screen.query_one("#reading-message").has_class("-error")
        assert screen.result is None and screen.query_one("#reading-record").disabled
        # a consistent reading
        screen.query_one("#reading-value").value = f"{predicted:.0f} mOsm/kg"
        await pilot.pause()
        assert screen.result.verdict == "consistent"
        assert "CONSISTENT" in _text(app)
        # mannitol at a tenth: lower, the slip among the first three shown
        screen.query_one("#reading-value").value = f"{lower:.1f} mOsm/kg"
        await pilot.pause()
        assert screen.result.verdict == "lower"
        top = [(e.kind, e.component_ids, e.factor) for e in screen.result.explanations[:3]]
        assert ("amount", ["mannitol"], 0.1) in top
        shown = _text(app)
        assert "LOWER" in shown and "mannitol" in shown.lower()
        lo, hi = screen.result.interval_mosmol_per_kg
        assert f"{lo:.1f}" in shown and f"{hi:.1f}" in shown
        screen.query_one("#reading-operator").value = "demo"
        await pilot.pause()
        await pilot.click("#reading-record")
        await pilot.pause()
        assert not isinstance(app.screen, ReadingScreen)
        assert app.session.dirty
        rec = app.session.plan.readings[-1]
        assert (rec.value, rec.instrument, rec.operator) == (f"{lower:.1f} mOsm/kg", "freezing-point", "demo")
        assert rec.date == datetime.date.today()
        await pilot.press("ctrl+s")
        await pilot.pause()
    after = path.read_bytes()
    assert after.startswith(before)
    assert [r.value for r in read(path, catalog=catalog).readings] == [f"{lower:.1f} mOsm/kg"]


@run_async
async def test_reading_is_offered_in_the_palette_and_closes(catalog):
    from mediaplan.tui.palette import PlanCommands
    from mediaplan.tui.screens.reading import ReadingScreen

    app = app_for(Session(Plan(recipe=WASH), catalog))
    async with app.run_test(size=SIZE) as pilot:
        titles = [t for t, _, _ in PlanCommands(app.screen)._available()]
        assert "Check an osmometer reading of a batch" in titles
        await pilot.press("g")
        await pilot.pause()
        assert isinstance(app.screen, ReadingScreen)
        app.screen.query_one("#reading-chamber").value = "25 degC"
        app.screen.query_one("#reading-value").value = "500 mOsm/kg"
        await pilot.pause()
        assert app.screen.query_one("#reading-message").has_class("-error")  # a chamber needs vapour pressure
        await pilot.press("escape")
        await pilot.pause()
        assert not isinstance(app.screen, ReadingScreen)
        assert app.session.plan.readings == () and not app.session.dirty
