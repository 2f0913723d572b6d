"""The whole engine (recipe -> evaluate) against published values and reference libraries."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

DATA = Path(__file__).resolve().parents[1] / "data"

MS_SALTS = [("NH4NO3", "1650 mg/L"), ("KNO3", "1900 mg/L"), ("CaCl2·2H2O", "440 mg/L"),
            ("MgSO4·7H2O", "370 mg/L"), ("KH2PO4", "170 mg/L")]


def recipe(items, **kw) -> Recipe:
    r = Recipe(**kw)
    for k, v in items:
        r = r.with_amount(k, v)
    return r


def test_ms_macro_salts_potential(catalog):
    """Kozai et al. (book chapter on the water potential of culture media): MS salts about -0.21 MPa
    (stated to two figures; tolerance ±0.01 MPa)."""
    ev = evaluate(recipe(MS_SALTS), catalog)
    assert ev.osmotic_potential_mpa == pytest.approx(-0.21, abs=0.01)


def test_full_ms_salts_potential(catalog):
    """The same source for all MS salts (macro + micro + iron): about -0.21 MPa (Kozai et al.),
    reported as -212 kPa for MS salts in the same chapter (shared media notes)."""
    r = Recipe(base="ms1962")
    for line in catalog.media["ms1962"].lines:
        if catalog.components[line.component].group not in ("macro", "micro", "iron", "salt"):
            r = r.with_amount(line.component, "0 g/L")
    ev = evaluate(r, catalog)
    assert ev.osmotic_potential_mpa == pytest.approx(-0.212, abs=0.01)


def test_ms_with_sucrose_near_reported(catalog):
    """MS with 30 g/L sucrose is reported near -0.4 MPa (Kozai et al.; one significant figure, so
    ±0.05 MPa)."""
    ev = evaluate(Recipe(base="ms1962"), catalog)
    assert ev.osmotic_potential_mpa == pytest.approx(-0.4, abs=0.05)
    # and it is clearly more negative than the salts alone
    assert ev.osmotic_potential_mpa < -0.4


def test_ms_like_mixture_against_pyeql_stored(catalog):
    """pyEQL 1.7.0 (native engine, May et al. 2011 parameters) for NH4NO3 20.6, KNO3 18.8, CaCl2 2.99,
    MgSO4 1.50, KH2PO4 1.25 mmol/kg at 25 °C: phi = 0.9224, a_w = 0.998451, 86.0 mOsm/kg
    (values recorded in the project's reference notes). Tolerance 0.5 % on phi and osmolality."""
    items = [("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
             ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")]
    ev = evaluate(recipe(items), catalog)
    assert ev.osmolality_ideal_mosmol_per_kg == pytest.approx(93.27, rel=1e-9)
    assert ev.electrolyte_phi == pytest.approx(0.9224, rel=0.005)
    assert ev.osmolality_mosmol_per_kg == pytest.approx(86.0, rel=0.005)
    assert ev.water_activity == pytest.approx(0.998451, abs=2e-5)


def _crc_rows(solute):
    name = "crc_salts_subset.tsv" if solute.endswith("chloride") else "crc_concentrative_subset.tsv"
    with (DATA / name).open() as fh:
        rows = [r for r in csv.reader(fh, delimiter="\t") if r and not r[0].startswith("#")]
    head = rows[0]
    out = []
    for r in rows[1:]:
        d = dict(zip(head, r, strict=False))
        if d["Solute"] == solute and d.get("FPD_C"):
            out.append(d)
    return out


@pytest.mark.parametrize("solute, cid, m_max", [("Sucrose", "sucrose", 1.4), ("D-Mannitol", "mannitol", 0.97),
                                                ("D-Glucose", "glucose", 1.4), ("Glycerol", "glycerol", 1.3)])
def test_osmometer_reading_against_crc_freezing_points(solute, cid, m_max, catalog):
    """The freezing-point osmometer figure of a binary solution made up by molality, against the CRC
    Handbook 'Concentrative properties of aqueous solutions' (102nd ed., 2021): FPD/1.858.
    Tolerance: 0.005 K rounding of FPD, plus 3 % for Norrish K values fitted at 25 °C applied at the
    freezing point."""
    rows = [r for r in _crc_rows(solute) if float(r["Molality_m"]) <= m_max and float(r["FPD_C"]) >= 0.2]
    assert len(rows) >= 3
    for r in rows:
        m = float(r["Molality_m"])
        ev = evaluate(Recipe().with_amount(cid, f"{m} mol/kg"), catalog)
        fpd = float(r["FPD_C"])
        assert ev.freezing_point_depression_k == pytest.approx(fpd, abs=0.005 + 0.03 * fpd), (m, fpd)


@pytest.mark.parametrize("solute, cid", [("Sodium chloride", "sodium_chloride"), ("Potassium chloride", "potassium_chloride"),
                                         ("Calcium chloride", "calcium_chloride_anhydrous")])
def test_salt_freezing_points_against_crc(solute, cid, catalog):
    """Salt freezing points through the whole engine vs CRC (102nd ed., 2021), up to 1.5 mol/kg: the
    medium is evaluated again at 0 °C with the Pitzer temperature terms. Tolerance 3 % plus the
    0.005 K rounding of the table (measured: worst 2.5 %, CaCl2 near 0.4-0.6 mol/kg; the freezing-point
    relation used is itself approximate at several kelvin)."""
    rows = [r for r in _crc_rows(solute) if 0.04 <= float(r["Molality_m"]) <= 1.5]
    assert len(rows) >= 3
    for r in rows:
        m = float(r["Molality_m"])
        ev = evaluate(Recipe().with_amount(cid, f"{m} mol/kg"), catalog)
        fpd = float(r["FPD_C"])
        assert ev.freezing_point_depression_k == pytest.approx(fpd, abs=0.005 + 0.03 * fpd), (m, fpd)


@pytest.mark.parametrize("solute, cid, c, m, tol", [
    # CRC Handbook (102nd ed., 2021) concentrative properties at 20 °C: molarity c -> molality m.
    # Tolerance: the table's 3-decimal rounding plus the concentration dependence of apparent
    # molar volumes (we use near-infinite-dilution values).
    ("Sucrose", "sucrose", 0.303, 0.325, 0.01),
    ("Sucrose", "sucrose", 0.632, 0.730, 0.01),
    ("D-Mannitol", "mannitol", 0.538, 0.576, 0.01),
    ("Sodium chloride", "sodium_chloride", 0.793, 0.806, 0.01),
    ("Glycerol", "glycerol", 1.109, 1.207, 0.01),
])
def test_molarity_to_molality_against_crc_densities(solute, cid, c, m, tol, catalog):
    ev = evaluate(Recipe(temperature="20 degC").with_amount(cid, f"{c} mol/L"), catalog)
    assert ev.components[0].molality_mmol_per_kg / 1000 == pytest.approx(m, rel=tol)


def test_ms_salts_against_pyeql_live(catalog):
    """The same MS-like mixture computed live by pyEQL (reference library in the test extras)."""
    import pyEQL  # a required reference library (tests/conftest.py)
    sol = pyEQL.Solution({"NH4+": "20.6 mmol/kg", "NO3-": "39.4 mmol/kg", "K+": "20.05 mmol/kg",
                          "Ca+2": "2.99 mmol/kg", "Cl-": "5.98 mmol/kg", "Mg+2": "1.50 mmol/kg",
                          "SO4-2": "1.50 mmol/kg", "H2PO4-": "1.25 mmol/kg"}, engine="native", pH=5.8)
    phi_ref = float(sol.get_osmotic_coefficient())
    items = [("NH4NO3", "20.6 mmol/kg"), ("KNO3", "18.8 mmol/kg"), ("CaCl2", "2.99 mmol/kg"),
             ("MgSO4", "1.50 mmol/kg"), ("KH2PO4", "1.25 mmol/kg")]
    ev = evaluate(recipe(items), catalog)
    assert ev.electrolyte_phi == pytest.approx(phi_ref, rel=0.005)
