"""A value test for every figure a user reads in an evaluation (calc, the exports, the app's panel).

Each figure is computed here from its definition with constants taken from their sources (CODATA, IAPWS,
the osmometer convention), never from mediaplan.thermo.constants, and compared with the evaluation; where a
published measurement exists (CRC densities) the figure is compared with it as well. The tolerance beside
each check says where it comes from.
"""

from __future__ import annotations

import math

import iapws  # a required reference library (tests/conftest.py)
import numpy as np
import pytest

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

R_CODATA = 8.314462618  # J/(mol K), CODATA 2018, exact (k * N_A)
M_W_IAPWS = 0.018015268  # kg/mol, IAPWS-95 molar mass of water
K_OSMOMETER = 1.858  # K kg/osmol, the freezing-point osmometer convention (common practice)
DH_FUSION = 6009.5  # J/mol, enthalpy of fusion of ice at 273.15 K (from memory, as in the shared thermo data)
T0 = 273.15  # K


def rho_iapws(t_c: float) -> float:
    """Density of liquid water [kg/m^3] at t_c [°C] and 0.101325 MPa, IAPWS-95 (the iapws package)."""
    return iapws.IAPWS95(T=T0 + t_c, P=0.101325).rho


def per_osmol_mpa(t_c: float) -> float:
    """|psi| per osmol/kg [MPa kg/osmol] = R T / V_w = R T rho_w / M_w * M_w (ln a_w = -M_w Osm)."""
    return R_CODATA * (T0 + t_c) * rho_iapws(t_c) * 1e-6


MEDIA = {
    "MS + 30 g/L sucrose": Recipe(base="ms1962").with_amount("sucrose", "30 g/L"),
    "NaCl 0.1 mol/kg": Recipe().with_amount("sodium_chloride", "0.1 mol/kg"),
    "sucrose 30 g/L at 20 °C": Recipe(temperature="20 degC").with_amount("sucrose", "30 g/L"),
    "mannitol 0.3 mol/kg at 35 °C": Recipe(temperature="35 degC").with_amount("mannitol", "0.3 mol/kg"),
}


@pytest.fixture(scope="module")
def evs(catalog):
    return {name: evaluate(recipe, catalog) for name, recipe in MEDIA.items()}


# ---- the constants themselves ----------------------------------------------------------------------------
def test_potential_per_osmol_at_25c_from_codata_and_iapws():
    # R T / V_w at 25 °C = 8.314462618 * 298.15 * 997.047 / 1e6 = 2.4716 MPa kg/osmol (not 2.4726, and not
    # the 2.479 MPa L/osmol of R T alone, which belongs to osmolarity). IAPWS-95 density to 1e-6.
    assert per_osmol_mpa(25.0) == pytest.approx(2.4716, abs=5e-5)
    assert per_osmol_mpa(20.0) == pytest.approx(2.4330, abs=5e-5)  # R * 293.15 * 998.207 (IAPWS-95)


# ---- figures of an evaluation ----------------------------------------------------------------------------
@pytest.mark.parametrize("name", list(MEDIA))
def test_osmotic_potential_per_osmol(evs, name):
    """psi = -(R T / V_w) M_w Osm = -R T rho_w Osm. Tanaka et al. (2001) density agrees with IAPWS-95 to about
    1e-6; 1e-5 relative is the bound."""
    ev = evs[name]
    t_c = ev.to_dict()["temperature_c"]
    expected = -per_osmol_mpa(t_c) * ev.osmolality_mosmol_per_kg / 1000.0
    assert ev.osmotic_potential_mpa == pytest.approx(expected, rel=1e-5)


@pytest.mark.parametrize("name", list(MEDIA))
def test_osmotic_pressure_is_minus_the_potential(evs, name):
    ev = evs[name]
    assert ev.to_dict()["osmotic_pressure_mpa"] == pytest.approx(-ev.osmotic_potential_mpa, rel=1e-12)
    assert ev.osmotic_potential_mpa < 0


@pytest.mark.parametrize("name", list(MEDIA))
def test_water_activity_from_osmolality(evs, name):
    """ln a_w = -M_w Osm, the definition of the (practical) osmolality; M_w of IAPWS-95. Exact."""
    ev = evs[name]
    assert ev.water_activity == pytest.approx(math.exp(-M_W_IAPWS * ev.osmolality_mosmol_per_kg / 1000.0),
                                              rel=1e-12)


@pytest.mark.parametrize("name", list(MEDIA))
def test_osmometer_figure_is_the_depression_over_1858(evs, name):
    """A freezing-point osmometer shows theta / 1.858 K kg/osmol (common practice): exact by definition."""
    d = evs[name].to_dict()
    assert d["osmometer_mosmol_per_kg"] == pytest.approx(d["freezing_point_depression_k"] / K_OSMOMETER * 1000.0,
                                                         rel=1e-12)


def test_freezing_point_of_01_molal_sodium_chloride(evs):
    """theta from thermodynamics, independent of the engine's freezing-point polynomial:
    -ln a_w(freezing) = M_w nu m phi(0 °C) and, to first order, theta = -ln a_w R T0^2 / dH_fus.

    phi(0.1 mol/kg, 0 °C) = 0.932: Pitzer, Peiper & Busey (1984), NaCl osmotic coefficient table, 0 °C row
    (printed to 0.001: +/-5.4e-4 relative). dH_fus 6009.5 J/mol (from memory; the figure 6.01 kJ/mol is in
    every table, +/-4e-4). The second-order term (4.8e-6 theta^2 against 0.009687 theta, Robinson & Stokes
    1959) is 1.7e-4 of theta here. Sum: 1.2e-3; bound 1.5e-3."""
    d = evs["NaCl 0.1 mol/kg"].to_dict()
    ln_aw = M_W_IAPWS * 2 * 0.1 * 0.932
    theta = ln_aw * R_CODATA * T0**2 / DH_FUSION
    assert theta == pytest.approx(0.3467, abs=1e-4)
    assert d["freezing_point_depression_k"] == pytest.approx(theta, rel=1.5e-3)
    # so the osmometer shows 186.6 mOsm/kg for 0.1 mol/kg NaCl (0.3467 K / 1.858)
    assert d["osmometer_mosmol_per_kg"] == pytest.approx(theta / K_OSMOMETER * 1000.0, rel=1.5e-3)


def test_osmolality_of_01_molal_sodium_chloride(evs):
    """Osm = nu m phi; phi(0.1 mol/kg, 25 °C) = 0.932: Robinson & Stokes (1959) Appendix 8.10 give 0.9324
    (from memory); Pitzer, Peiper & Busey (1984) 25 °C row 0.933 (printed to 0.001). Bound 1e-3 relative."""
    ev = evs["NaCl 0.1 mol/kg"]
    assert ev.osmolality_mosmol_per_kg == pytest.approx(2 * 100.0 * 0.9324, rel=1e-3)
    assert ev.to_dict()["osmolality_ideal_mosmol_per_kg"] == pytest.approx(200.0, rel=1e-12)  # nu m, exact


@pytest.mark.parametrize("name", list(MEDIA))
def test_vant_hoff_potential(evs, name):
    """van't Hoff: psi = -c R T with c the ideal osmolarity, sum over components of (particles per formula
    unit) x molarity. Exact by definition."""
    ev = evs[name]
    d = ev.to_dict()
    c = sum(comp["molarity_mmol_per_l"] * comp["osmolality_ideal_mosmol_per_kg"] / comp["molality_mmol_per_kg"]
            for comp in d["components"] if comp["molality_mmol_per_kg"])  # mol/m^3 (ideal osmoles)
    expected = -c * R_CODATA * (T0 + d["temperature_c"]) * 1e-6
    assert d["vant_hoff_potential_mpa"] == pytest.approx(expected, rel=1e-9)


def test_vant_hoff_potential_of_30_g_per_l_sucrose(evs):
    """30 g/L sucrose, M = 342.297 g/mol (IUPAC 2021 atomic weights; periodictable gives the same):
    c = 87.643 mol/m^3, -c R T at 20 °C = -0.21364 MPa. Molar mass to 1e-5; bound 1e-5."""
    c = 30.0 / 342.297 * 1000.0
    assert evs["sucrose 30 g/L at 20 °C"].vant_hoff_potential_mpa == pytest.approx(
        -c * R_CODATA * 293.15 * 1e-6, rel=1e-5)


# ---- density and water per litre against the CRC Handbook ------------------------------------------------
# CRC Handbook of Chemistry and Physics, 102nd ed. (2021), "Concentrative properties of aqueous solutions"
# (tests/data/crc_*_subset.tsv): mass %, density at 20 °C [g/cm3]. Bound 3e-4 kg/L: the table prints 1e-4,
# and the engine's constant apparent molar volumes drift by up to about 2e-4 kg/L over these ranges
# (sucrose's rises by about 1 % to 0.7 mol/kg, from memory). A 5 % change in a solute's apparent molar
# volume moves these densities by 1e-3 to 7e-3 kg/L (computed from the definitions).
CRC_DENSITY = [
    ("sucrose", 342.297, 4.0, 1.0139),
    ("sucrose", 342.297, 10.0, 1.0381),
    ("sucrose", 342.297, 20.0, 1.0810),
    ("sodium_chloride", 58.443, 0.5, 1.0018),
    ("sodium_chloride", 58.443, 1.5, 1.0089),
]


@pytest.mark.parametrize("cid, molar_mass, mass_pct, rho", CRC_DENSITY,
                         ids=[f"{c}-{w:g}%" for c, _, w, _ in CRC_DENSITY])
def test_density_and_water_per_litre_vs_crc(catalog, cid, molar_mass, mass_pct, rho):
    m = mass_pct / (100.0 - mass_pct) * 1000.0 / molar_mass  # mol/kg water, exact from mass %
    ev = evaluate(Recipe(temperature="20 degC").with_amount(cid, f"{m:.6f} mol/kg"), catalog)
    d = ev.to_dict()
    assert d["density_kg_per_l"] == pytest.approx(rho, abs=3e-4)
    # water per litre = density x mass fraction of water
    assert d["water_kg_per_l"] == pytest.approx(rho * (1.0 - mass_pct / 100.0), abs=3e-4)
    # and the two figures are consistent: density = water + solute per litre
    assert d["density_kg_per_l"] == pytest.approx(d["water_kg_per_l"] * (1.0 + m * molar_mass / 1000.0),
                                                  rel=2e-5)


def test_pure_water_density_is_iapws(catalog):
    """A medium of nothing but a trace of sucrose at 25 °C: water per litre -> rho_w (IAPWS-95, 997.047
    kg/m^3). Tanaka et al. (2001) agree with IAPWS-95 to about 1e-6; the trace adds 1e-9."""
    ev = evaluate(Recipe().with_amount("sucrose", "1e-6 mol/kg"), catalog)
    assert ev.to_dict()["water_kg_per_l"] == pytest.approx(rho_iapws(25.0) / 1000.0, rel=5e-6)


# ---- ionic strength ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("cid, m, ionic", [
    ("sodium_chloride", 0.1, 0.1),          # 1:1, I = m
    ("calcium_chloride_dihydrate", 0.01, 0.03),   # 2:1, I = (4 + 2)/2 m
    ("magnesium_sulfate_heptahydrate", 0.01, 0.04),  # 2:2, I = (4 + 4)/2 m
    ("potassium_dihydrogen_phosphate", 0.02, 0.02),  # 1:1 as the catalog's species, H2PO4-
    ("sucrose", 0.1, 0.0),                  # no ions
])
def test_ionic_strength(catalog, cid, m, ionic):
    """I = 1/2 sum m_i z_i^2 [mol/kg] (Lewis & Randall 1921): exact."""
    ev = evaluate(Recipe().with_amount(cid, f"{m} mol/kg"), catalog)
    assert ev.to_dict()["ionic_strength_mol_per_kg"] == pytest.approx(ionic, rel=1e-12, abs=1e-15)


def test_ionic_strength_of_ms_adds_up(evs):
    """MS: the ionic strength of the mixture is the sum over its salts of what each gives alone (I is linear
    in the molalities), with each salt's own ions (formula: charges of the ions it dissolves to)."""
    ions = {"ammonium_nitrate": 1, "potassium_nitrate": 1, "calcium_chloride_dihydrate": 3,
            "magnesium_sulfate_heptahydrate": 4, "potassium_dihydrogen_phosphate": 1}
    d = evs["MS + 30 g/L sucrose"].to_dict()
    macro = sum(ions[c["id"]] * c["molality_mmol_per_kg"] / 1000.0 for c in d["components"] if c["id"] in ions)
    # MS 1962 macro salts, mg/L / molar mass (IUPAC 2021) x ions' weight, per kg of water: NH4NO3 1650/80.043,
    # KNO3 1900/101.102, CaCl2.2H2O 440/147.01 x3, MgSO4.7H2O 370/246.47 x4, KH2PO4 170/136.085
    per_l = (1650 / 80.043 + 1900 / 101.102 + 3 * 440 / 147.01 + 4 * 370 / 246.47 + 170 / 136.085) / 1000.0
    assert macro == pytest.approx(per_l / d["water_kg_per_l"], rel=1e-4)
    # micro salts and the iron chelate (about 0.1 mmol/L of 2:2 sulfates and EDTA each) add 1-2.5 %
    assert macro * 1.01 < d["ionic_strength_mol_per_kg"] < macro * 1.025


# ---- shares and groups ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("name", list(MEDIA))
def test_shares_and_groups_add_up(evs, name):
    d = evs[name].to_dict()
    total = d["osmolality_mosmol_per_kg"]
    assert sum(c["osmolality_mosmol_per_kg"] for c in d["components"]) == pytest.approx(total, rel=1e-10)
    assert sum(c["share"] for c in d["components"]) == pytest.approx(1.0, rel=1e-10)
    for c in d["components"]:
        assert c["share"] == pytest.approx(c["osmolality_mosmol_per_kg"] / total, rel=1e-10)
    if d["groups"]:
        assert sum(d["groups"].values()) == pytest.approx(total, rel=1e-10)


def test_groups_of_ms_with_sucrose(evs):
    """The groups are sums of their components; the carbon source is the sucrose, whose ideal part is
    30 g/L / 342.297 g/mol per kg of water (exact), and whose non-ideal part is small (Norrish term)."""
    d = evs["MS + 30 g/L sucrose"].to_dict()
    by_id = {c["id"]: c for c in d["components"]}
    assert d["groups"]["carbon source"] == pytest.approx(by_id["sucrose"]["osmolality_mosmol_per_kg"], rel=1e-12)
    macro = sum(c["osmolality_mosmol_per_kg"] for c in d["components"] if c["group"] == "macro")
    assert d["groups"]["macro salts"] == pytest.approx(macro, rel=1e-12)
    water = d["water_kg_per_l"]
    assert by_id["sucrose"]["molality_mmol_per_kg"] == pytest.approx(30.0 / 342.297 / water * 1000.0, rel=1e-5)
    # sucrose's own share: Norrish's term raises it over ideal by K x_s ~ 1 % at 0.09 mol/kg
    ratio = by_id["sucrose"]["osmolality_mosmol_per_kg"] / by_id["sucrose"]["osmolality_ideal_mosmol_per_kg"]
    assert 1.0 < ratio < 1.03


def test_figures_are_consistent_with_the_water_activity(evs):
    """a_w, psi and Osm are one figure in three units: psi = (R T / V_w) ln a_w (Pa), V_w from IAPWS-95."""
    for name, ev in evs.items():
        t_c = ev.to_dict()["temperature_c"]
        vw = M_W_IAPWS / rho_iapws(t_c)
        psi = R_CODATA * (T0 + t_c) / vw * np.log(ev.water_activity) * 1e-6
        assert ev.osmotic_potential_mpa == pytest.approx(psi, rel=1e-5), name
