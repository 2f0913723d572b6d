"""Norrish constants and temperature: what the freezing-point data say about the 25 °C K.

No published temperature dependence of Norrish constants was found, so the models carry none
(catalog/neutral.yaml, description). These tests measure, on the CRC Handbook freezing points
(102nd ed., 2021, "Concentrative properties of aqueous solutions", tests/data/crc_concentrative_subset.tsv;
about 0 °C), how the 25 °C K behave there, and hold the catalog's statements to those measurements:
the least-squares K at the freezing point, and maltose's borrowed K (sucrose's 6.47, from memory).
Nothing here is fitted into the catalog.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest
import yaml
from scipy.optimize import minimize_scalar

from mediaplan.thermo import potential
from mediaplan.thermo.neutral import binary_osmolality, neutral_params_from_dict
from mediaplan.thermo.params import NeutralParams

REPO = Path(__file__).resolve().parents[2]
CRC = REPO / "tests" / "data" / "crc_concentrative_subset.tsv"
M_MAX = 2.2  # the range compared in tests/thermo/test_neutral.py


def _rows(solute: str) -> tuple[np.ndarray, np.ndarray]:
    with CRC.open(encoding="utf-8") as fh:
        lines = [ln for ln in fh if not ln.startswith("#")]
    m, theta = [], []
    for r in csv.DictReader(lines, delimiter="\t"):
        if r["Solute"] == solute and r["FPD_C"] and float(r["Molality_m"]) <= M_MAX:
            m.append(float(r["Molality_m"]))
            theta.append(float(r["FPD_C"]))
    return np.array(m), np.array(theta)


@pytest.fixture(scope="module")
def catalog():
    with (REPO / "catalog" / "neutral.yaml").open(encoding="utf-8") as fh:
        doc = yaml.safe_load(fh)
    return doc, neutral_params_from_dict(doc)


def _fpd(m: np.ndarray, K: float) -> np.ndarray:
    y = binary_osmolality(m, NeutralParams("x", "norrish", K, 10.0, "test"))
    return np.asarray(potential.freezing_point_depression(potential.water_activity(y)), dtype=float)


def _rms(m, theta, K) -> float:
    return float(np.sqrt(np.mean((_fpd(m, K) - theta) ** 2)))


def _best_K(m, theta) -> float:
    return float(minimize_scalar(lambda K: _rms(m, theta, K), bounds=(0.0, 15.0), method="bounded",
                                 options={"xatol": 1e-4}).x)


@pytest.mark.parametrize(("solute", "sid", "stated"), [("Sucrose", "sucrose", 7.34), ("Maltose", "maltose", 6.93)])
def test_freezing_point_K_as_stated_and_above_the_25c_K(catalog, solute, sid, stated):
    """The K that fits the CRC freezing points best (stated in the catalog's description, for information)
    exceeds the 25 °C K used: at about 0 °C these disaccharides are more non-ideal than the 25 °C K says."""
    doc, params = catalog
    m, theta = _rows(solute)
    best = _best_K(m, theta)
    assert best == pytest.approx(stated, abs=0.01)
    assert f"{stated:.2f} for {sid}" in " ".join(doc["description"].split())
    assert best > params[sid].K
    # and the 25 °C K still reproduces the freezing points to within 0.05 K rms (the CRC prints 0.01 K)
    assert _rms(m, theta, params[sid].K) < 0.05


def test_maltose_borrowed_K_fits_as_well_as_on_sucrose(catalog):
    """Maltose borrows sucrose's K (no published maltose K was found). On the CRC freezing points it fits
    maltose (rms 0.029 K) no worse than sucrose itself (0.039 K), as the catalog entry says."""
    doc, params = catalog
    K = params["maltose"].K
    assert K == params["sucrose"].K
    rms_maltose = _rms(*_rows("Maltose"), K)
    rms_sucrose = _rms(*_rows("Sucrose"), K)
    assert rms_maltose <= rms_sucrose
    assert rms_maltose == pytest.approx(0.029, abs=0.0005)
    assert rms_sucrose == pytest.approx(0.039, abs=0.0005)
    assert "rms 0.029 K" in doc["solutes"]["maltose"]["K_basis"]
