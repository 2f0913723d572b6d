"""Solubility as a function of temperature (Component.saturation_at) and the solubility warnings at the
culture and the storage temperature.

Check values are the read rows of the catalog's solubility tables, each named with its source; rows the
catalog marks "from memory" are never used as check values here.
"""

from __future__ import annotations

import pytest

from mediaplan.medium import warnings as checks
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

T0 = 273.15


@pytest.mark.parametrize("cid, t_c, g_per_100g, source", [
    # Wikipedia infobox of potassium nitrate (secondary copy): 316 g per 1000 g water at 20 °C, 133 at 0 °C
    ("potassium_nitrate", 20.0, 31.6, "wikipedia_kno3"),
    ("potassium_nitrate", 0.0, 13.3, "wikipedia_kno3"),
    # J Chem 2018, 8749345, Table 2 (KNO3 + KH2PO4 + H2O): KNO3 17.29 mass % at 10 °C, KH2PO4 25.32 % at 40 °C
    ("potassium_nitrate", 10.0, 100 * 17.29 / (100 - 17.29), "jchem2018_kno3_kh2po4"),
    ("potassium_dihydrogen_phosphate", 40.0, 100 * 25.32 / (100 - 25.32), "jchem2018_kno3_kh2po4"),
    # CRC Handbook 98th ed., solubility of common salts at ambient temperatures: NH4NO3 21.163 mol/kg at 15 °C
    ("ammonium_nitrate", 15.0, 21.163 * 80.043 / 10, "crc_ambient"),
    # same table: NaCl 6.136 mol/kg at 20 °C
    ("sodium_chloride", 20.0, 6.136 * 58.44 / 10, "crc_ambient"),
    # Mohos 2010, Table A2.2 (after Antokolskaya et al. 1964): sucrose 203.9 g per 100 g water at 20 °C
    ("sucrose", 20.0, 203.9, "mohos2010"),
    # Merck Index (druglead.com copy): 1 g mannitol in ~5.5 mL water at room temperature (taken as 20 °C)
    ("mannitol", 20.0, 100 / 5.5, "merck_mannitol"),
    # maltose (Gillis, in 'Experimental Cookery'): 78.9 g per 100 g water at 21.0 °C
    ("maltose_monohydrate", 21.0, 78.9, "gillis_maltose"),
])
def test_tabulated_rows_are_given_back(catalog, cid, t_c, g_per_100g, source):
    """At a tabulated temperature the figure is the row; tolerance 0.2 %: the molalities of the CRC table
    were converted to g per 100 g water and rounded to 0.1 g (0.14 % at 36 g)."""
    c = catalog.components[cid]
    sat = c.saturation_at(T0 + t_c)
    assert sat.at_asked and not sat.from_memory
    assert sat.g_per_100g_water == pytest.approx(g_per_100g, rel=2e-3)
    assert sat.molality == pytest.approx(g_per_100g * 10 / c.anhydrous_molar_mass, rel=2e-3)
    assert c.saturation_molality_at(T0 + t_c) == sat.molality


def test_between_rows_the_figure_is_interpolated_linearly(catalog):
    """Sucrose between the read rows of Mohos 2010 (203.9 g at 20 °C, 211.4 g at 25 °C): 207.65 g at 22.5 °C."""
    sat = catalog.components["sucrose"].saturation_at(T0 + 22.5)
    assert sat.g_per_100g_water == pytest.approx((203.9 + 211.4) / 2, rel=1e-12)
    assert not sat.from_memory


def test_interpolation_through_a_recalled_row_says_so(catalog):
    """Mannitol at 4 °C lies between two rows recalled from memory: the figure says so."""
    sat = catalog.components["mannitol"].saturation_at(T0 + 4)
    assert sat.at_asked and sat.from_memory


def test_outside_its_table_nothing_is_extrapolated(catalog):
    """Calcium nitrate is tabulated from 10 to 35 °C only (CRC ambient table): at 37 °C and at 4 °C there is
    no figure, and the note names the table's range."""
    c = catalog.components["calcium_nitrate_tetrahydrate"]
    for t_c in (37.0, 4.0):
        sat = c.saturation_at(T0 + t_c)
        assert sat.molality is None and not sat.at_asked
        assert "10 °C to 35 °C" in sat.note
        assert c.saturation_molality_at(T0 + t_c) is None


def test_without_a_table_only_the_25_C_figure_is_known_and_said(catalog):
    """Glucose has only its 25 °C solubility (Gladden & Dole 1953, 50 mass %): asked at 4 °C, the figure
    is the 25 °C one with a note, and saturation_molality_at refuses to pass it off as 4 °C."""
    c = catalog.components["glucose"]
    sat = c.saturation_at(T0 + 4)
    assert sat.temperature_k == pytest.approx(298.15) and not sat.at_asked
    assert "25 °C" in sat.note
    assert c.saturation_molality_at(T0 + 4) is None
    assert c.saturation_at(298.15).at_asked


def test_the_25_C_figure_agrees_with_the_table(catalog):
    """Every component whose table covers 25 °C carries the same 25 °C figure in ``solubility`` (what the
    25 °C-only code paths read), to the table's rounding (0.5 %)."""
    checked = 0
    for c in catalog.components.values():
        rows = c.solubility_table
        if rows and rows[0].temperature_k <= 298.15 <= rows[-1].temperature_k:
            assert c.solubility == pytest.approx(c.saturation_at(298.15).g_per_100g_water, rel=5e-3), c.id
            checked += 1
    assert checked >= 8


def test_forms_of_one_substance_share_the_table(catalog):
    a = catalog.components["calcium_nitrate_tetrahydrate"]
    b = catalog.components["calcium_nitrate_anhydrous"]
    for t in (12.0, 25.0, 33.0):
        assert a.saturation_at(T0 + t).g_per_100g_water == b.saturation_at(T0 + t).g_per_100g_water
        # molalities differ only by the two molar masses' rounding (hydrate minus its water vs anhydrous)
        assert a.saturation_at(T0 + t).molality == pytest.approx(b.saturation_at(T0 + t).molality, rel=1e-4)


def test_solubility_rises_with_temperature_for_the_osmotica(catalog):
    for cid in ("sucrose", "mannitol", "potassium_nitrate", "ammonium_nitrate"):
        c = catalog.components[cid]
        lo, hi = c.solubility_table[0].temperature_k, c.solubility_table[-1].temperature_k
        assert c.saturation_at(lo).molality < c.saturation_at(hi).molality


# ---- warnings at the culture and the storage temperature ---------------------------------------------

def _solubility_warnings(catalog, recipe):
    return [w for w in evaluate(recipe, catalog).warnings if w.code == "solubility"]


def test_cold_storage_is_checked_by_default(catalog):
    """1.09 mol/kg mannitol is 93 % of its 25 °C solubility (fine to make) but far above its solubility at
    4 °C, the storage temperature taken when the plan states none: the warning says it crystallises there."""
    r = Recipe().with_amount("mannitol", "1.09 mol/kg")
    (w,) = _solubility_warnings(catalog, r)
    assert "4 °C" in w.message and "crystallises" in w.message and "states no storage" in w.message


def test_a_stated_storage_temperature_is_the_one_checked(catalog):
    warm = Recipe(storage_temperature="22 degC").with_amount("mannitol", "0.9 mol/kg")
    (w,) = _solubility_warnings(catalog, warm)
    assert "22 °C" in w.message and "stated storage temperature" in w.message
    kept_at_culture = Recipe(storage_temperature="25 degC").with_amount("mannitol", "0.6 mol/kg")
    assert _solubility_warnings(catalog, kept_at_culture) == []


def test_at_a_cold_culture_temperature_it_does_not_dissolve(catalog):
    r = Recipe(temperature="4 degC").with_amount("mannitol", "1.09 mol/kg")
    (w,) = _solubility_warnings(catalog, r)
    assert "will not all dissolve" in w.message and "4 °C" in w.message


def test_outside_the_table_the_nearest_row_is_named(catalog):
    """Sodium sulfate is tabulated from 20 °C up (CRC 98th ed., solubility at various temperatures: 16.13 mass %
    at 20 °C, 1.35 mol/kg; no row below): 1.5 mol/kg at 10 °C is checked against the 20 °C row, named as the
    nearest tabulated temperature, instead of extrapolating."""
    r = Recipe(temperature="10 degC", storage_temperature="10 degC").with_amount("sodium_sulfate_anhydrous",
                                                                                "1.5 mol/kg")
    (w,) = _solubility_warnings(catalog, r)
    assert "nearest tabulated temperature" in w.message and "20 °C" in w.message
    assert "will not all dissolve" in w.message


def test_the_check_keeps_its_place_and_code():
    storage_k = checks.DEFAULT_STORAGE_K
    assert storage_k == pytest.approx(277.15)  # common practice: a cold room or refrigerator at 4 °C
    assert checks.CHECKS.index(checks.solubility) == 8
