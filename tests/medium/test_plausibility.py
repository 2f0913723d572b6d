"""Amounts no medium can hold are refused before any model is asked, with the limit in the message."""

from __future__ import annotations

import warnings

import pytest

from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import (
    PLAUSIBLE_MAX_KG_PER_KG,
    PLAUSIBLE_MAX_MOLALITY,
    PLAUSIBLE_SATURATION_FACTOR,
    Recipe,
    check_plausible,
)


@pytest.mark.parametrize("cid, amount", [
    ("potassium_nitrate", "150 mol/kg"),  # gave a freezing point of −10361 °C with exit 0 (issue 17)
    ("calcium_chloride_anhydrous", "190 mol/kg"),  # overflowed in the Pitzer terms (issue 17)
    ("calcium_chloride_anhydrous", "2000 g/L"),  # a per-litre amount: its molality is past the limit too
])
def test_a_salt_past_its_limit_is_refused_with_the_limit(catalog, cid, amount):
    comp = catalog.components[cid]
    with pytest.raises(AmountError) as info:
        evaluate(Recipe().with_amount(cid, amount), catalog)
    assert info.value.field == f"medium.components.{cid}"
    assert "past" in info.value.message and "Pitzer parameters" in info.value.message
    assert comp.saturation_molality is not None


@pytest.mark.parametrize("cid, amount", [("sucrose", "1500 g/L"), ("mannitol", "3 mol/kg")])
def test_past_twice_the_solubility_is_refused_with_the_limit(catalog, cid, amount):
    comp = catalog.components[cid]
    limit = PLAUSIBLE_SATURATION_FACTOR * comp.saturation_molality
    with pytest.raises(AmountError) as info:
        evaluate(Recipe().with_amount(cid, amount), catalog)
    err = info.value
    assert err.field == f"medium.components.{cid}"
    assert f"{limit:.3g} mol/kg" in err.message and "solubility at 25 °C" in err.message


def test_forms_of_one_substance_count_together(catalog):
    # each form alone below the limit, together above it
    half = 1.25 * 5.0 * 0.6  # 0.6 of the Ca–Cl limit: 1.25 x max_m 5 mol/kg (May et al. 2011)
    r = Recipe().with_amount("calcium_chloride_anhydrous", f"{half:.4g} mol/kg")
    evaluate(r, catalog)
    with pytest.raises(AmountError, match="past"):
        evaluate(r.with_amount("calcium_chloride_dihydrate", f"{half:.4g} mol/kg"), catalog)


def test_without_a_solubility_the_molality_limit_holds(catalog):
    comp = catalog.components["glycerol"]
    assert comp.saturation_molality is None  # glycerol mixes with water in every proportion (common practice)
    with pytest.raises(AmountError, match=f"past {PLAUSIBLE_MAX_MOLALITY:g} mol/kg"):
        evaluate(Recipe().with_amount("glycerol", "60 mol/kg"), catalog)


def test_a_base_line_past_the_limit_names_the_strength(catalog):
    r = Recipe(base="ms1962", strength=2)
    lines = r.lines(catalog)
    molality = [10.0 if ln.component.id == "potassium_nitrate" else 0.0 for ln in lines]  # past 7.58 mol/kg
    with pytest.raises(AmountError, match="past 7.58 mol/kg") as info:
        check_plausible(lines, molality)
    assert info.value.field == "medium.strength"


def test_above_the_solubility_but_within_the_limit_still_warns(catalog):
    m = 1.2 * catalog.components["potassium_nitrate"].saturation_molality  # past 3.79, below 4.75 mol/kg
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        ev = evaluate(Recipe().with_amount("potassium_nitrate", f"{m:.4g} mol/kg"), catalog)
    assert any(w.code == "solubility" for w in ev.warnings)


def test_cli_names_the_plan_line_and_exits_2(tmp_path, capsys):
    plan = tmp_path / "p.toml"
    plan.write_text('[mediaplan]\nformat = "mediaplan-plan"\nversion = "1.0"\n\n[medium]\nvolume = "1 L"\n\n[medium.components]\n'
                    'sucrose = "30 g/L"\nKNO3 = "150 mol/kg"\n', encoding="utf-8")
    for argv in (["calc", "--plan", str(plan)], ["calc", "KNO3=150 mol/kg"], ["prep", str(plan)]):
        assert main(argv) == 2
        err = capsys.readouterr().err.strip()
        assert len(err.splitlines()) == 1 and "past 4.75 mol/kg" in err, err  # 1.25 x max_m 3.8 (May 2011)
        if "--plan" in argv or "prep" in argv:
            assert f"{plan}:10" in err


def test_no_water_left_names_the_component_that_fills_the_volume(catalog):
    # 2530 g/L of KNO3 (a hypothesis case of the command-line fuzz): the solid alone would fill the litre
    with pytest.raises(AmountError, match="no water left") as info:
        evaluate(Recipe().with_amount("sucrose", "10 g/L").with_amount("potassium_nitrate", "253 % w/v"), catalog)
    assert info.value.field == "medium.components.potassium_nitrate"
    assert "potassium nitrate at 253 % w/v" in info.value.message


def test_a_salt_far_past_its_pitzer_data_is_refused(catalog):
    # KNO3 at 7.5 mol/kg gave 0 mOsm/kg at 0 °C and no answer at 25 °C; max_m 3.8 (May et al. 2011)
    for T in ("0 degC", "25 degC"):
        with pytest.raises(AmountError, match=r"past 4.75 mol/kg, 1.25 times the top of the data") as info:
            evaluate(Recipe(temperature=T).with_amount("potassium_nitrate", "7.5 mol/kg"), catalog)
        assert info.value.field == "medium.components.potassium_nitrate"
    ev = evaluate(Recipe().with_amount("potassium_nitrate", "4.7 mol/kg"), catalog)
    assert ev.osmolality_mosmol_per_kg > 0


def test_a_heavy_solute_without_a_solubility_is_refused_past_5_kg_per_kg_of_water(catalog):
    """PEG 8000 at 10.18 mol/kg is 81 kg per kg of water, far below 50 mol/kg: it gave 39 million mOsm/kg
    with exit status 0 (and the budget then failed). Every component without a solubility whose molar mass
    puts 5 kg/kg below 50 mol/kg (PEG, large organics) is refused just past that mass and not for it just
    below."""
    heavy = [c for c in catalog.components.values() if c.saturation_molality is None and c.species
             and c.anhydrous_molar_mass and PLAUSIBLE_MAX_KG_PER_KG * 1000 / c.anhydrous_molar_mass < PLAUSIBLE_MAX_MOLALITY]
    assert any(c.id == "peg8000" for c in heavy)
    for c in heavy:
        limit = PLAUSIBLE_MAX_KG_PER_KG * 1000 / c.anhydrous_molar_mass  # [mol/kg]
        with pytest.raises(AmountError, match="kg per kg of water") as info:
            evaluate(Recipe().with_amount(c.id, f"{1.01 * limit:.6g} mol/kg"), catalog)
        assert info.value.field == f"medium.components.{c.id}"
        try:
            evaluate(Recipe().with_amount(c.id, f"{0.99 * limit:.6g} mol/kg"), catalog)
        except MediaplanError as exc:  # a model may still have no answer there; the mass rule is not why
            assert "kg per kg of water" not in str(exc), c.id
