"""Neutral-solute models (mediaplan.thermo.neutral) and their catalog (catalog/neutral.yaml).

The published check is the CRC Handbook freezing-point table: measured osmolalities at about
0 degC of the binary solutions. The K values were taken from the literature (or memory, flagged
in the catalog) and were not adjusted to these data.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pytest
import yaml

from mediaplan.thermo.constants import M_WATER
from mediaplan.thermo.neutral import (
    binary_osmolality,
    binary_osmolality_dm,
    molality_at_osmolality,
    neutral_params_from_dict,
    osmotic_coefficient,
    water_activity,
)
from mediaplan.thermo.params import NeutralParams

REPO = Path(__file__).resolve().parents[2]
FIXTURE = REPO / "tests" / "data" / "crc_concentrative_subset.tsv"
SHARED = REPO.parent / "shared" / "data" / "crc_concentrative_subset.tsv"

with open(REPO / "catalog" / "neutral.yaml", encoding="utf-8") as fh:
    CATALOG_DOC = yaml.safe_load(fh)
PARAMS = neutral_params_from_dict(CATALOG_DOC)

REQUIRED_IDS = {
    "sucrose", "glucose", "fructose", "maltose", "mannitol", "sorbitol", "glycerol",
    "myo_inositol", "ethylene_glycol", "dmso", "glycine", "boric_acid", "mes",
}

CRC_NAMES = {
    "Sucrose": "sucrose",
    "D-Glucose": "glucose",
    "D-Fructose": "fructose",
    "Maltose": "maltose",
    "D-Mannitol": "mannitol",
    "Glycerol": "glycerol",
}


def _read_tsv(path: Path) -> list[dict[str, str]]:
    with open(path, encoding="utf-8") as fh:
        lines = [ln for ln in fh if not ln.startswith("#")]
    return list(csv.DictReader(lines, delimiter="\t"))


# ---------------------------------------------------------------------------------------------
# Freezing-point depression vs CRC Handbook
# ---------------------------------------------------------------------------------------------

# -ln a_w = A1 theta + A2 theta^2, theta = freezing-point depression [K]
# Robinson & Stokes, Electrolyte Solutions (from memory, as in shared/data/thermo_sources.yaml)
A1, A2 = 0.009687, 4.8e-6

#: rows compared: up to about 2 mol/kg (the range of media and osmotica; also below every m_max)
M_COMPARE = 2.2


def fpd_from_osmolality(y: np.ndarray) -> np.ndarray:
    """Freezing-point depression [K] of a solution of osmolality y [osmol/kg]."""
    L = M_WATER * np.asarray(y, dtype=float)
    return (-A1 + np.sqrt(A1 * A1 + 4.0 * A2 * L)) / (2.0 * A2)


def fpd_tolerance(theta: float, m: float) -> float:
    """Allowed |model - CRC| in K.

    0.005 K: FPD printed to 0.01 K (CRC 102nd ed.).
    0.001 K: molality printed to 0.001 mol/kg, times 1.86 K kg/mol.
    (2 % + 1 % per mol/kg) of theta: the Norrish equation with literature K reproduces
    a_w of these solutes to about 1-2 % of (1 - a_w) at 25 degC (judgement; Baeza et al. 2010
    abstract reports good fits without giving a figure), and the K are 25 degC values applied
    at -0.1 to -4.5 degC; the temperature effect on phi - 1 grows with the non-ideality,
    roughly in proportion to m (judgement). This tolerance was set with the data in view;
    the K values were not.
    """
    return 0.005 + 0.001 + (0.02 + 0.01 * m) * theta


def _crc_cases():
    cases = []
    for row in _read_tsv(FIXTURE):
        sid = CRC_NAMES[row["Solute"]]
        m = float(row["Molality_m"])
        if m > min(M_COMPARE, PARAMS[sid].m_max) or not row["FPD_C"]:
            continue
        theta = float(row["FPD_C"])
        marks = ()
        if sid == "glycerol" and m < 0.06:
            # CRC 102nd ed.: 0.5 mass % glycerol (0.055 mol/kg) is printed with FPD 0.07 K, which
            # would mean phi = 0.69 for a non-electrolyte; ideal (Raoult) gives 0.10 K and every
            # other glycerol row gives phi of 1.0-1.05. Treated as a misprint in the table.
            marks = (pytest.mark.xfail(reason="CRC glycerol 0.5 % FPD 0.07 K inconsistent with the ideal limit",
                                       strict=True),)
        cases.append(pytest.param(sid, m, theta, id=f"CRC-2021-{sid}-{m:g}", marks=marks))
    return cases


@pytest.mark.parametrize(("sid", "m", "theta_crc"), _crc_cases())
def test_freezing_point_depression_vs_crc(sid, m, theta_crc):
    """CRC Handbook 102nd ed. (2021), 'Concentrative properties of aqueous solutions', FPD column."""
    theta = float(fpd_from_osmolality(binary_osmolality(m, PARAMS[sid])))
    assert abs(theta - theta_crc) <= fpd_tolerance(theta_crc, m), (sid, m, theta, theta_crc)


def test_norrish_beats_ideal_for_concentrated_sucrose():
    # CRC 102nd ed.: sucrose 40 mass %, 1.948 mol/kg, FPD 4.45 K. Raoult's law misses by ~10 %,
    # the Norrish term closes most of the gap: the non-ideality is real and of the right sign.
    theta_crc = 4.45
    ideal = NeutralParams("sucrose", "ideal", 0.0, 10.0, "test")
    err_ideal = abs(fpd_from_osmolality(binary_osmolality(1.948, ideal)) - theta_crc)
    err_norrish = abs(fpd_from_osmolality(binary_osmolality(1.948, PARAMS["sucrose"])) - theta_crc)
    assert err_ideal > 0.3
    assert err_norrish < err_ideal / 2


def test_fixture_matches_shared_table():
    if not SHARED.exists():
        pytest.skip(f"shared CRC table not found at {SHARED}; the fixture copy is used by the other tests")
    shared = {(r["Solute"], r["Molality_m"]): r for r in _read_tsv(SHARED)}
    fixture = _read_tsv(FIXTURE)
    assert len(fixture) > 60
    for row in fixture:
        assert shared[(row["Solute"], row["Molality_m"])] == row


# ---------------------------------------------------------------------------------------------
# The equations themselves
# ---------------------------------------------------------------------------------------------

def test_hand_evaluated_norrish_sucrose_1_molal():
    # a_w = x_w exp(-K x_s^2), K = 6.47, m = 1 mol/kg, evaluated step by step
    n_w = 1.0 / 0.018015268
    x_s = 1.0 / (1.0 + n_w)
    x_w = 1.0 - x_s
    aw = x_w * math.exp(-6.47 * x_s * x_s)
    assert water_activity(1.0, PARAMS["sucrose"]) == pytest.approx(aw, rel=1e-14)
    assert binary_osmolality(1.0, PARAMS["sucrose"]) == pytest.approx(-math.log(aw) / 0.018015268, rel=1e-13)


def test_ideal_is_raoult():
    p = PARAMS["dmso"]
    m = np.array([0.0, 0.01, 0.3, 2.0])
    assert np.allclose(water_activity(m, p), 1.0 / (1.0 + M_WATER * m), rtol=1e-15, atol=0)


@pytest.mark.parametrize("sid", sorted(PARAMS))
def test_ideal_limit(sid):
    p = PARAMS[sid]
    assert osmotic_coefficient(0.0, p) == 1.0
    assert osmotic_coefficient(1e-7, p) == pytest.approx(1.0, abs=1e-7)
    # limiting slope of phi: (K - 1/2) M_w, from the series of the Norrish form
    m = 1e-4
    slope = (osmotic_coefficient(m, p) - 1.0) / m
    assert slope == pytest.approx((p.K - 0.5) * M_WATER, rel=1e-3, abs=1e-9)


@pytest.mark.parametrize("sid", sorted(PARAMS))
def test_inverse_round_trip(sid):
    p = PARAMS[sid]
    m = np.concatenate([[0.0], np.logspace(-9, math.log10(p.m_max), 200), [3 * p.m_max]])
    back = molality_at_osmolality(binary_osmolality(m, p), p)
    assert back[0] == 0.0
    np.testing.assert_allclose(back[1:], m[1:], rtol=1e-12, atol=0)


def test_inverse_with_negative_K():
    p = NeutralParams("x", "norrish", -0.4, 5.0, "test")
    m = np.logspace(-6, 1, 50)
    np.testing.assert_allclose(molality_at_osmolality(binary_osmolality(m, p), p), m, rtol=1e-12)


@pytest.mark.parametrize("sid", sorted(PARAMS))
def test_monotonic_and_derivative(sid):
    p = PARAMS[sid]
    m = np.linspace(0.0, 2 * p.m_max, 401)
    y = binary_osmolality(m, p)
    assert np.all(np.diff(y) > 0)
    assert np.all(np.diff(water_activity(m, p)) < 0)
    h = 1e-6
    mm = m[1:]
    fd = (binary_osmolality(mm + h, p) - binary_osmolality(mm - h, p)) / (2 * h)
    np.testing.assert_allclose(binary_osmolality_dm(mm, p), fd, rtol=1e-7)
    assert binary_osmolality_dm(0.0, p) == pytest.approx(1.0)


def test_vectorised_shapes():
    p = PARAMS["sucrose"]
    m = np.array([[0.1, 0.2], [0.3, 0.4]])
    for f in (binary_osmolality, binary_osmolality_dm, water_activity, osmotic_coefficient):
        out = f(m, p)
        assert out.shape == (2, 2)
        assert out[1, 0] == pytest.approx(float(f(0.3, p)))
    assert np.ndim(binary_osmolality(0.1, p)) == 0
    y = binary_osmolality(m, p)
    assert molality_at_osmolality(y, p).shape == (2, 2)
    assert molality_at_osmolality([], p).shape == (0,)


def test_bad_inputs():
    p = PARAMS["sucrose"]
    for bad in (-0.1, np.nan, np.inf):
        with pytest.raises(ValueError):
            binary_osmolality(bad, p)
        with pytest.raises(ValueError):
            molality_at_osmolality(bad, p)


# ---------------------------------------------------------------------------------------------
# Catalog
# ---------------------------------------------------------------------------------------------

def test_catalog_has_required_species_with_sources():
    assert set(PARAMS) >= REQUIRED_IDS
    for sid, p in PARAMS.items():
        assert p.species == sid
        assert p.source and p.source.strip()
        assert p.m_max > 0
        if p.model == "ideal":
            assert p.K == 0.0
            assert "no published" in p.source
        entry = CATALOG_DOC["solutes"][sid]
        assert entry["confidence"] in {"A", "B", "C"}
        assert "m_max_basis" in entry


def test_catalog_values_as_read():
    # Chirife et al. K at 25 degC, read in PMC2836749 Table 3 (shared/data/thermo_sources.yaml, norrish_K)
    expected = {"glycerol": 1.16, "sorbitol": 1.65, "mannitol": 0.906, "erythritol": 1.34, "xylitol": 1.66}
    for sid, K in expected.items():
        assert PARAMS[sid].K == K
    assert PARAMS["sucrose"].K == 6.47  # from memory, flagged C in the catalog
    assert PARAMS["glucose"].K == PARAMS["fructose"].K == 2.25  # from memory, flagged C
    assert CATALOG_DOC["solutes"]["maltose"]["K_borrowed_from"] == "sucrose"
    assert PARAMS["maltose"].K == PARAMS["sucrose"].K


def _doc(**entry):
    base = {"model": "norrish", "K": 1.0, "m_max": 1.0, "source": "x"}
    base.update(entry)
    base = {k: v for k, v in base.items() if v is not None}
    return {"solutes": {"testose": base}}


@pytest.mark.parametrize(
    "doc",
    [
        _doc(model="pitzer"),
        _doc(K=None),
        _doc(K="1.2"),
        _doc(K=float("nan")),
        _doc(K=-0.5),
        _doc(m_max=0),
        _doc(m_max=None),
        _doc(source=""),
        _doc(source=None),
        _doc(model="ideal", K=0.5),
        _doc(colour="blue"),
        _doc(K=True),
    ],
)
def test_bad_entries_name_the_entry(doc):
    with pytest.raises(ValueError, match="testose"):
        neutral_params_from_dict(doc)


@pytest.mark.parametrize("doc", [{}, {"solutes": []}, [], {"solutes": {"Sucrose": {}}}, {"solutes": {"K[+]": {}}}])
def test_bad_documents(doc):
    with pytest.raises(ValueError):
        neutral_params_from_dict(doc)


def test_source_key_resolves_to_citation():
    doc = {"sources": {"s1": "Someone (2000)\n  J. Things 1:1"}, "solutes": {"a": {"model": "ideal", "m_max": 1, "source": "s1"}}}
    assert neutral_params_from_dict(doc)["a"].source == "Someone (2000) J. Things 1:1"
