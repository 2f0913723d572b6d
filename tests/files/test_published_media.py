"""The bundled media against an independent transcription of the published tables.

tests/data/published_media.yaml was transcribed line by line from the project's shared reference data
(media_compositions.yaml: each medium's citation, the sources read and a confidence A/B/C per line) without
reading catalog/media/. Here every line of it must be in the catalog's medium with the same amount (mg/L
after conversion; a different hydrate of the same substance counts when it holds the same moles) and the
same confidence, and the catalog may hold no line the transcription lacks. Formulas are compared by their
atoms (periodictable parses them), never by their spelling; molar masses for the hydrate comparison come
from periodictable too (IUPAC standard atomic weights), not from the catalog.
"""

from __future__ import annotations

import re
from collections import Counter
from functools import cache
from pathlib import Path

import periodictable  # a test extra: a missing one fails here, never skips
import pytest
import yaml

TRANSCRIPTION = Path(__file__).parent.parent / "data" / "published_media.yaml"

#: A line the catalog deliberately writes in other chemical forms, each named in the catalog line's note.
#: (medium, formula in the transcription) -> (catalog components that stand for it, word the note must hold)
SUBSTITUTIONS = {
    # Gamborg et al. 1968: the original iron was a commercial Fe-DTPA chelate at 28 mg/L (shared data, C);
    # the catalog enters FeSO4·7H2O 27.8 + Na2EDTA·2H2O 37.3 mg/L as current B5 powders do, and says so.
    ("b5_1968", "Fe-DTPA"): (("iron_ii_sulfate_heptahydrate", "disodium_edta_dihydrate"), "DTPA"),
}

#: Optional lines of the transcription that the catalog leaves out, with the reason.
OPTIONAL_LEFT_OUT = {
    ("ms1962", "enzymatic lactalbumin hydrolysate"): "no defined formula, nothing to compute with",
}


@cache
def _atoms(formula: str) -> Counter:
    """Atoms of one formula unit: 'CaCl2·2H2O' -> Ca 1, Cl 2, H 4, O 2. 'Na2EDTA' is disodium dihydrogen
    ethylenediaminetetraacetate, Na2H2(C10H12N2O8) (common practice); a name in brackets is dropped."""
    text = re.sub(r"\s*\(([a-z][a-z -]*)\)\s*$", "", formula.strip())
    text = text.replace("Na2EDTA", "Na2H2C10H12N2O8").replace("·", "+")
    return Counter({str(el): n for el, n in periodictable.formula(text).atoms.items()})


def _molar_mass(formula: str) -> float:
    """[g/mol] from IUPAC standard atomic weights (periodictable)."""
    return sum(periodictable.elements.symbol(el).mass * n for el, n in _atoms(formula).items())


def _anhydrous(formula: str) -> Counter:
    """Atoms without hydrate water ('MnSO4·4H2O' -> MnSO4); '·HCl' and the like stay."""
    parts = [p for p in formula.split("·") if not re.fullmatch(r"\d*H2O", p.strip())]
    return _atoms("·".join(parts))


def _words(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", " ", text.lower()).strip()


def _transcription() -> dict[str, dict]:
    raw = yaml.safe_load(TRANSCRIPTION.read_text(encoding="utf-8"))
    media = {m["id"]: m for m in raw["media"]}
    by_shared = {m["shared_id"]: m for m in raw["media"]}
    for m in media.values():  # "see MS": that medium's salt lines at this line's confidence
        lines = []
        for ln in m["lines"]:
            if ln["formula"].startswith("see "):
                other = by_shared[ln["formula"][4:]]
                lines += [{**s, "confidence": ln["confidence"]} for s in other["lines"]
                          if s["group"] in ("macro", "micro", "iron")]
            else:
                lines.append(ln)
        m["lines"] = lines
    return media


PUBLISHED = _transcription()


@pytest.fixture(scope="module")
def bundled():
    from mediaplan.files.catalog import bundled_folder, load_catalog

    return load_catalog([bundled_folder()])


def _candidates(catalog, lines, expected: dict):
    """Catalog lines holding the substance of ``expected``: (line, same formula?)."""
    atoms = _atoms(expected["formula"])
    same = [ln for ln in lines if catalog.components[ln.component].formula
            and _atoms(catalog.components[ln.component].formula) == atoms]
    if len(same) > 1:  # C6H12O6 is myo-inositol and glucose: the name settles it
        name = _words(expected["name"])
        same = [ln for ln in same if name in {_words(catalog.components[ln.component].name),
                                              *map(_words, catalog.components[ln.component].aliases)}]
    if same:
        return [(ln, True) for ln in same]
    anhydrous = _anhydrous(expected["formula"])
    return [(ln, False) for ln in lines if catalog.components[ln.component].formula
            and _anhydrous(catalog.components[ln.component].formula) == anhydrous]


def _published_lines():
    for mid, m in sorted(PUBLISHED.items()):
        for ln in m["lines"]:
            yield pytest.param(mid, ln, id=f"{mid}-{ln['formula']}")


def test_the_transcription_covers_every_bundled_medium(bundled):
    assert sorted(PUBLISHED) == sorted(bundled.media)
    for mid, m in PUBLISHED.items():
        assert m["citation"] and m["sources_read"] and m["overall_confidence"], mid
        # the overall confidence leads with its letter ("B for salts ...; A for sucrose 3 %")
        assert bundled.medium(mid).confidence == m["overall_confidence"][0], mid
        for ln in m["lines"] + m.get("optional", []):
            assert ln["confidence"] in ("A", "B", "C"), (mid, ln)


@pytest.mark.parametrize("mid, expected", _published_lines())
def test_every_published_line_is_in_the_catalog(bundled, mid, expected):
    medium = bundled.medium(mid)
    key = (mid, expected["formula"])
    if key in SUBSTITUTIONS:
        ids, word = SUBSTITUTIONS[key]
        found = {ln.component: ln for ln in medium.lines}
        for cid in ids:
            assert cid in found, (mid, cid)
            assert word in (found[cid].note or ""), f"{mid}: the note of {cid} must say it stands for {key[1]}"
            assert found[cid].confidence == expected["confidence"]
        return
    hits = _candidates(bundled, medium.lines, expected)
    assert len(hits) == 1, f"{mid}: {expected['formula']} {expected['mg_per_L']} mg/L is {len(hits)} catalog lines"
    line, same_form = hits[0]
    assert line.amount.kind == "mass_conc", (mid, line.component, line.amount.text)
    g_per_l = line.amount.value  # kg/m^3 is numerically g/L
    if same_form:
        # the same number as printed: both sides hold the printed digits, so to float precision
        assert g_per_l * 1000.0 == pytest.approx(expected["mg_per_L"], rel=1e-12), (mid, line.component)
    else:
        # another hydrate: the same moles; the printed mg have 2-4 significant figures, so half a unit
        # of the last printed digit of 2 figures (2.5 %) bounds the rounding (common practice)
        comp = bundled.components[line.component]
        mmol_catalog = g_per_l * 1000.0 / _molar_mass(comp.formula)
        mmol_published = expected["mg_per_L"] / _molar_mass(expected["formula"])
        assert mmol_catalog == pytest.approx(mmol_published, rel=0.025), (mid, line.component)
    assert line.confidence == expected["confidence"], (mid, line.component)


@pytest.mark.parametrize("mid", sorted(PUBLISHED))
def test_the_catalog_holds_no_line_the_tables_lack(bundled, mid):
    medium = bundled.medium(mid)
    claimed: list[str] = []
    for expected in PUBLISHED[mid]["lines"]:
        key = (mid, expected["formula"])
        if key in SUBSTITUTIONS:
            claimed += SUBSTITUTIONS[key][0]
        else:
            claimed += [ln.component for ln, _ in _candidates(bundled, medium.lines, expected)]
    assert sorted(claimed) == sorted(ln.component for ln in medium.lines)


@pytest.mark.parametrize("mid", sorted(PUBLISHED))
def test_optional_lines_agree(bundled, mid):
    """An optional line of the catalog is an optional line of the tables, its amount inside the printed
    range (a catalog holds one amount where a table prints '1-30'), with the same confidence."""
    medium = bundled.medium(mid)
    optional = PUBLISHED[mid].get("optional", [])
    seen = set()
    for line in medium.optional:
        comp = bundled.components[line.component]
        match = [o for o in optional if o["formula"] != "undefined" and comp.formula
                 and _atoms(o["formula"]) == _atoms(comp.formula)]
        match = match or [o for o in optional if _words(o["name"]) == _words(comp.name)]
        assert len(match) == 1, (mid, line.component)
        o = match[0]
        seen.add(o["name"])
        low, _, high = str(o["mg_per_L"]).partition("-")
        mg = line.amount.value * 1000.0
        assert float(low) * (1 - 1e-12) <= mg <= float(high or low) * (1 + 1e-12), (mid, line.component, mg)
        assert line.confidence == o["confidence"], (mid, line.component)
    left = {o["name"] for o in optional} - seen
    assert left == {name for m, name in OPTIONAL_LEFT_OUT if m == mid}


def test_atoms_and_molar_masses_of_the_comparison():
    """The helpers themselves: CaCl2·2H2O 147.01 g/mol and MgSO4·7H2O 246.47 g/mol (shared
    media_compositions.yaml, molar_masses_g_per_mol); Na2EDTA·2H2O 372.24 (same table)."""
    assert _molar_mass("CaCl2·2H2O") == pytest.approx(147.01, abs=0.01)
    assert _molar_mass("MgSO4·7H2O") == pytest.approx(246.47, abs=0.01)
    assert _molar_mass("Na2EDTA·2H2O") == pytest.approx(372.24, abs=0.01)
    assert _anhydrous("MnSO4·4H2O") == _anhydrous("MnSO4·H2O") == _atoms("MnSO4")
    assert _anhydrous("C8H11NO3·HCl") == _atoms("C8H12ClNO3")
    assert _atoms("C12H22O11 (sucrose)") == _atoms("C12H22O11")


def test_a_hydrate_other_than_the_catalogs_is_matched_by_moles(bundled):
    """The shared data's MS note: 22.3 mg/L MnSO4·4H2O '= 16.9 mg/L MnSO4·H2O (vendor formulas use the
    monohydrate)'. A transcription in the monohydrate finds the catalog's tetrahydrate line, same moles."""
    monohydrate = {"name": "manganese sulfate monohydrate", "formula": "MnSO4·H2O", "mg_per_L": 16.9}
    ((line, same_form),) = _candidates(bundled, bundled.medium("ms1962").lines, monohydrate)
    assert (line.component, same_form) == ("manganese_sulfate_tetrahydrate", False)
    mmol = line.amount.value * 1000.0 / _molar_mass(bundled.components[line.component].formula)
    assert mmol == pytest.approx(16.9 / _molar_mass("MnSO4·H2O"), rel=0.025)  # rounding of 16.9 and 22.3
