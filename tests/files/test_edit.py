"""Edits to an existing plan keep what its author wrote: each edit changes only the lines it must.

The plan below is written the way people write by hand: comments (a sign-off line among them), odd
spacing, keys the plan format does not read in tables it does, a newer minor version, component keys
spelt as formulas. Every amount in it is invented for the test.
"""

from __future__ import annotations

import datetime
import difflib
import os
from dataclasses import replace
from pathlib import Path

import pytest

from mediaplan.files import planfile
from mediaplan.files.edit import EditError, updated_text
from mediaplan.files.sharing import stamp
from mediaplan.tasks.cells import CellReference

HAND_WRITTEN = '''\
# Rooting trial, bench 4
# QA: signed off by the facility on 2024-05-02 -- do not remove this line
[mediaplan]
format = "mediaplan-plan"
version = "1.4"          # written by a newer release

[plan]
title   =   "Rooting, half-strength salts"   # odd spacing, kept
author = "bench 4"
lab_code = "R-7"          # a key this version does not read

[medium]
volume = "1 L"
temperature = "22 degC"
base = "ms1962"
strength = 0.5
shelf = "B"               # unknown key in a known table

[medium.components]
KNO3 = "950 mg/L"         # spelt as the bench spells it
sucrose    = "20 g/L"
"CaCl2·2H2O" = "220 mg/L"
agar = "7 g/L"

# cells measured last spring
[cells]
osmolality = "450 mOsm/kg"
source = "incipient plasmolysis, 2024"   # lab note
kept_by = "bench 4"

[[series.levels]]
level = 1
water_potential_mpa = -0.6
plasmolysed = 0
total = 40

[[series.levels]]
level = 2
water_potential_mpa = -0.9
plasmolysed = 5          # recount pending
total = 41

[series]
osmoticum = "mannitol"
'''


@pytest.fixture
def hand_written(tmp_path):
    p = tmp_path / "rooting.toml"
    p.write_text(HAND_WRITTEN, encoding="utf-8")
    return p


def _changes(old: str, new: str) -> list[str]:
    """The changed lines, as ``-old`` / ``+new`` (no context)."""
    return [ln.rstrip("\n") for ln in difflib.unified_diff(old.splitlines(True), new.splitlines(True), n=0)
            if ln[:1] in "+-" and not ln.startswith(("+++", "---"))]


def _save(path: Path, change, catalog) -> str:
    plan = planfile.read(path, catalog=catalog)
    planfile.write(change(plan), catalog=catalog)
    return path.read_text(encoding="utf-8")


def test_the_hand_written_plan_reads(hand_written, catalog):
    plan = planfile.read(hand_written, catalog=catalog)
    assert [cid for cid, _ in plan.recipe.amounts] == ["potassium_nitrate", "sucrose", "calcium_chloride_dihydrate",
                                                       "agar"]


def test_saving_unchanged_writes_nothing(hand_written, catalog):
    before = os.stat(hand_written)
    assert _save(hand_written, lambda p: p, catalog) == HAND_WRITTEN
    assert os.stat(hand_written).st_mtime_ns == before.st_mtime_ns
    assert sorted(f.name for f in hand_written.parent.iterdir()) == ["rooting.toml"]


def test_changing_an_amount_rewrites_that_value_only(hand_written, catalog):
    text = _save(hand_written, lambda p: p.with_recipe(p.recipe.with_amount("potassium_nitrate", "1000 mg/L")),
                 catalog)
    assert _changes(HAND_WRITTEN, text) == ['-KNO3 = "950 mg/L"         # spelt as the bench spells it',
                                            '+KNO3 = "1000 mg/L"         # spelt as the bench spells it']
    assert (hand_written.parent / "rooting.toml.bak").read_text(encoding="utf-8") == HAND_WRITTEN


def test_adding_and_removing_components_touch_their_lines_only(hand_written, catalog):
    def change(p):
        return p.with_recipe(p.recipe.without("agar").with_amount("mannitol", "0.1 mol/kg"))

    text = _save(hand_written, change, catalog)
    assert _changes(HAND_WRITTEN, text) == ['-agar = "7 g/L"', '+mannitol = "0.1 mol/kg"']
    assert text.index("mannitol") < text.index("# cells measured last spring")  # in its table, not the next


def test_settings_change_in_place(hand_written, catalog):
    text = _save(hand_written, lambda p: replace(p, title="Rooting, quarter strength").with_recipe(
        p.recipe.with_settings(strength=0.25, temperature="25 degC")), catalog)
    assert _changes(HAND_WRITTEN, text) == [
        '-title   =   "Rooting, half-strength salts"   # odd spacing, kept',
        '+title   =   "Rooting, quarter strength"   # odd spacing, kept',
        '-temperature = "22 degC"',
        '+temperature = "25 degC"',
        '-strength = 0.5',
        '+strength = 0.25']


def test_a_stamp_adds_its_table_and_nothing_else(hand_written, catalog):
    text = _save(hand_written, lambda p: stamp(p, catalog), catalog)
    changes = _changes(HAND_WRITTEN, text)
    assert all(ln.startswith("+") for ln in changes)  # nothing the author wrote is changed or removed
    assert text.startswith(HAND_WRITTEN)  # the new table follows what was there
    again = planfile.loads(text, catalog=catalog)
    assert again.provenance.components["potassium_nitrate"] == catalog.components["potassium_nitrate"].digest


def test_a_second_stamp_changes_only_what_differs_and_keeps_the_first_backup(hand_written, catalog):
    first = _save(hand_written, lambda p: stamp(p, catalog), catalog)
    plan = planfile.read(hand_written, catalog=catalog)
    later = replace(stamp(plan, catalog), path=plan.path, disk_digest=plan.disk_digest)
    later.provenance = replace(later.provenance, recorded="2031-01-01")  # another day (invented)
    planfile.write(later, catalog=catalog)
    second = hand_written.read_text(encoding="utf-8")
    assert [ln for ln in _changes(first, second)] == [
        f'-recorded = "{datetime.date.today().isoformat()}"', '+recorded = "2031-01-01"']
    folder = hand_written.parent
    assert (folder / "rooting.toml.bak").read_text(encoding="utf-8") == HAND_WRITTEN  # not overwritten
    assert (folder / "rooting.toml.2.bak").read_text(encoding="utf-8") == first


def test_cells_written_back_keep_the_lab_notes(hand_written, catalog):
    def change(p):
        return replace(p, cells=replace(p.cells, osmolality="428.8 mOsm/kg", ci95="410 to 447 mOsm/kg"))

    text = _save(hand_written, change, catalog)
    assert _changes(HAND_WRITTEN, text) == ['-osmolality = "450 mOsm/kg"', '+osmolality = "428.8 mOsm/kg"',
                                            '+ci95 = "410 to 447 mOsm/kg"']


def test_series_counts_written_back_change_those_counts(hand_written, catalog):
    def change(p):
        levels = list(p.series.levels)
        levels[1] = replace(levels[1], plasmolysed=7)
        return replace(p, series=replace(p.series, levels=tuple(levels)))

    text = _save(hand_written, change, catalog)
    assert _changes(HAND_WRITTEN, text) == ["-plasmolysed = 5          # recount pending",
                                            "+plasmolysed = 7          # recount pending"]


def test_a_solve_written_back_changes_the_amount_and_adds_the_target(hand_written, catalog):
    from mediaplan.files.plan_tables import TargetRecord

    def change(p):
        p = p.with_recipe(p.recipe.with_amount("mannitol", "0.15 mol/kg"))
        p.target = TargetRecord(value="-0.8 MPa", osmotica=("mannitol",))
        return p

    text = _save(hand_written, change, catalog)
    changes = _changes(HAND_WRITTEN, text)
    assert changes[0] == '+mannitol = "0.15 mol/kg"'
    assert all(ln.startswith("+") for ln in changes)
    assert planfile.loads(text, catalog=catalog).target.value == "-0.8 MPa"


def test_a_removed_table_goes_with_its_lines(hand_written, catalog):
    text = _save(hand_written, lambda p: replace(p, cells=None), catalog)
    assert _changes(HAND_WRITTEN, text) == ['-[cells]', '-osmolality = "450 mOsm/kg"',
                                            '-source = "incipient plasmolysis, 2024"   # lab note',
                                            '-kept_by = "bench 4"', "-"]


def test_the_edited_text_reads_back_as_the_plan_saved(hand_written, catalog):
    plan = planfile.read(hand_written, catalog=catalog)
    plan = plan.with_recipe(plan.recipe.with_amount("sucrose", "25 g/L").without("agar"))
    text = updated_text(HAND_WRITTEN, plan, catalog=catalog)
    assert planfile.to_dict(planfile.loads(text, catalog=catalog)) == planfile.to_dict(plan)


def test_without_a_catalog_the_catalog_in_force_resolves_spellings(hand_written, catalog):
    plan = planfile.read(hand_written, catalog=catalog)
    plan = plan.with_recipe(plan.recipe.with_amount("potassium_nitrate", "900 mg/L"))
    text = updated_text(HAND_WRITTEN, plan)  # as the terminal app's save calls it
    assert 'KNO3 = "900 mg/L"' in text and "potassium_nitrate" not in text


def test_an_edit_that_cannot_be_made_falls_back_to_writing_the_plan_whole(hand_written, catalog, monkeypatch):
    from mediaplan.files import edit

    def cannot(*a, **k):
        raise TypeError("a layout the editor cannot follow")

    monkeypatch.setattr(edit, "_merge", cannot)
    plan = planfile.read(hand_written, catalog=catalog)
    plan = plan.with_recipe(plan.recipe.with_amount("sucrose", "25 g/L"))
    notes: list[str] = []
    planfile.write(plan, catalog=catalog, notes=notes)
    assert hand_written.read_text(encoding="utf-8") == planfile.dumps(plan)  # whole, and right
    assert notes == ["the plan was written afresh; its comments and layout could not be kept (the editor cannot "
                     "change this layout: TypeError)",
                     f"the previous version is kept as {hand_written}.bak"]
    assert (hand_written.parent / "rooting.toml.bak").read_text(encoding="utf-8") == HAND_WRITTEN


def test_inline_tables_are_edited_inside(tmp_path, catalog):
    text = ('medium = { volume = "1 L", components = { sucrose = "30 g/L" } }  # all on one line\n'
            '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n')
    p = tmp_path / "inline.toml"
    p.write_text(text, encoding="utf-8")
    out = _save(p, lambda pl: pl.with_recipe(pl.recipe.with_amount("sucrose", "20 g/L")), catalog)
    assert _changes(text, out) == [
        '-medium = { volume = "1 L", components = { sucrose = "30 g/L" } }  # all on one line',
        '+medium = { volume = "1 L", components = { sucrose = "20 g/L" } }  # all on one line']


def test_edit_error_for_text_that_no_longer_reads(catalog):
    plan = planfile.loads(HAND_WRITTEN, catalog=catalog)
    with pytest.raises(EditError, match="cannot be read"):
        updated_text(HAND_WRITTEN.replace('"950 mg/L"', '"950 parsecs"'), plan, catalog=catalog)


def test_new_files_are_still_written_by_the_plan_writer(tmp_path, catalog):
    plan = planfile.loads(HAND_WRITTEN, catalog=catalog)  # read from text: no file of its own
    out = tmp_path / "copy.toml"
    planfile.write(plan, out)
    assert out.read_text(encoding="utf-8") == planfile.dumps(plan)
    assert "#" not in out.read_text(encoding="utf-8")  # written whole: the comments belong to the other file


def test_a_plan_saved_over_another_file_with_force_is_written_whole(hand_written, tmp_path, catalog):
    other = planfile.loads(HAND_WRITTEN, catalog=catalog)
    other.title = "another plan"
    planfile.write(other, hand_written, force=True)
    assert hand_written.read_text(encoding="utf-8") == planfile.dumps(other)


@pytest.mark.parametrize("spelling", ["KNO3", "potassium nitrate", "potassium_nitrate"])
def test_every_spelling_of_a_key_is_kept(tmp_path, catalog, spelling):
    key = f'"{spelling}"' if " " in spelling else spelling
    text = ('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "1 L"\n\n'
            f'[medium.components]\n{key} = "1 g/L"\n')  # 1 g/L: invented
    p = tmp_path / "p.toml"
    p.write_text(text, encoding="utf-8")
    out = _save(p, lambda pl: pl.with_recipe(pl.recipe.with_amount("potassium_nitrate", "2 g/L")), catalog)
    assert _changes(text, out) == [f'-{key} = "1 g/L"', f'+{key} = "2 g/L"']


def test_cells_of_a_plan_without_cells_are_added_as_a_table(tmp_path, catalog):
    text = ('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "1 L"\n\n'
            '[medium.components]\nsucrose = "30 g/L"  # common practice\n')
    p = tmp_path / "p.toml"
    p.write_text(text, encoding="utf-8")
    out = _save(p, lambda pl: replace(pl, cells=CellReference(osmolality="400 mOsm/kg")), catalog)  # invented
    assert out == text + '\n[cells]\nosmolality = "400 mOsm/kg"\n'
