"""The terminal app says, on opening a plan, what every command says about its catalog record."""

from __future__ import annotations

import yaml

from mediaplan.files import planfile
from mediaplan.files.catalog import bundled_folder, get_catalog
from mediaplan.files.planfile import Plan
from mediaplan.files.sharing import mismatch_notes, provenance_record
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.session import Session
from tests.tui.tui_helpers import app_for, run_async


def _facility(tmp_path):
    """A facility folder whose sucrose apparent molar volume differs (209.8, invented for this test)."""
    data = yaml.safe_load((bundled_folder() / "components" / "sugars_polyols.yaml").read_text(encoding="utf-8"))
    entry = next(c for c in data["components"] if c["id"] == "sucrose")
    entry["apparent_molar_volume"] = 209.8
    entry["source"] = {k: "facility measurement (invented for this test)" for k in entry.get("source", {})}
    folder = tmp_path / "facility"
    (folder / "components").mkdir(parents=True)
    (folder / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [entry]}), encoding="utf-8")
    return folder


@run_async
async def test_opening_a_plan_whose_record_differs_notifies_the_same_warning(catalog, tmp_path):
    r = Recipe().with_amount("sucrose", "30 g/L")
    path = tmp_path / "stamped.toml"
    planfile.write(Plan(recipe=r, title="Stamped (invented)", provenance=provenance_record(r, catalog)), path)
    local = get_catalog(extra=[_facility(tmp_path)])
    session = Session.open(path, local)
    expected = mismatch_notes(session.plan, local)
    assert expected and expected[0].startswith("catalog differs from the plan's record: component sucrose")
    app = app_for(Session.new(local))
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        app._open(path)
        await pilot.pause()
        said = [str(n.message) for n in app._notifications]
        assert any(expected[0] in m and "local catalog's entry is used" in m for m in said)
    # the same plan opened at start-up says it too
    app = app_for(Session.open(path, local))
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        assert any(expected[0] in str(n.message) for n in app._notifications)
