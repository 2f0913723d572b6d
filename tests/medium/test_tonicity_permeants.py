"""Tonicity with permeating solutes: the first minutes (σ-weighted) and the steady state (permeants
equilibrated), in words of turgor for walled cells."""

from __future__ import annotations

import pytest

from mediaplan.medium.evaluate import classify_tonicity, evaluate
from mediaplan.medium.recipe import Recipe
from mediaplan.thermo.potential import osmolality_from_potential

T25 = 298.15


def _ref(mpa: float) -> float:
    return float(osmolality_from_potential(mpa * 1e6, T25)) * 1000.0


def test_glycerol_alone_plasmolyses_at_first_and_not_at_steady_state(catalog):
    sigma = catalog.components["glycerol"].reflection_coefficient
    assert sigma == pytest.approx(0.8)  # from memory: Nitella flexilis, as tabulated by Nobel (chapter 3)
    ref = _ref(-1.2)  # cells of −1.2 MPa (the case of issue 13)
    ev = evaluate(Recipe().with_amount("glycerol", "0.8 mol/kg"), catalog, cell_reference_mosmol=ref)
    t = ev.tonicity
    share = ev.component("glycerol").osmolality_mosmol_per_kg
    assert t["first_minutes"]["effective_mosmol_per_kg"] == pytest.approx(sigma * share, rel=1e-12)
    assert t["first_minutes"]["class"] == t["class"] == "hypertonic"  # 0.8 × ~800 mOsm/kg > ~490
    assert t["steady_state"]["effective_mosmol_per_kg"] == 0.0  # glycerol equilibrates across the membrane
    assert t["steady_state"]["class"] == "hypotonic"
    assert t["permeants"] == ["glycerol"]


def test_impermeant_background_stays_at_steady_state(catalog):
    ref = _ref(-1.0)
    r = Recipe().with_amount("mannitol", "0.3 mol/kg").with_amount("glycerol", "0.2 mol/kg")
    ev = evaluate(r, catalog, cell_reference_mosmol=ref)
    mannitol = ev.component("mannitol").osmolality_mosmol_per_kg
    glycerol = ev.component("glycerol").osmolality_mosmol_per_kg
    t = ev.tonicity
    assert t["effective_mosmol_per_kg"] == pytest.approx(mannitol + 0.8 * glycerol, rel=1e-12)
    assert t["steady_state"]["effective_mosmol_per_kg"] == pytest.approx(mannitol, rel=1e-9)
    assert t["steady_state"]["ratio"] == pytest.approx(mannitol / ref, rel=1e-9)


def test_without_permeants_both_phases_are_the_classification(catalog):
    ev = evaluate(Recipe(base="ms1962").with_amount("sucrose", "30 g/L"), catalog, cell_reference_mosmol=_ref(-1.0))
    t = ev.tonicity
    for phase in ("first_minutes", "steady_state"):
        assert t[phase]["class"] == t["class"] and t[phase]["ratio"] == t["ratio"]
    assert t["permeants"] == []


@pytest.mark.parametrize("effective, cls, words", [
    (300.0, "hypotonic", "wall resists: turgor rises"),
    (450.0, "isotonic", "turgor stays"),
    (600.0, "hypertonic", "turgor falls"),
])
def test_turgor_is_spoken_of_for_walled_cells(effective, cls, words):
    t = classify_tonicity(effective, 450.0, 0.05)  # invented reference (common practice: a typical sap)
    assert t["class"] == cls and words in t["turgor"]
    assert "water moves into the cells" not in t["turgor"]


def test_permeant_shares_are_taken_off_by_their_reflection_coefficient():
    # 200 mOsm/kg of an impermeant and 250 mOsm/kg of a permeant at σ 0.4 (invented figures)
    t = classify_tonicity(200.0 + 0.4 * 250.0, 450.0, 0.05, permeants={"x": (0.4, 250.0)})
    assert t["first_minutes"]["effective_mosmol_per_kg"] == pytest.approx(300.0)
    assert t["steady_state"]["effective_mosmol_per_kg"] == pytest.approx(200.0)
