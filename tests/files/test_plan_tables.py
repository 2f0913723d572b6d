"""The optional tables of a plan as typed records: shape errors with file/line/field, records made from
results, edits written back in place."""

from __future__ import annotations

import datetime
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from mediaplan.files import planfile
from mediaplan.files.counts import read_counts_csv
from mediaplan.files.plan_tables import (
    TargetRecord,
    cell_reference_of,
    line_of,
    series_record_of,
    series_table,
    target_record_of,
)
from mediaplan.medium.errors import CatalogError, FitError, MediaplanError, PlanFileError
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.cells import CellReference, cell_reference, cell_tolerance
from mediaplan.tasks.plasmolysis import design_series, fit_counts, potentials_between
from mediaplan.tasks.plasmolysis.counts import LevelRecord, SeriesRecord, counts_from_series
from mediaplan.tasks.projection import ProjectionRecord

ROOT = Path(__file__).resolve().parents[2]
HEAD = '[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n[medium]\nvolume = "1 L"\n'  # lines 1-5
#: a plan of a newer minor version: keys this version does not know are kept, not refused
NEWER = HEAD.replace('version = "1.0"', 'version = "1.1"')


# ---- reading: the shape of each table, located ----------------------------------------------------
@pytest.mark.parametrize("body, cls, message, line, field", [
    ('[cells]\nosmolality = 450\n', PlanFileError, "osmolality must be text", 7, "cells.osmolality"),
    ('[cells]\nosmolality = "450 mOsm/kg"\ntolerance = [0.1]\n', PlanFileError,
     "tolerance must be a fraction or a percentage", 8, "cells.tolerance"),
    ('[target]\nvalue = "-0.8 MPa"\nosmotica = "mannitol"\n', PlanFileError, "osmotica must be an array of text",
     8, "target.osmotica"),
    ('[target]\nratio = ["1", "1"]\n', PlanFileError, "ratio must be an array of numbers", 7, "target.ratio"),
    ('[target]\nvalue = "-1 MPa"\n[target.hold]\nsucrose = 20\n', PlanFileError,
     "amount of sucrose must be text with a unit", 9, "target.hold.sucrose"),
    ('[projection]\nweeks = [4]\n', PlanFileError, "weeks must be a number or a text", 7, "projection.weeks"),
    ('[series]\nosmoticum = "mannitol"\nlevels = 3\n', PlanFileError,
     "levels must be an array of tables, one [[series.levels]] per level", 8, "series.levels"),
    ('[series]\nlevels = [1, 2]\n', PlanFileError, "a level must be a table", 7, "series.levels[1]"),
    ('[[series.levels]]\nwater_potential_mpa = -0.4\n[[series.levels]]\nlevel = 2\nwater_potential_mpa = "-0.6"\n',
     PlanFileError, "water_potential_mpa must be a negative number", 10, "series.levels[2].water_potential_mpa"),
    ('[[series.levels]]\nwater_potential_mpa = -0.4\nplasmolysed = [1, "a"]\ntotal = [10, 10]\n', PlanFileError,
     "plasmolysed 'a' is not a whole number of cells", 8, "series.levels[1].plasmolysed[2]"),
    ('[series]\nbackground_potential_mpa = "0"\n', PlanFileError, "background_potential_mpa must be a number", 7,
     "series.background_potential_mpa"),
    ('[provenance]\ncomponents = 3\n', CatalogError, "[provenance.components] must be a table", 7,
     "provenance.components"),
    ('[provenance.embedded]\ncomponents = 1\n', CatalogError, "[provenance.embedded.components] must be a table", 7,
     "provenance.embedded.components"),
])
def test_a_table_of_the_wrong_shape_names_file_line_and_field(body, cls, message, line, field):
    with pytest.raises(cls) as ei:
        planfile.loads(HEAD + body, file="bad.toml")
    exc = ei.value
    assert exc.message == message and exc.file == "bad.toml" and exc.line == line and exc.field == field
    assert "\n" not in str(exc)


def test_a_table_that_is_not_a_table_keeps_its_message():
    with pytest.raises(PlanFileError, match=r"bad.toml:1: cells: \[cells\] must be a table"):
        planfile.loads('cells = 5\n' + HEAD, file="bad.toml")


def test_line_of_finds_keys_inside_their_table_and_array_entry():
    text = '[cells]\nsource = "a"\n[[series.levels]]\nlevel = 1\n[[series.levels]]\nlevel = 2\n[series.x]\nlevel = 9\n'
    assert line_of(text, "source", "cells") == 2
    assert line_of(text, "level", "series.levels", nth=2) == 6
    assert line_of(text, None, "series.levels", nth=1) == 3
    assert line_of(text, "missing", "cells") == 1  # the table's header
    assert line_of(text, "level", "nosuch") == 4  # no such table: the first occurrence


def test_empty_tables_read_as_absent():
    plan = planfile.loads(HEAD + "[cells]\n[target]\n[series]\n")
    assert plan.cells is None and plan.target is None and plan.series is None


# ---- the records from a file, into the tasks ------------------------------------------------------
def test_demo_series_reads_as_records_and_fits_like_its_counts_file(catalog):
    path = ROOT / "plans" / "demo_plasmolysis_series.toml"
    plan = planfile.read(path, catalog=catalog)
    s = plan.series
    assert isinstance(s, SeriesRecord) and all(isinstance(lv, LevelRecord) for lv in s.levels)
    assert (s.osmoticum, s.stock, len(s.levels)) == ("mannitol", "1 mol/kg", 8)
    assert s.levels[0].counts == [(0, 58), (1, 44)]
    # the plan's counts are the invented numbers of the demo counts file: the same fit
    from_plan = fit_counts(counts_from_series(s, file=str(path), temperature_k=plan.recipe.temperature_k))
    from_csv = fit_counts(read_counts_csv(ROOT / "plans" / "demo_plasmolysis_counts.csv"))
    assert from_plan.water_potential_50_mpa == pytest.approx(from_csv.water_potential_50_mpa, rel=1e-12)


@pytest.mark.parametrize("change, message, field", [
    (lambda lv: replace(lv, plasmolysed=(60, 1)), "plasmolysed (60) is more than total (58)",
     "series.levels[1].plasmolysed[1]"),
    (lambda lv: replace(lv, total=(58,)), "2 plasmolysed counts but 1 totals", "series.levels[1]"),
    (lambda lv: replace(lv, plasmolysed=(0.5, 1)), "plasmolysed 0.5 is not a whole number of cells",
     "series.levels[1].plasmolysed[1]"),
    (lambda lv: replace(lv, total=(0, 44)), "total is 0: no cells counted", "series.levels[1].total[1]"),
    (lambda lv: replace(lv, water_potential_mpa=0.4), "water_potential_mpa must be a negative number",
     "series.levels[1].water_potential_mpa"),
])
def test_counts_that_cannot_be_fitted_name_the_level(catalog, change, message, field):
    plan = planfile.read(ROOT / "plans" / "demo_plasmolysis_series.toml", catalog=catalog)
    levels = (change(plan.series.levels[0]), *plan.series.levels[1:])
    with pytest.raises(FitError) as ei:
        counts_from_series(replace(plan.series, levels=levels), file="demo.toml")
    assert ei.value.message == message and ei.value.field == field and ei.value.file == "demo.toml"


def test_cells_record_feeds_tonicity(catalog):
    plan = planfile.loads(HEAD + '[cells]\npotential = "-0.55 MPa"\ntolerance = "15 %"\n')
    # -0.55 MPa at 25 °C is 222.5 mOsm/kg: R T rho_w = 8.314462618 (CODATA 2018) x 298.15 x 997.0476 kg/m^3
    # (IAPWS-95, 0.101325 MPa) = 2.47164 MPa per osmol/kg; the engine's water density agrees to 1e-6
    assert cell_reference(None, plan.cells, 298.15) == pytest.approx(
        0.55 / (8.314462618 * 298.15 * 997.0476e-6) * 1000, rel=1e-5)
    assert cell_reference(None, plan, 298.15) == cell_reference(None, plan.cells, 298.15)  # a plan holding it
    assert cell_tolerance(None, plan.cells) == pytest.approx(0.15)
    assert cell_reference("300 mOsm/kg", plan.cells, 298.15) == pytest.approx(300.0)  # a typed value wins
    with pytest.raises(MediaplanError) as ei:
        cell_reference(None, CellReference(osmolality="cloudy"), 298.15)
    assert ei.value.field == "cells.osmolality"


# ---- records made from results: the tables the tasks themselves describe ----------------------------
def test_series_record_of_a_design_is_its_plan_table(catalog):
    for stock in (None, "1 mol/kg"):
        d = design_series(Recipe(volume="50 mL"), "mannitol", potentials_between(-0.4e6, -1.6e6, 5), catalog=catalog,
                          stock=stock, spacing="5 levels")
        record = series_record_of(d)
        assert series_table(record) == d.plan_table()
        assert all(lv.plasmolysed == () and lv.total == () for lv in record.levels)


def test_target_record_of_a_solve_is_its_target_table(catalog):
    from mediaplan.tasks.solve import solve_target

    r = Recipe(base="ms1962")
    for kw in ({}, {"hold": {"sucrose": "20 g/L"}}, {"ratio": [3.0, 1.0]}):
        osmotica = ["mannitol"] if not kw else ["sucrose", "mannitol"] if "hold" in kw else ["sorbitol", "mannitol"]
        sol = solve_target(r, catalog, "-1 MPa", osmotica, **kw)
        record = target_record_of(sol)
        assert dict(record) == sol.target_table()
        assert isinstance(record, TargetRecord) and record.osmotica == tuple(osmotica)


def test_cell_reference_of_a_fit_is_its_cells_table():
    fit = fit_counts(read_counts_csv(ROOT / "plans" / "demo_plasmolysis_counts.csv"))
    record = cell_reference_of(fit, "2024-05-02")
    assert dict(record) == fit.cells_table("2024-05-02")
    assert record.reference == ("cells.osmolality", f"{fit.osmolality_50_mosmol_per_kg:.4g} mOsm/kg")


# ---- edits, written back in place --------------------------------------------------------------------
def test_edited_counts_are_written_where_they_were(catalog):
    text = (NEWER + '\n[series]\nosmoticum = "mannitol"\n\n[[series.levels]]\nplasmolysed = 3\n'
            'water_potential_mpa = -1\ntotal = 40\n\n[[series.levels]]\nwater_potential_mpa = -1.2\nnote = "x"\n')
    plan = planfile.loads(text)
    assert plan.series.levels[0].plasmolysed == (3,) and plan.series.levels[1].plasmolysed is None
    edited = replace(plan, series=plan.series.with_counts(1, [(5, 30), (6, 31)]))
    out = planfile.dumps(edited)
    # the bare count of level 1 stays bare; level 2's counts come after its own keys
    assert 'plasmolysed = 3\nwater_potential_mpa = -1\ntotal = 40\n' in out
    assert 'water_potential_mpa = -1.2\nnote = "x"\nplasmolysed = [\n    5,\n    6,\n]\ntotal = [\n    30,\n' in out
    two = planfile.dumps(replace(plan, series=plan.series.with_counts(0, [(3, 40), (4, 40)])))
    assert "plasmolysed = [\n    3,\n    4,\n]\nwater_potential_mpa = -1\n" in two


def test_a_fit_stored_over_hand_written_cells_keeps_their_order():
    fit = fit_counts(read_counts_csv(ROOT / "plans" / "demo_plasmolysis_counts.csv"))
    plan = planfile.loads(NEWER + '[cells]\ntolerance = 0.1\nosmolality = "500 mOsm/kg"\nnote = "ours"\n')
    fitted = cell_reference_of(fit, "2024-05-02")
    kept = replace(plan, cells=plan.cells.merged(fitted))
    table = planfile.to_dict(kept)["cells"]
    # the keys already there stay where they were (the osmolality updated), the fit's others follow
    assert list(table) == ["tolerance", "osmolality", "note", "potential", "source", "ci95"]
    assert table["osmolality"] == fitted.osmolality and table["tolerance"] == 0.1 and table["note"] == "ours"


def test_records_a_plan_gets_from_code_are_written_in_the_usual_order():
    plan = planfile.Plan(cells=CellReference(osmolality="300 mOsm/kg", source="guess"),
                         projection=ProjectionRecord(weeks=4.0, autoclave_hydrolysis=0.1, water_loss_per_week=0.02),
                         target=TargetRecord(value="-1 MPa", osmotica=("sucrose", "mannitol"),
                                             hold=(("sucrose", "20 g/L"),)))
    d = planfile.to_dict(plan)
    assert list(d["cells"]) == ["osmolality", "source"]
    assert list(d["projection"]) == ["autoclave_hydrolysis", "water_loss_per_week", "weeks"]
    assert d["target"] == {"value": "-1 MPa", "osmotica": ["sucrose", "mannitol"], "hold": {"sucrose": "20 g/L"}}


def test_conditions_edit_replaces_the_reference_and_keeps_the_rest():
    cells = CellReference(potential="-1 MPa", tolerance="10 %", source="old")
    assert cells.with_reference("450 mOsm/kg") == CellReference(osmolality="450 mOsm/kg", tolerance="10 %",
                                                                source="old")
    assert cells.with_reference("").empty is False and CellReference(potential="-1 MPa").with_reference("").empty


def test_records_compare_by_their_tables():
    a = SeriesRecord(osmoticum="mannitol", levels=(LevelRecord(level=1, water_potential_mpa=-0.4),))
    assert a == SeriesRecord(osmoticum="mannitol", levels=(LevelRecord(level=1, water_potential_mpa=-0.4),))
    assert a != replace(a, stock="1 mol/kg")
    assert dict(a) == {"osmoticum": "mannitol", "levels": [LevelRecord(level=1, water_potential_mpa=-0.4)]}
    assert np.array_equal(counts_from_series(SeriesRecord(levels=tuple(
        LevelRecord(water_potential_mpa=x, plasmolysed=(k,), total=(20,))
        for x, k in ((-0.4, 1), (-0.8, 9), (-1.2, 19))))).plasmolysed, [1, 9, 19])


def test_stamped_provenance_is_a_record(catalog, tmp_path):
    from mediaplan.files.sharing import Provenance, provenance_of, stamp

    plan = stamp(planfile.Plan(recipe=Recipe(base="ms1962").with_amount("sucrose", "30 g/L")), catalog)
    assert isinstance(plan.provenance, Provenance)
    assert plan.provenance.recorded == datetime.date.today().isoformat()
    assert dict(plan.provenance) == provenance_of(plan.recipe, catalog)
    planfile.write(plan, tmp_path / "p.toml")
    assert planfile.read(tmp_path / "p.toml").provenance == plan.provenance


# ---- the strict schema (issue 12) -----------------------------------------------------------------
def test_a_key_far_from_every_known_name_is_refused_with_the_known_names():
    with pytest.raises(PlanFileError) as exc:
        planfile.loads(HEAD + '[cells]\nzzz = 1\n', file="bad.toml")
    assert str(exc.value) == ("bad.toml:7: cells.zzz: unknown key zzz in [cells] (this format version knows ci95, "
                              "osmolality, potential, source, tolerance)")


def test_amounts_written_straight_into_medium_are_pointed_to_their_table():
    with pytest.raises(PlanFileError) as exc:
        planfile.loads(HEAD + 'sucrose = "30 g/L"\n', file="bad.toml")
    assert str(exc.value) == ('bad.toml:6: medium.sucrose: unknown key sucrose in [medium] (amounts go under '
                              '[medium.components]: sucrose = "30 g/L")')


def test_a_plan_of_a_newer_minor_version_keeps_what_it_does_not_read_and_its_version():
    text = (NEWER.replace('volume = "1 L"\n', 'volume = "1 L"\nshelf = "B"\n')
            + '[plan]\nlab_code = "R-7"\n[cells]\nosmolality = "450 mOsm/kg"\nkept_by = "bench 4"\n[labels]\nx = 1\n')
    plan = planfile.loads(text)
    assert plan.version == "1.1"
    assert plan.extra_keys == {"plan": {"lab_code": "R-7"}, "medium": {"shelf": "B"}}
    assert plan.extra == {"labels": {"x": 1}} and dict(plan.cells.extra) == {"kept_by": "bench 4"}
    assert plan.read_notes == ("plan format 1.1 is newer than this mediaplan writes (1.0): [labels], plan.lab_code, "
                               "medium.shelf, cells.kept_by kept as written, not used",)
    again = planfile.loads(planfile.dumps(plan))  # written whole, it still declares 1.1, so it reads back
    assert again == plan and 'version = "1.1"' in planfile.dumps(plan)
