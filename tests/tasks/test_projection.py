"""Projections of autoclaving (sucrose hydrolysis) and water loss during culture."""

from __future__ import annotations

import json

import pytest

from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.projection import (
    ProjectionRecord,
    ProjectionSettings,
    parse_fraction,
    project,
    settings_from,
)


def _interp(x, x0, y0, x1, y1):
    return y0 + (x - x0) * (y1 - y0) / (x1 - x0)


def test_full_hydrolysis_matches_crc_hexose_freezing_point(catalog):
    """0.325 mol/kg sucrose fully hydrolysed gives 0.650 mol/kg hexose. CRC Handbook 102nd ed. (2021),
    'Concentrative properties of aqueous solutions', D-glucose: 0.617 mol/kg -> FPD 1.17 K, 0.757 -> 1.44 K;
    linear interpolation at 0.650 gives 1.234 K (glucose and fructose rows agree at low molality).
    Tolerance 3 %: FPD printed to 0.01 K, the interpolation, and the binary models (about 1-2 %)."""
    r = Recipe(temperature="0.5 degC").with_amount("sucrose", "0.325 mol/kg")
    p = project(r, catalog, ProjectionSettings(autoclave_hydrolysis=1.0))
    ev = p.stages[1].evaluation
    assert ev.component("glucose").molality_mmol_per_kg == pytest.approx(325 / (1 - 0.325 * 0.018015), rel=1e-6)
    assert ev.component("sucrose") is None
    assert ev.freezing_point_depression_k == pytest.approx(_interp(0.650, 0.617, 1.17, 0.757, 1.44), rel=0.03)


def test_water_loss_matches_crc_mannitol(catalog):
    """0.259 mol/kg mannitol that loses half its water is 0.518 mol/kg. CRC (as above), D-mannitol:
    0.51 -> 0.96 K, 0.576 -> 1.08 K; interpolated 0.9745 K. Tolerance 3 % (as above)."""
    r = Recipe(temperature="0.5 degC").with_amount("mannitol", "0.259 mol/kg")
    p = project(r, catalog, ProjectionSettings(autoclave_hydrolysis=0.0, water_loss=0.5, weeks=6))
    ev = p.stages[2].evaluation
    assert p.stages[2].label == "after 6 weeks"
    assert ev.component("mannitol").molality_mmol_per_kg == pytest.approx(518.0, rel=1e-9)
    assert ev.freezing_point_depression_k == pytest.approx(_interp(0.518, 0.51, 0.96, 0.576, 1.08), rel=0.03)


def test_stages_of_a_culture_medium(catalog):
    r = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    p = project(r, catalog, settings_from(ProjectionRecord(autoclave_hydrolysis=0.1, water_loss_per_week=0.02,
                                                           weeks=4)), cell_reference_mosmol=200.0)
    made, ac, late = (s.evaluation for s in p.stages)
    m_suc = made.component("sucrose").molality_mmol_per_kg
    # each mole hydrolysed adds one osmole to the ideal sum and takes one mole of water (0.016 % here)
    water_left = 1 - 0.1 * m_suc / 1000 * 0.018015268
    assert ac.osmolality_ideal_mosmol_per_kg == pytest.approx(
        (made.osmolality_ideal_mosmol_per_kg + 0.1 * m_suc) / water_left, rel=1e-9)
    assert made.osmotic_potential_mpa > ac.osmotic_potential_mpa > late.osmotic_potential_mpa
    # 8 % of the water gone: every molality times 1/0.92
    assert late.component("glucose").molality_mmol_per_kg == pytest.approx(
        ac.component("glucose").molality_mmol_per_kg / 0.92, rel=1e-9)
    assert [s["tonicity"]["class"] for s in p.to_dict()["stages"]] == ["hypotonic", "hypotonic", "isotonic"]


@pytest.mark.parametrize("record,word,field", [
    (ProjectionRecord(autoclave_hydrolysis=1.5), "between 0 and 1", "projection.autoclave_hydrolysis"),
    (ProjectionRecord(autoclave_hydrolysis="ten"), "fraction", "projection.autoclave_hydrolysis"),
    (ProjectionRecord(water_loss=0.1, water_loss_per_week=0.01), "not both", "projection"),
    (ProjectionRecord(water_loss_per_week=0.3, weeks=4), "dry", "projection.water_loss_per_week"),
    (ProjectionRecord(weeks=-1), "between 0 and 104", "projection.weeks"),
    (ProjectionRecord(weeks="four"), "number", "projection.weeks"),
    (ProjectionRecord(extra=(("loss", 0.1),)), "unknown key 'loss'", "projection"),
])
def test_bad_settings(record, word, field):
    with pytest.raises(AmountError, match=word) as ei:
        settings_from(record)
    assert ei.value.field == field


def test_fractions_and_overrides():
    assert parse_fraction("12.5 %", field="x") == pytest.approx(0.125)
    s = settings_from(ProjectionRecord(autoclave_hydrolysis=0.05, water_loss=0.1), water_loss_per_week="1 %", weeks=3)
    assert s.water_loss is None and s.total_water_loss == pytest.approx(0.03)
    assert settings_from(None).autoclave_hydrolysis == 0.1  # default inside the published 5-20 %
    # texts as a plan may hold them ("15 %") read as the typed fractions
    assert settings_from(ProjectionRecord(autoclave_hydrolysis="15 %", weeks="6")) == \
        ProjectionSettings(0.15, None, None, 6.0)


@pytest.mark.parametrize("settings", [
    ProjectionSettings(0.1, 0.02, None, 4.0),
    ProjectionSettings(0.2, None, 0.3, 6.0),
    ProjectionSettings(0.0, 0.0, None, 8.0),
])
def test_kept_settings_read_back_the_same(settings):
    record = ProjectionRecord.of(settings)
    assert dict(record) == settings.to_table()  # the [projection] table the record writes
    assert settings_from(record) == settings


def test_calc_project_json_and_text(tmp_path, capsys):
    plan = tmp_path / "p.toml"
    plan.write_text('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n[medium]\nvolume = "1 L"\n'
                    'base = "ms1962"\n[medium.components]\nsucrose = "30 g/L"\n'
                    '[projection]\nautoclave_hydrolysis = 0.2\nwater_loss_per_week = 0.02\nweeks = 4\n')
    assert main(["calc", "--plan", str(plan), "--project", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    stages = d["projection"]["stages"]
    assert [s["label"] for s in stages] == ["as made", "after autoclaving", "after 4 weeks"]
    assert d["projection"]["settings"]["autoclave_hydrolysis"] == 0.2
    assert stages[0]["osmolality_mosmol_per_kg"] == pytest.approx(d["osmolality_mosmol_per_kg"])
    assert main(["calc", "--plan", str(plan), "--project", "--hydrolysis", "60 %"]) == 0
    out = capsys.readouterr().out
    assert "after autoclaving" in out and "60 %" in out
    assert main(["calc", "--plan", str(plan), "--json"]) == 0
    assert "projection" not in json.loads(capsys.readouterr().out)
