"""The first-derivative temperature terms of catalog/pitzer.yaml equal the numbers their sources print.

A slip in a temperature derivative does not show at 25 °C, where every test of published osmotic
coefficients runs, and hardly at the 0 °C of a freezing point in dilute media: so each derivative is compared,
exactly (relative 1e-9), with the copy in tests/data/parameter_sources.yaml (blocks ``pitzer1991_dT``: Pitzer
1991 ch. 3 Tables 12 and 13; ``sp78_dT``: Silvester & Pitzer 1978 Table I). The pairs whose terms come from
PHREEQC's pitzer.dat (the Na-K-Ca-Mg-Cl-SO4 set) are not part of this check.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest
import yaml

REPO = Path(__file__).resolve().parents[2]
SOURCES = yaml.safe_load((REPO / "tests" / "data" / "parameter_sources.yaml").read_text(encoding="utf-8"))
PITZER = yaml.safe_load((REPO / "catalog" / "pitzer.yaml").read_text(encoding="utf-8"))

#: catalog source key of the temperature terms -> block of the copy
BLOCKS = {"pitzer1991_dT": "pitzer1991_dT", "sp78": "sp78_dT"}


def _salt(cation: str, anion: str) -> str:
    """'Ca[2+]', 'NO3[-]' -> 'Ca(NO3)2'; 'NH4[+]', 'Cl[-]' -> 'NH4Cl' (the names the copy uses)."""
    def split(ion):
        m = re.match(r"^([A-Za-z0-9]+)\[(\d*)([+-])\]$", ion)
        return m.group(1), int(m.group(2) or 1)
    (c, zc), (a, za) = split(cation), split(anion)
    g = math.gcd(zc, za)
    nu_c, nu_a = za // g, zc // g
    cat = c if nu_c == 1 else f"{c}{nu_c}"
    an = a if nu_a == 1 else (f"({a}){nu_a}" if len(re.findall(r"[A-Z]", a)) > 1 else f"{a}{nu_a}")
    return cat + an


def _rows():
    return [pytest.param(r, id=_salt(r["cation"], r["anion"])) for r in PITZER["binary"]
            if r.get("temperature_source") in BLOCKS]


@pytest.mark.parametrize("row", _rows())
def test_first_derivatives_as_published(row):
    copy = SOURCES[BLOCKS[row["temperature_source"]]][_salt(row["cation"], row["anion"])]
    terms = row["temperature"]
    assert set(terms) == set(copy), (row["cation"], row["anion"])
    for name, printed in copy.items():
        a1, a2, a3, a4, a5 = terms[name]
        assert (a1, a2, a4, a5) == (0, 0, 0, 0), name
        assert math.isclose(a3, printed, rel_tol=1e-9), (name, a3, printed)


def test_every_first_derivative_pair_is_checked():
    """Six pairs carry first derivatives (KNO3, NaNO3, KH2PO4, Ca(NO3)2, Mg(NO3)2, NH4Cl), each in the copy."""
    rows = _rows()
    assert len(rows) == 6
    named = {_salt(p.values[0]["cation"], p.values[0]["anion"]) for p in rows}
    assert named == set(SOURCES["pitzer1991_dT"]) | set(SOURCES["sp78_dT"])
