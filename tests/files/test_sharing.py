"""Provenance of plans: recording catalog entries, comparing with another catalog, embedded copies."""

from __future__ import annotations

import pytest
import yaml

from mediaplan.cli.main import main
from mediaplan.files import planfile
from mediaplan.files.catalog import bundled_folder, load_catalog
from mediaplan.files.planfile import Plan
from mediaplan.files.sharing import (
    EmbeddedConflictError,
    canonical_digest,
    catalog_for,
    compare_provenance,
    embedded_entry,
    provenance_of,
    provenance_record,
    read_plan,
)
from mediaplan.medium.errors import CatalogError
from mediaplan.medium.recipe import Recipe


def _facility(tmp_path, **changes):
    """A facility folder whose ammonium_nitrate entry differs from the bundled one."""
    data = yaml.safe_load((bundled_folder() / "components" / "salts.yaml").read_text(encoding="utf-8"))
    entry = next(c for c in data["components"] if c["id"] == "ammonium_nitrate")
    entry.update(changes)
    entry["source"] = {k: "facility measurement (invented for this test)" for k in
                       ("molar_mass", "solubility", "apparent_molar_volume")}
    folder = tmp_path / "facility"
    (folder / "components").mkdir(parents=True)
    (folder / "components" / "ours.yaml").write_text(yaml.safe_dump({"components": [entry]}), encoding="utf-8")
    return folder


def _plan(catalog, embed=False, tmp_path=None):
    r = Recipe(base="ms1962").with_amount("bap", "1 mg/L").with_amount("potassium_iodide", "0 g/L")
    plan = Plan(recipe=r, title="Demo (invented)")
    plan.provenance = provenance_record(r, catalog, embed=embed)
    if tmp_path is not None:
        planfile.write(plan, tmp_path / "p.toml")
    return plan


def test_provenance_lists_every_entry_used_with_its_digest(catalog):
    prov = _plan(catalog).provenance
    comps = prov.components
    assert comps["bap"] == catalog.components["bap"].digest
    assert comps["ammonium_nitrate"] == catalog.components["ammonium_nitrate"].digest
    assert "potassium_iodide" in comps  # removed by 0 g/L, still part of what the plan means
    assert prov.media == {"ms1962": catalog.media["ms1962"].digest}
    # the table a document prints is the record's own table
    assert provenance_of(_plan(catalog).recipe, catalog) == dict(prov)


def test_same_catalog_shows_no_difference(catalog, tmp_path):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    plan = planfile.read(tmp_path / "p.toml")
    assert compare_provenance(plan, catalog) == []


def test_another_catalog_is_told_which_entries_differ(catalog, tmp_path):
    _plan(catalog, tmp_path=tmp_path)
    other = load_catalog([bundled_folder(), _facility(tmp_path, solubility=150.0)])
    diffs = compare_provenance(planfile.read(tmp_path / "p.toml"), other)
    assert [(d.id, d.status) for d in diffs] == [("ammonium_nitrate", "changed")]
    assert "ours.yaml" in diffs[0].text()


def test_embedded_copy_round_trips_through_toml(catalog, tmp_path):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    plan = planfile.read(tmp_path / "p.toml")
    entry = plan.provenance.embedded_entries("components")["calcium_chloride_dihydrate"]
    assert canonical_digest(entry) == canonical_digest(embedded_entry(catalog.components["calcium_chloride_dihydrate"]))


def test_embedded_entry_fills_in_a_component_the_catalog_lacks(catalog, tmp_path):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    bare = planfile.read(tmp_path / "p.toml")
    smaller = load_catalog([bundled_folder()])
    del smaller.components["bap"]
    merged, notes = catalog_for(bare, smaller)
    assert "bap" in merged.components and any("bap" in n for n in notes)
    assert [d.status for d in compare_provenance(bare, smaller)] == ["embedded-only"]


def test_embedded_conflict_is_an_error_unless_settled(catalog, tmp_path):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    other = load_catalog([bundled_folder(), _facility(tmp_path, solubility=150.0)])
    with pytest.raises(EmbeddedConflictError, match="ammonium_nitrate"):
        read_plan(tmp_path / "p.toml", other)
    _, cat_plan, _ = read_plan(tmp_path / "p.toml", other, trust="plan")
    assert cat_plan.components["ammonium_nitrate"].solubility == catalog.components["ammonium_nitrate"].solubility
    _, cat_local, _ = read_plan(tmp_path / "p.toml", other, trust="local")
    assert cat_local.components["ammonium_nitrate"].solubility == 150.0


def test_cli_conflict_is_one_line_exit_2(catalog, tmp_path, capsys):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    folder = _facility(tmp_path, solubility=150.0)
    assert main(["--catalog", str(folder), "prep", str(tmp_path / "p.toml")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert err[0].startswith("note: facility catalog entry in force: ammonium_nitrate")  # shadowing reported
    assert len(err) == 2 and "--trust" in err[1]


def test_malformed_embedded_entry_is_one_clear_line(catalog, tmp_path, capsys):
    _plan(catalog, embed=True, tmp_path=tmp_path)
    path = tmp_path / "p.toml"
    text = path.read_text(encoding="utf-8").replace('group = "macro"', 'group = "rocks"', 1)
    path.write_text(text, encoding="utf-8")
    with pytest.raises(CatalogError, match="unknown group"):
        read_plan(path, catalog)
    assert main(["prep", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "provenance.embedded.components" in err


def test_an_embedded_copy_carries_the_solubility_table(catalog, tmp_path):
    """A plan kept cold must be capped at the same solubility wherever it is opened: the rows travel."""
    r = Recipe(storage_temperature="4 degC").with_amount("mannitol", "0.3 mol/kg")
    plan = Plan(recipe=r, title="Cold wash (invented)")
    plan.provenance = provenance_record(r, catalog, embed=True)
    planfile.write(plan, tmp_path / "cold.toml")
    bare = planfile.read(tmp_path / "cold.toml")
    smaller = load_catalog([bundled_folder()])
    del smaller.components["mannitol"]
    merged, _ = catalog_for(bare, smaller)
    here, there = catalog.components["mannitol"], merged.components["mannitol"]
    assert here.solubility_table and there.solubility_table == here.solubility_table
    assert there.saturation_molality_at(277.15) == here.saturation_molality_at(277.15)
