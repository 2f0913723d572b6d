"""Integrity of the bundled catalog data (catalog/components/*.yaml, catalog/media/*.yaml).

Reads the YAML files directly (yaml.safe_load); does not import the catalog loader.
"""

from __future__ import annotations

import re
from collections import defaultdict
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parents[2] / "catalog"
COMPONENT_FILES = sorted((ROOT / "components").glob("*.yaml"))
MEDIA_FILES = sorted((ROOT / "media").glob("*.yaml"))

NUMBER_FIELDS = ("molar_mass", "solubility", "apparent_molar_volume", "density", "reflection_coefficient")
GROUPS = {
    "macro", "micro", "iron", "carbon", "osmoticum", "organic", "vitamin", "amino_acid",
    "growth_regulator", "buffer", "ph", "gelling", "cryoprotectant", "salt",
}
ION_RE = re.compile(r"^[A-Za-z0-9()_]+\[(\d*)([+-])\]$")
NEUTRAL_RE = re.compile(r"^[a-z][a-z0-9_]*$")
ID_RE = re.compile(r"^[a-z][a-z0-9_]*$")
AMOUNT_RE = re.compile(r"^(\d+(?:\.\d+)?) (mg/L|g/L|mL/L)$")
H2O = 18.015  # g/mol, 2 x 1.008 + 15.999 (IUPAC abridged standard atomic weights)


def _load(path: Path):
    with open(path, encoding="utf-8") as fh:
        return yaml.safe_load(fh)


def _component_files():
    return {p.name: _load(p) for p in COMPONENT_FILES}


COMP_DATA = _component_files()
ALL = [(name, c) for name, data in COMP_DATA.items() for c in data["components"]]
BY_ID = {c["id"]: c for _, c in ALL}
MEDIA = {p.name: _load(p) for p in MEDIA_FILES}


def normalise(text: str) -> str:
    """Alias key: case, spaces, dashes, underscores, commas and hydrate dots (·, ., *) do not matter."""
    t = text.strip().lower().replace("·", ".").replace("*", ".").replace("•", ".")
    return re.sub(r"[\s\-_,]+", "", t)


def charge(species: str) -> int:
    m = ION_RE.match(species)
    if not m:
        return 0
    n = int(m.group(1) or 1)
    return n if m.group(2) == "+" else -n


def formula_mass(formula: str) -> float:
    """Formula mass from periodictable standard atomic weights; '·' parts with a leading count (·7H2O, ·HCl)."""
    import periodictable  # a required reference library (tests/conftest.py)
    total = 0.0
    for part in formula.split("·"):
        m = re.match(r"^(\d*)(.+)$", part)
        count = int(m.group(1)) if m.group(1) else 1
        total += count * periodictable.formula(m.group(2)).mass
    return total


# ----------------------------------------------------------------------------- files and ids
def test_files_present():
    assert len(COMPONENT_FILES) >= 6
    assert {p.stem for p in MEDIA_FILES} >= {
        "ms1962", "b5_1968", "wpm1980", "n6_1975", "sh1972", "ls1965", "dkw1984", "nn1969"}
    assert len(ALL) >= 100


@pytest.mark.parametrize("name", sorted(COMP_DATA))
def test_component_file_shape(name):
    data = COMP_DATA[name]
    assert isinstance(data.get("description"), str) and data["description"].strip()
    assert isinstance(data.get("sources"), dict)
    assert all(isinstance(v, str) and v.strip() for v in data["sources"].values())
    assert isinstance(data.get("components"), list) and data["components"]


def test_component_ids_unique_across_files():
    seen: dict[str, str] = {}
    for fname, c in ALL:
        assert ID_RE.match(c["id"]), c["id"]
        assert c["id"] not in seen, f"{c['id']} in {fname} and {seen.get(c['id'])}"
        seen[c["id"]] = fname


def test_media_ids_unique_and_match_file_names():
    ids = [m["id"] for m in MEDIA.values()]
    assert len(ids) == len(set(ids))
    for fname, m in MEDIA.items():
        assert m["id"] == Path(fname).stem


@pytest.mark.parametrize("fname,comp", ALL, ids=[c["id"] for _, c in ALL])
def test_component_fields(fname, comp):
    for key in ("id", "name", "formula", "aliases", "cas", "group", "molar_mass", "hydrate_water", "substance",
                "default_form", "species", "solubility", "apparent_molar_volume", "density",
                "reflection_coefficient", "hazard", "source"):
        assert key in comp, f"{comp['id']}: missing {key}"
    assert comp["group"] in GROUPS
    assert isinstance(comp["aliases"], list)
    assert isinstance(comp["default_form"], bool)
    assert comp["hydrate_water"] >= 0
    if comp["formula"] is not None and "·" in comp["formula"]:
        assert "." not in comp["formula"] and "*" not in comp["formula"]
    if comp["reflection_coefficient"] is not None:
        assert 0 <= comp["reflection_coefficient"] <= 1
    if comp["species"]:
        assert comp["molar_mass"], f"{comp['id']}: a dissolving component needs a molar mass"
    if comp["hazard"] is not None:
        assert comp["hazard"].endswith(
            "Follow your institution's safety rules and the supplier's safety data sheet.")


# ----------------------------------------------------------------------------- aliases and forms
def _formula_owners():
    owners = defaultdict(set)
    for _, c in ALL:
        if c["formula"]:
            owners[normalise(c["formula"])].add(c["id"])
    return owners


def test_aliases_point_at_one_component():
    """ids, names and aliases are unique keys; a formula is one too unless isomers share it."""
    owner: dict[str, str] = {}
    for _, c in ALL:
        keys = {normalise(c["id"]), normalise(c["name"]), *(normalise(a) for a in c["aliases"])}
        for k in keys:
            assert k, f"{c['id']}: empty alias"
            assert owner.get(k, c["id"]) == c["id"], f"alias {k!r} names {owner[k]} and {c['id']}"
            owner[k] = c["id"]
    formula_owners = _formula_owners()
    for key, ids in formula_owners.items():
        if len(ids) == 1:
            (cid,) = ids
            assert owner.get(key, cid) == cid, f"formula {key!r} of {cid} is an alias of {owner[key]}"
        else:
            # isomers (e.g. glucose, fructose, myo-inositol): the shared formula must stay ambiguous,
            # so none of them may list it as an explicit alias and no other component may claim it
            assert key not in owner, f"shared formula {key!r} is claimed by {owner.get(key)}"
            subs = {BY_ID[i]["substance"] for i in ids}
            assert len(subs) == len(ids), f"isomers {sorted(ids)} must have distinct substance labels"


def test_one_default_form_per_substance():
    forms = defaultdict(list)
    for _, c in ALL:
        forms[c["substance"] or c["id"]].append(c)
    for substance, cs in forms.items():
        defaults = [c["id"] for c in cs if c["default_form"]]
        assert len(defaults) == 1, f"{substance}: default forms {defaults} among {[c['id'] for c in cs]}"
        hydrates = [c["hydrate_water"] for c in cs]
        assert len(hydrates) == len(set(hydrates)), f"{substance}: two forms with the same hydrate water"


def test_common_names_name_the_default_form():
    for name, expected in [
        ("calcium chloride", "calcium_chloride_dihydrate"),
        ("magnesium sulfate", "magnesium_sulfate_heptahydrate"),
        ("ferrous sulfate", "iron_ii_sulfate_heptahydrate"),
        ("MgSO4", "magnesium_sulfate_anhydrous"),
        ("MgSO4.7H2O", "magnesium_sulfate_heptahydrate"),
        ("MgSO4*7H2O", "magnesium_sulfate_heptahydrate"),
        ("CaCl2", "calcium_chloride_anhydrous"),
        ("CaCl2 · 2H2O", "calcium_chloride_dihydrate"),
        ("Na2EDTA·2H2O", "disodium_edta_dihydrate"),
        ("2,4-D", "dichlorophenoxyacetic_acid"),
    ]:
        key = normalise(name)
        hits = [c["id"] for _, c in ALL
                if key in {normalise(c["id"]), normalise(c["name"]), normalise(c["formula"] or ""),
                           *(normalise(a) for a in c["aliases"])}]
        assert hits == [expected], f"{name!r} -> {hits}"


# ----------------------------------------------------------------------------- species
@pytest.mark.parametrize("fname,comp", ALL, ids=[c["id"] for _, c in ALL])
def test_species_names_and_charge_balance(fname, comp):
    species = comp["species"]
    assert isinstance(species, dict)
    for name, count in species.items():
        assert ION_RE.match(name) or NEUTRAL_RE.match(name), f"{comp['id']}: bad species name {name!r}"
        assert isinstance(count, (int, float)) and count > 0
    assert sum(charge(s) * n for s, n in species.items()) == 0, f"{comp['id']}: charges do not balance"


def test_neutral_species_of_the_common_solutes():
    expect = {"sucrose": "sucrose", "glucose": "glucose", "glucose_monohydrate": "glucose",
              "fructose": "fructose", "maltose_monohydrate": "maltose", "mannitol": "mannitol",
              "sorbitol": "sorbitol", "glycerol": "glycerol", "myo_inositol": "myo_inositol",
              "ethylene_glycol": "ethylene_glycol", "dmso": "dmso", "peg6000": "peg6000", "peg8000": "peg8000",
              "glycine": "glycine", "boric_acid": "boric_acid", "mes": "mes", "mes_monohydrate": "mes"}
    for cid, sp in expect.items():
        assert BY_ID[cid]["species"] == {sp: 1}, cid
    assert BY_ID["disodium_edta_dihydrate"]["species"] == {"Na[+]": 2, "H2EDTA[2-]": 1}
    assert BY_ID["calcium_pantothenate"]["species"] == {"Ca[2+]": 1, "Pantothenate[-]": 2}
    for gel in ("agar", "gellan_gum", "activated_charcoal"):
        assert BY_ID[gel]["species"] == {} and BY_ID[gel]["formula"] is None


# ----------------------------------------------------------------------------- sources
@pytest.mark.parametrize("fname,comp", ALL, ids=[c["id"] for _, c in ALL])
def test_every_number_has_a_source(fname, comp):
    sources = COMP_DATA[fname]["sources"]
    src = comp["source"] or {}
    for field in NUMBER_FIELDS:
        if comp[field] is None:
            continue
        ref = src.get(field)
        assert isinstance(ref, str) and ref.strip(), f"{comp['id']}.{field}: no source"
        # a key of the file's `sources`, or a free text (which then has a space in it)
        assert ref in sources or " " in ref, f"{comp['id']}.{field}: unknown source key {ref!r}"


# ----------------------------------------------------------------------------- molar masses
FORMULA_COMPS = [(f, c) for f, c in ALL if c["formula"]]


@pytest.mark.parametrize("fname,comp", FORMULA_COMPS, ids=[c["id"] for _, c in FORMULA_COMPS])
def test_molar_mass_matches_formula(fname, comp):
    # reference: periodictable standard atomic weights (IUPAC abridged values)
    expected = formula_mass(comp["formula"])
    assert comp["molar_mass"] == pytest.approx(expected, abs=0.01), comp["id"]
    m = re.search(r"·(\d*)H2O$", comp["formula"])
    n = (int(m.group(1)) if m.group(1) else 1) if m else 0
    assert comp["hydrate_water"] == n, f"{comp['id']}: hydrate_water vs formula"


def test_hydrate_consistency():
    by_substance = defaultdict(list)
    for _, c in ALL:
        if c["formula"] and c["substance"]:
            by_substance[c["substance"]].append(c)
    pairs = 0
    for cs in by_substance.values():
        for a in cs:
            for b in cs:
                if a["hydrate_water"] > b["hydrate_water"]:
                    dn = a["hydrate_water"] - b["hydrate_water"]
                    assert a["molar_mass"] - b["molar_mass"] == pytest.approx(dn * H2O, abs=0.01), (a["id"], b["id"])
                    pairs += 1
    assert pairs >= 15


# ----------------------------------------------------------------------------- media
MEDIA_LINES = [(fname, key, line) for fname, m in MEDIA.items() for key in ("components", "optional")
               for line in (m.get(key) or [])]


@pytest.mark.parametrize("fname", sorted(MEDIA))
def test_medium_header(fname):
    m = MEDIA[fname]
    for key in ("id", "name", "citation", "confidence", "sources_read", "components"):
        assert m.get(key), f"{fname}: missing {key}"
    assert m["confidence"] in {"A", "B", "C"}
    assert "notes" in m and "discrepancies" in m


@pytest.mark.parametrize("fname,key,line", MEDIA_LINES,
                         ids=[f"{f}:{ln['component']}" for f, _, ln in MEDIA_LINES])
def test_media_lines(fname, key, line):
    assert line["component"] in BY_ID, f"{fname}: unknown component {line['component']}"
    assert AMOUNT_RE.match(line["amount"]), f"{fname}: amount {line['amount']!r}"
    assert line["confidence"] in {"A", "B", "C"}


def test_no_component_twice_in_a_medium():
    for fname, m in MEDIA.items():
        ids = [ln["component"] for ln in m["components"]]
        assert len(ids) == len(set(ids)), fname


def _mM(medium: str, cid: str) -> float:
    line = next(ln for ln in MEDIA[medium + ".yaml"]["components"] if ln["component"] == cid)
    value, unit = AMOUNT_RE.match(line["amount"]).groups()
    mg = float(value) * (1000 if unit == "g/L" else 1)
    return mg / BY_ID[cid]["molar_mass"]


# Murashige & Skoog 1962 Table 6 via secondary copies (shared media_compositions.yaml, confidence B):
# mg/L as published, mM as stated in those copies' notes.
MS_MM = [
    ("ammonium_nitrate", 20.61, 0.01),            # 1650 mg/L NH4NO3
    ("potassium_nitrate", 18.79, 0.01),           # 1900 mg/L KNO3
    ("calcium_chloride_dihydrate", 2.99, 0.005),  # 440 mg/L CaCl2·2H2O
    ("magnesium_sulfate_heptahydrate", 1.50, 0.005),  # 370 mg/L MgSO4·7H2O
    ("potassium_dihydrogen_phosphate", 1.25, 0.005),  # 170 mg/L KH2PO4
    ("iron_ii_sulfate_heptahydrate", 0.100, 0.0005),  # 27.8 mg/L FeSO4·7H2O
]


@pytest.mark.parametrize("cid,mm,tol", MS_MM)
def test_ms_published_molar_concentrations(cid, mm, tol):
    assert _mM("ms1962", cid) == pytest.approx(mm, abs=tol)


def test_ms_edta_equimolar_with_iron():
    assert _mM("ms1962", "disodium_edta_dihydrate") == pytest.approx(_mM("ms1962", "iron_ii_sulfate_heptahydrate"),
                                                                     rel=0.01)


# MS hydrate equivalents, vendor statement in the shared media_compositions.yaml
# (MS notes: "= 332.2 mg/L anhydrous CaCl2", "= 180.7 mg/L anhydrous MgSO4 (vendor page lists 180.690)").
@pytest.mark.parametrize("hydrate,anhydrous,mg,expected", [
    ("calcium_chloride_dihydrate", "calcium_chloride_anhydrous", 440, 332.2),
    ("magnesium_sulfate_heptahydrate", "magnesium_sulfate_anhydrous", 370, 180.7),
])
def test_ms_hydrate_equivalents(hydrate, anhydrous, mg, expected):
    assert mg / BY_ID[hydrate]["molar_mass"] * BY_ID[anhydrous]["molar_mass"] == pytest.approx(expected, abs=0.1)


def test_confidence_c_is_never_stated_as_certain():
    """Media of overall confidence C have no line above C except lines the shared data marks otherwise."""
    allowed_b = {("b5_1968.yaml", "thiamine_hydrochloride")}
    for fname, m in MEDIA.items():
        if m["confidence"] != "C":
            continue
        for ln in m["components"] + (m.get("optional") or []):
            if ln["confidence"] != "C":
                assert (fname, ln["component"]) in allowed_b, (fname, ln["component"], ln["confidence"])


# ----------------------------------------------------------------------------- solubility vs neutral.yaml
NEUTRAL = _load(ROOT / "neutral.yaml")["solutes"]


def test_neutral_range_stays_below_saturation():
    """m_max of a neutral-solute model [mol/kg] never exceeds the catalog solubility of that solute."""
    checked = 0
    for _, c in ALL:
        sp = list(c["species"])
        if not (c["default_form"] and c["solubility"] and len(sp) == 1 and sp[0] in NEUTRAL):
            continue
        anhydrous_mass = c["molar_mass"] - c["hydrate_water"] * H2O
        m_sat = c["solubility"] * 10.0 / anhydrous_mass  # g / 100 g water -> mol / kg water
        assert NEUTRAL[sp[0]]["m_max"] <= m_sat * 1.001, (c["id"], NEUTRAL[sp[0]]["m_max"], m_sat)
        checked += 1
    assert checked >= 5


def test_sucrose_solubility_against_a_second_table():
    # Mohos 2010, Appendix 2, Table A2.3 (after Sokolovsky 1958): 203.859 g/100 g water at 20 degC and
    # 219.4888 at 30 degC; linear interpolation gives 211.67 at 25 degC. The catalog value comes from
    # Table A2.2 of the same appendix (Antokolskaya et al. 1964), a different data set.
    interpolated = (203.859 + 219.4888) / 2
    assert BY_ID["sucrose"]["solubility"] == pytest.approx(interpolated, rel=0.005)


def test_glucose_solubility_matches_the_neutral_range_basis():
    # Gladden & Dole 1953 (abstract): saturated glucose at 25 degC is 50 mass % -> 100 g / 100 g water,
    # 5.55 mol/kg, the basis of glucose m_max in neutral.yaml
    assert BY_ID["glucose"]["solubility"] == pytest.approx(100.0, rel=1e-9)
    assert BY_ID["glucose"]["solubility"] * 10 / BY_ID["glucose"]["molar_mass"] == pytest.approx(5.55, abs=0.01)
