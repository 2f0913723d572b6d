"""SVG snapshots of the main screens (100x32, cursor blink and animation off, no recovery files).

Update after a deliberate visual change with: pytest tests/test_tui_snapshots.py --snapshot-update
"""

from __future__ import annotations

import pytest

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
    recipe = Recipe(base="ms1962", strength=0.5).with_amount("sucrose", "20 g/L").with_amount("mannitol", "0.1 mol/kg")
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
