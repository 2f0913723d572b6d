"""SVG snapshots of the main screens (100x32, and the main and plasmolysis screens at 80x24 and 140x45;
cursor blink and animation off, no recovery files).

Update after a deliberate visual change with: pytest tests/tui/test_tui_snapshots.py --snapshot-update
"""

from __future__ import annotations

import pytest
from tui_helpers import DEMO_COUNTS, SIZE_IDS, SIZES, settle

from mediaplan.files.catalog import get_catalog
from mediaplan.files.planfile import Plan
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.cells import CellReference
from mediaplan.tui.app import MediaplanApp
from mediaplan.tui.session import Session

SIZE = (100, 32)


@pytest.fixture(autouse=True)
def _isolated(tmp_path, monkeypatch):
    monkeypatch.setenv("MEDIAPLAN_CONFIG_DIR", str(tmp_path / "config"))
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))
    monkeypatch.setenv("TEXTUAL_ANIMATIONS", "none")


def demo_app() -> MediaplanApp:
    """Half-strength base with sucrose and a cell reference (an invented demo scenario)."""
    recipe = (Recipe(base="ms1962", strength=0.5, strength_scope="all")  # every line halved, as first shown
              .with_amount("sucrose", "20 g/L").with_amount("mannitol", "0.1 mol/kg"))
    plan = Plan(recipe=recipe, title="Snapshot demo (invented)", cells=CellReference(osmolality="450 mOsm/kg"))
    app = MediaplanApp(Session(plan, get_catalog()), offer_recovery=False)
    app.cursor_blink = False  # type: ignore[attr-defined]
    return app


async def _no_blink(pilot) -> None:
    for inp in pilot.app.screen.query("Input"):
        inp.cursor_blink = False
    await pilot.pause()


def test_main_screen(snap_compare):
    assert snap_compare(demo_app(), terminal_size=SIZE, run_before=_no_blink)


def test_amount_dialog_with_bad_input(snap_compare):
    async def run_before(pilot):
        await pilot.press("down", "enter")
        await _no_blink(pilot)
        await pilot.press("ctrl+u", *"3 kg/xyz")
        await _no_blink(pilot)

    assert snap_compare(demo_app(), terminal_size=SIZE, run_before=run_before)


def test_component_picker(snap_compare):
    async def run_before(pilot):
        await pilot.press("a")
        await _no_blink(pilot)
        await pilot.press(*"sorb")
        await _no_blink(pilot)

    assert snap_compare(demo_app(), terminal_size=SIZE, run_before=run_before)


def series_app() -> MediaplanApp:
    """A designed mannitol series with the invented demo counts (two strips per level)."""
    from mediaplan.files.plan_tables import series_record_of
    from mediaplan.tasks.plasmolysis import design_series, potentials_between

    catalog = get_catalog()
    design = design_series(Recipe(volume="50 mL"), "mannitol", potentials_between(-0.4e6, -1.8e6, 8), catalog=catalog,
                           stock="1 mol/kg", spacing="8 levels evenly spaced in water potential")
    series = series_record_of(design)
    for i, counts in enumerate(DEMO_COUNTS):
        series = series.with_counts(i, counts)
    plan = Plan(recipe=Recipe(volume="50 mL"), title="Series demo (invented)", series=series)
    app = MediaplanApp(Session(plan, catalog), offer_recovery=False)
    app.cursor_blink = False  # type: ignore[attr-defined]
    return app


async def fitted_series(pilot) -> None:
    """The plasmolysis screen after a fit of the demo counts."""
    await pilot.pause()
    await pilot.press("p")
    await _no_blink(pilot)
    await pilot.press("f")
    await settle(pilot.app, pilot)
    await _no_blink(pilot)


async def amount_preview(pilot) -> None:
    """The amount dialog on sucrose with a new amount typed: the preview beside the plan as it stands."""
    await pilot.pause()
    pilot.app.get_screen("main").query_one("RecipeTable").select_id("sucrose")
    await pilot.press("enter")
    await _no_blink(pilot)
    await pilot.press("ctrl+u", *"30 g/L")
    await _no_blink(pilot)


#: the scenarios the captures in docs/ are made from: name -> (app, what to do before the capture)
SCENARIOS = {"main": (demo_app, _no_blink), "plasmolysis": (series_app, fitted_series),
             "amount": (demo_app, amount_preview)}


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
def test_main_screen_at(snap_compare, size):
    assert snap_compare(demo_app(), terminal_size=size, run_before=_no_blink)


@pytest.mark.parametrize("size", SIZES, ids=SIZE_IDS)
def test_plasmolysis_screen_fitted_at(snap_compare, size):
    assert snap_compare(series_app(), terminal_size=size, run_before=fitted_series)


def test_amount_preview_at_80x24(snap_compare):
    assert snap_compare(demo_app(), terminal_size=SIZES[0], run_before=amount_preview)
