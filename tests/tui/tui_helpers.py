"""Helpers shared by the terminal app's pilot and snapshot tests: sizes, demo plans, the rendered text."""

from __future__ import annotations

import asyncio
import functools
import io

from rich.console import Console

from mediaplan.files.planfile import Plan
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.cells import CellReference
from mediaplan.tui.app import MediaplanApp

#: the smallest size the app is made for, and a large one
SIZES = [(80, 24), (140, 45)]
SIZE_IDS = ["80x24", "140x45"]

#: invented counts (two strips per level), the same numbers as plans/demo_plasmolysis_counts.csv
DEMO_COUNTS = ([(0, 58), (1, 44)], [(2, 48), (2, 40)], [(5, 61), (5, 42)], [(18, 42), (18, 53)],
               [(39, 55), (36, 48)], [(36, 43), (48, 53)], [(47, 47), (47, 47)], [(50, 51), (49, 50)])


def run_async(fn):
    """Run a pilot scenario in its own event loop (no async pytest plugin needed)."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        return asyncio.run(fn(*args, **kwargs))
    return wrapper


def shoot_plan(title: str = "Shoot multiplication medium (invented demo data)") -> Plan:
    """Full-strength MS with a cytokinin, an auxin and agar (an invented demo scenario)."""
    recipe = (Recipe(base="ms1962").with_amount("bap", "1 mg/L").with_amount("naa", "0.1 mg/L")
              .with_amount("agar", "7 g/L"))
    return Plan(recipe=recipe, title=title, notes="Invented demo plan: shoots of a woody ornamental.")


def half_ms_plan() -> Plan:
    """Half-strength base (every line halved, as the snapshots show it) with sucrose, mannitol and a cell
    reference (an invented demo scenario)."""
    recipe = Recipe(base="ms1962", strength=0.5, strength_scope="all").with_amount("sucrose", "20 g/L").with_amount(
        "mannitol", "0.1 mol/kg")
    return Plan(recipe=recipe, title="Snapshot demo (invented)", cells=CellReference(osmolality="450 mOsm/kg"))


def app_for(session) -> MediaplanApp:
    return MediaplanApp(session, offer_recovery=False,
                        start_dir=session.plan.path.parent if session.plan.path else None)


def screen_lines(app) -> list[str]:
    """The screen as the user sees it: one string per terminal line (the same render as a screenshot)."""
    width, height = app.size
    console = Console(width=width, height=height, file=io.StringIO(), record=True, legacy_windows=False,
                      force_terminal=True, color_system="truecolor")
    console.print(app.screen._compositor.render_update(full=True, screen_stack=app._background_screens,
                                                       simplify=True))
    return console.export_text(styles=False).splitlines()[:height]


def screen_text(app) -> str:
    return "\n".join(screen_lines(app))


async def type_text(pilot, text: str) -> None:
    for ch in text:
        await pilot.press("space" if ch == " " else ch)


async def settle(app, pilot) -> None:
    """Wait for workers and the refreshes they cause."""
    await app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.pause()
