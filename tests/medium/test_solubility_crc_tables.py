"""Solubility tables of the main salts read from the CRC Handbook, and the verdicts they give at 4 °C.

Check values: CRC Handbook of Chemistry and Physics, 98th ed. (2017), table "Aqueous solubility of inorganic
compounds at various temperatures" (mass % of the anhydrous salt in the saturated solution), as transcribed
in github.com/chicolucio/solutions (data/aqueous_solubility_inorganic_temperatures.csv); the catalog stores
100 w / (100 - w) g per 100 g water rounded to 0.1 g (3 digits below 1 g), so the tolerance is that rounding.
Before these tables, KCl, CaCl2, MgSO4, CaSO4 and NH4Cl had only their 25 °C figure, and a stock of them kept
at 4 °C was never checked there (the storage check needs a figure at the storage temperature).
"""

from __future__ import annotations

import pytest

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

T0 = 273.15


def g_per_100g(mass_percent: float) -> float:
    """g of anhydrous salt per 100 g water from the mass % of the saturated solution."""
    return 100.0 * mass_percent / (100.0 - mass_percent)


@pytest.mark.parametrize("cid, t_c, mass_percent", [
    # CRC 98th ed., aqueous solubility at various temperatures (mass %), the row of each salt:
    ("potassium_chloride", 0.0, 21.74),                 # KCl
    ("potassium_chloride", 40.0, 28.59),                # KCl
    ("calcium_chloride_dihydrate", 10.0, 39.19),        # CaCl2 (solid CaCl2·6H2O)
    ("calcium_chloride_hexahydrate", 30.0, 49.12),      # CaCl2, same table on every form
    ("magnesium_sulfate_heptahydrate", 0.0, 18.2),      # MgSO4
    ("magnesium_sulfate_anhydrous", 20.0, 25.1),        # MgSO4
    ("calcium_sulfate_dihydrate", 0.0, 0.174),          # CaSO4
    ("calcium_sulfate_dihydrate", 40.0, 0.21),          # CaSO4
    ("ammonium_nitrate", 0.0, 54.0),                    # NH4NO3 (replaces a recalled 118.3 g)
    ("ammonium_nitrate", 40.0, 74.3),                   # NH4NO3
    ("ammonium_chloride", 10.0, 25.12),                 # NH4Cl
    ("potassium_dihydrogen_phosphate", 20.0, 18.25),    # KH2PO4, between the J Chem 2018 rows
    ("potassium_nitrate", 30.0, 31.3),                  # KNO3 (replaces a recalled row, same 45.6 g)
    ("sodium_chloride", 0.0, 26.28),                    # NaCl (replaces a recalled row)
    ("iron_ii_sulfate_heptahydrate", 0.0, 13.5),        # FeSO4 (iron stock; catalog/components/iron.yaml)
])
def test_rows_are_the_handbook_figures(catalog, cid, t_c, mass_percent):
    sat = catalog.components[cid].saturation_at(T0 + t_c)
    assert sat.at_asked and not sat.from_memory
    g = g_per_100g(mass_percent)
    half_digit = 0.05 if g >= 10 else 0.005 if g >= 1 else 5e-4  # the catalog's rounding (see module text)
    assert abs(sat.g_per_100g_water - g) <= half_digit + 1e-9


def test_no_salt_row_is_recalled(catalog):
    """Every row of every salt's table is read (the recalled rows of NH4NO3, KNO3 and NaCl are replaced)."""
    salts = [c for c in catalog.components.values() if c.solubility_table and any("[" in s for s, _ in c.species)]
    assert len(salts) >= 30
    for c in salts:
        assert not any(p.from_memory for p in c.solubility_table), c.id
        assert "from memory" not in (c.sources.get("solubility") or ""), c.id


def test_gypsum_is_about_as_soluble_cold_as_warm(catalog):
    """CaSO4 (CRC: 0.174 mass % at 0 °C, 0.205 at 25 °C, 0.21 at 40 °C): 15 % less at 4 °C than at 25 °C,
    not the several-fold fall of the nitrates."""
    c = catalog.components["calcium_sulfate_dihydrate"]
    cold, warm = c.saturation_at(T0 + 4).g_per_100g_water, c.saturation_at(T0 + 25).g_per_100g_water
    expected_cold = g_per_100g(0.174) + 0.4 * (g_per_100g(0.191) - g_per_100g(0.174))  # linear, 0 to 10 °C
    assert cold == pytest.approx(expected_cold, rel=3e-3)
    assert 0.8 < cold / warm < 0.9


def _solubility_warnings(catalog, recipe):
    return [w.message for w in evaluate(recipe, catalog).warnings if w.code == "solubility"]


@pytest.mark.parametrize("cid, stock, safe, at_4c", [
    # mol/kg; the 4 °C figure is linear between the rows at 0 and 10 °C, g per 100 g water from mass %:
    ("potassium_chloride", "4.2 mol/kg", "3.0 mol/kg", (21.74, 23.61)),             # KCl, CRC; 3.90 mol/kg at 4 °C
    ("calcium_chloride_dihydrate", "6.0 mol/kg", "4.0 mol/kg", (36.7, 39.19)),      # CaCl2, CRC; 5.46 mol/kg
    ("magnesium_sulfate_heptahydrate", "2.3 mol/kg", "1.5 mol/kg", (18.2, 21.7)),   # MgSO4, CRC; 2.03 mol/kg
    ("ammonium_chloride", "6.5 mol/kg", "4.5 mol/kg", (22.92, 25.12)),              # NH4Cl, CRC; 5.84 mol/kg
    ("ammonium_nitrate", "20 mol/kg", "12 mol/kg", (54.0, 60.1)),                   # NH4NO3, CRC; 16.3 mol/kg
    # KH2PO4: CRC 11.74 % at 0 °C, J Chem 2018 Table 2 15.35 % at 10 °C; 1.12 mol/kg at 4 °C
    ("potassium_dihydrogen_phosphate", "1.5 mol/kg", "0.85 mol/kg", (11.74, 15.35)),
])
def test_a_stock_kept_at_4_C_is_checked_there(catalog, cid, stock, safe, at_4c):
    """Below the 25 °C solubility (fine to make) but above the 4 °C one: the stock crystallises in the cold room.
    Before these tables no warning was given for KCl, CaCl2, MgSO4 and NH4Cl (no figure at 4 °C); NH4NO3's
    went through a recalled 0 °C row. Well below the 4 °C figure (under 80 % of it) no warning."""
    c = catalog.components[cid]
    lo, hi = (g_per_100g(w) for w in at_4c)
    assert c.saturation_at(T0 + 4).g_per_100g_water == pytest.approx(lo + 0.4 * (hi - lo), rel=3e-3)
    (w,) = _solubility_warnings(catalog, Recipe().with_amount(cid, stock))
    assert "4 °C" in w and "crystallises" in w and "states no storage" in w
    assert _solubility_warnings(catalog, Recipe().with_amount(cid, safe)) == []


# ---- the osmotica -------------------------------------------------------------------------------------

@pytest.mark.parametrize("t_c, g, source", [
    (0.0, 181.9, "Solubility table"),    # Wikipedia 'Solubility table' (2019 copy): sucrose at 0 °C
    (10.0, 190.6, "Solubility table"),   # same table at 10 °C
    (40.0, 235.6, "Solubility table"),   # same table at 40 °C
    (20.0, 203.9, "Mohos"),              # Mohos 2010, Table A2.2 (Antokolskaya et al. 1964)
])
def test_sucrose_rows_are_read(catalog, t_c, g, source):
    """The recalled sucrose rows (179.2 g at 0 °C, 238.1 g at 40 °C) are replaced by read ones."""
    c = catalog.components["sucrose"]
    sat = c.saturation_at(T0 + t_c)
    assert sat.at_asked and not sat.from_memory
    assert sat.g_per_100g_water == pytest.approx(g, rel=1e-9)
    (row,) = [p for p in c.solubility_table if abs(p.temperature_k - T0 - t_c) < 1e-9]
    assert source in row.source  # the row names its source (the catalog writes the key's text out)


def test_sucrose_at_4_C_is_now_a_read_figure(catalog):
    """Sucrose at 4 °C: linear between the read 0 and 10 °C rows (181.9 and 190.6 g, Wikipedia table), 185.38 g,
    no longer through a recalled row (before: 184.14 g between a recalled 0 °C row and the 20 °C row)."""
    sat = catalog.components["sucrose"].saturation_at(T0 + 4)
    assert sat.g_per_100g_water == pytest.approx(181.9 + 0.4 * (190.6 - 181.9), rel=1e-12)
    assert not sat.from_memory


def test_mannitol_20_C_row_agrees_with_the_reagent_monograph(catalog):
    """ACS Reagent Chemicals, monograph 'Mannitol': 18 g in 100 mL water at 20 °C; the catalog's 20 °C row (Merck
    Index, 1 g in 5.5 mL) is the same to that figure's precision (0.5 g)."""
    sat = catalog.components["mannitol"].saturation_at(T0 + 20)
    assert not sat.from_memory
    assert abs(sat.g_per_100g_water - 18.0) <= 0.5
