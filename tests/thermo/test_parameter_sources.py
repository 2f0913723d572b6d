"""Every parameter of the bundled catalog equals the number its source prints.

The model checks (tests/thermo/test_pitzer.py, test_neutral.py) compare computed osmotic coefficients with
published tables and reference libraries; at the molalities of culture media a 5 % slip in one Pitzer
parameter moves the osmolality by far less than any published table's resolution, and a mixing parameter or
a Norrish K only shows in mixtures or concentrated solutions. So each number is also compared with its
source, entry by entry, exactly (relative 1e-9: the catalog must hold the printed digits):

- May et al. (2011) binary rows: the copy in tests/data/parameter_sources.yaml (from the shared reference
  data), and, for rows the copy lacks, the pyEQL database the catalog says they were read from;
- Pitzer & Mayorga (1973) NaCl, Harvie, Moller & Weare (1984) Ca-SO4 and mixing terms, Pitzer & Kim (1974)
  nitrate terms, Pitzer & Silvester (1976) and Hershey et al. (1989) phosphate terms: the copy;
- Norrish K of the alditols (Chirife et al., tabulated in PMC2836749 Table 3): the copy.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest
import yaml

REPO = Path(__file__).resolve().parents[2]
SOURCES = yaml.safe_load((REPO / "tests" / "data" / "parameter_sources.yaml").read_text(encoding="utf-8"))
PITZER = yaml.safe_load((REPO / "catalog" / "pitzer.yaml").read_text(encoding="utf-8"))
NEUTRAL = yaml.safe_load((REPO / "catalog" / "neutral.yaml").read_text(encoding="utf-8"))

_ION = re.compile(r"^(?P<core>[A-Za-z0-9()]+)\[(?P<n>\d*)(?P<sign>[+-])\]$")


def _ion(name: str) -> tuple[str, int]:
    m = _ION.match(name)
    z = int(m.group("n") or 1)
    return m.group("core"), z if m.group("sign") == "+" else -z


def _salt(cation: str, anion: str) -> str:
    """'NH4[+]', 'SO4[2-]' -> '(NH4)2SO4' (the salt's formula as the sources name it)."""
    (c, zc), (a, za) = _ion(cation), _ion(anion)
    g = math.gcd(zc, -za)
    nu_c, nu_a = -za // g, zc // g

    def part(core: str, n: int) -> str:
        if n == 1:
            return core
        poly = len(re.findall(r"[A-Z]", core)) > 1 or any(ch.isdigit() for ch in core)
        return f"({core}){n}" if poly else f"{core}{n}"

    return part(c, nu_c) + part(a, nu_a)


def _key(ions) -> frozenset:
    return frozenset(_ion(i)[0] if "[" in i else i for i in ions)


def _atoms(formula: str) -> frozenset:
    """Element counts of one formula unit: '(NH4)2SO4' and 'H8N2O4S' give the same set."""
    counts: dict[str, int] = {}

    def add(text: str, times: int) -> None:
        while text:
            m = re.match(r"\(([^()]*)\)(\d*)", text)
            if m:
                add(m.group(1), times * int(m.group(2) or 1))
            else:
                m = re.match(r"([A-Z][a-z]?)(\d*)", text)
                counts[m.group(1)] = counts.get(m.group(1), 0) + times * int(m.group(2) or 1)
            text = text[m.end():]

    add(formula, 1)
    return frozenset(counts.items())


def _same(a: float, b: float) -> bool:
    return math.isclose(float(a), float(b), rel_tol=1e-9, abs_tol=1e-12)


@pytest.fixture(scope="module")
def pyeql_rows() -> dict[frozenset, dict[str, float]]:
    """May et al. (2011) rows of the pyEQL database (the transcription the catalog names), by composition."""
    import importlib.util

    spec = importlib.util.find_spec("pyEQL")  # a required reference library (tests/conftest.py)
    db = json.loads((Path(spec.origin).parent / "database" / "pyeql_db.json").read_text(encoding="utf-8"))
    out = {}
    for entry in db:
        par = (entry.get("model_parameters") or {}).get("activity_pitzer")
        if not par or not entry["formula"].endswith("(aq)") or "Beta0" not in par:
            continue
        vals = {k: float(par[k]["value"].split()[0]) for k in ("Beta0", "Beta1", "Beta2", "Cphi", "Max_C")
                if (par.get(k) or {}).get("value")}
        out[_atoms(entry["formula"][:-4])] = vals
    return out


def _binary_rows(source: str) -> list:
    return [pytest.param(r, id=_salt(r["cation"], r["anion"])) for r in PITZER["binary"] if r["source"] == source]


@pytest.mark.parametrize("row", _binary_rows("may2011"))
def test_may2011_rows_as_published(row, pyeql_rows):
    salt = _salt(row["cation"], row["anion"])
    copy = SOURCES["may2011"].get(salt)
    if copy is not None:
        ref = {"beta0": copy["beta0"], "beta1": copy["beta1"], "beta2": copy["beta2"], "cphi": copy["cphi"],
               "max_m": copy["max_m"]}
    else:
        lib = pyeql_rows[_atoms(salt)]
        ref = {"beta0": lib["Beta0"], "beta1": lib["Beta1"], "beta2": lib["Beta2"], "cphi": lib["Cphi"],
               "max_m": lib["Max_C"]}
    for key, value in ref.items():
        if value is not None:
            assert _same(row[key], value), (salt, key, row[key], value)


def test_the_copy_and_the_library_agree(pyeql_rows):
    """The shared data's copy of May et al. (2011) and the pyEQL database are the same numbers (so either is a
    faithful oracle)."""
    seen = 0
    for salt, copy in SOURCES["may2011"].items():
        lib = pyeql_rows.get(_atoms(salt))
        if lib is None:
            continue
        seen += 1
        for ours, theirs in (("beta0", "Beta0"), ("beta1", "Beta1"), ("cphi", "Cphi")):
            assert _same(copy[ours], lib[theirs]), (salt, ours)
    assert seen >= 15


def test_pm73_and_hmw84_binary_rows_as_published():
    rows = {(r["cation"], r["anion"]): r for r in PITZER["binary"]}
    nacl = rows[("Na[+]", "Cl[-]")]
    assert nacl["source"] == "pm73"
    for key in ("beta0", "beta1", "cphi"):
        assert _same(nacl[key], SOURCES["pm73"]["NaCl"][key]), key
    caso4 = rows[("Ca[2+]", "SO4[2-]")]
    assert caso4["source"] == "hmw84"
    for key, col in (("beta0", "B0"), ("beta1", "B1"), ("beta2", "B2")):
        assert _same(caso4[key], SOURCES["hmw84_binary"][f"{col} Ca-SO4"]), key


def _mixing_copy(kind: str, source: str) -> dict[frozenset, float]:
    if source in ("hmw84", "pk74"):
        return {frozenset(k.split("-")): v for k, v in SOURCES[f"{source}_{kind}"].items()}
    out = {}
    for k, v in SOURCES["phosphate"].items():
        prefix, ions = k.split("_", 1)
        if prefix == kind:
            out[frozenset(ions.split("-"))] = v
    return out


def _mixing_rows():
    return [pytest.param(kind, r, id=f"{kind}-{'-'.join(r['ions'])}") for kind in ("theta", "psi") for r in PITZER[kind]]


@pytest.mark.parametrize("kind, row", _mixing_rows())
def test_mixing_terms_as_published(kind, row):
    copy = _mixing_copy(kind, "hmw84" if row["source"] == "hmw84" else "pk74" if row["source"] == "pk74"
                        else "phosphate")
    key = _key(row["ions"])
    assert key in copy, (row, "not in the source's table")
    assert _same(row["value"], copy[key]), (row, copy[key])


NORRISH_NAMES = {"glycerol": "glycerol", "erythritol": "erythritol", "xylitol": "xylitol",
                 "sorbitol": "D-glucitol (sorbitol)", "mannitol": "D-mannitol"}
#: K values the catalog holds from memory (its source says so): no table to compare with; test_neutral.py
#: pins them and the CRC freezing points bound them (see there)
RECALLED_K = {"sucrose", "glucose", "fructose", "maltose"}


@pytest.mark.parametrize("sid", sorted(NORRISH_NAMES))
def test_norrish_k_of_the_alditols_as_published(sid):
    entry = NEUTRAL["solutes"][sid]
    assert "chirife_alditols" in entry["source"]
    assert _same(entry["K"], SOURCES["norrish_k"][NORRISH_NAMES[sid]])


def test_every_norrish_k_is_sourced_or_declared_recalled():
    norrish = {sid for sid, e in NEUTRAL["solutes"].items() if e["model"] == "norrish"}
    assert norrish == set(NORRISH_NAMES) | RECALLED_K
    for sid in RECALLED_K:
        assert "memory" in NEUTRAL["solutes"][sid]["source"] or "K_borrowed_from" in NEUTRAL["solutes"][sid], sid
