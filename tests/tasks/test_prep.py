"""Preparation sheets: masses per batch, hydrate forms, stock schemes, rounding, bad input."""

from __future__ import annotations

import functools
import math
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from mediaplan.cli.main import main
from mediaplan.medium.errors import AmountError
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.prep import (
    PGR_STOCK_MAX_G_PER_L,
    SOLUBILITY_MARGIN,
    build_sheet,
    format_mass,
    round_mass,
    substock_for,
)


def _media_lines():
    from mediaplan.files.catalog import bundled_folder, load_catalog

    out = []
    for med in sorted(load_catalog([bundled_folder()]).media.values(), key=lambda m: m.id):
        for ln in med.lines:
            if ln.amount.kind == "mass_conc":
                out.append(pytest.param((med.id, ln.component, ln.amount.value), id=f"{med.id}-{ln.component}"))
    return out


@pytest.mark.parametrize("published_line", _media_lines())
def test_published_media_at_one_litre_weigh_their_published_mg(catalog, published_line):
    """Each bundled medium at 1 L: the sheet's mass equals the catalog line's mg/L and prints it to 4 figures.
    This checks the sheet against the catalog it is computed from; the published tables themselves are the
    oracle of test_sheet_at_one_litre_weighs_the_published_mg below."""
    mid, cid, g_per_l = published_line
    sheet = build_sheet(Recipe(base=mid), catalog, volume="1 L")
    row = next(r for r in sheet.rows if r.id == cid)
    assert row.grams == pytest.approx(g_per_l, rel=1e-12)
    if row.grams >= 0.010:  # shown to 4 significant figures
        text = format_mass(row.grams)
        value = float(text.split()[0]) * (1e-3 if text.endswith(" mg") else 1.0)
        assert value == pytest.approx(float(f"{g_per_l:.4g}"), rel=1e-9), text
    else:
        assert row.small


# ---- the sheet against the published tables, not against the catalog it is computed from ------------------
# tests/data/published_media.yaml: an independent transcription of the published media (sources and confidence
# per line; written without reading catalog/media/). Formulas compared by their atoms (periodictable).
PUBLISHED = Path(__file__).resolve().parents[1] / "data" / "published_media.yaml"


@functools.cache
def _atoms(formula: str) -> frozenset:
    import periodictable  # a required reference library (tests/conftest.py)

    text = formula.strip().replace("Na2EDTA", "Na2H2C10H12N2O8").replace("·", "+")
    return frozenset((str(el), n) for el, n in periodictable.formula(text).atoms.items())


def _published_lines():
    import yaml

    out = []
    for med in yaml.safe_load(PUBLISHED.read_text(encoding="utf-8"))["media"]:
        for ln in med["lines"]:
            if isinstance(ln["mg_per_L"], (int, float)) and not str(ln["formula"]).startswith("see"):
                out.append(pytest.param(med["id"], ln["formula"], float(ln["mg_per_L"]),
                                        id=f"{med['id']}-{ln['formula']}"))
    return out


@pytest.mark.parametrize("mid, formula, mg_per_l", _published_lines())
def test_sheet_at_one_litre_weighs_the_published_mg(catalog, sheets_at_one_litre, mid, formula, mg_per_l):
    """Each published line at 1 L: the sheet weighs the printed mg/L of that formula (exact: the tables print
    the mg), or, where the catalog chose another hydrate or chelate form of the substance, its moles."""
    sheet = sheets_at_one_litre(mid)
    formulas = {r.id: catalog.components[r.id].formula for r in sheet.rows}
    try:
        want = _atoms(formula)
    except Exception:  # a formula periodictable cannot read (a trade name): the published-media test covers it
        want = None
    same = [r for r in sheet.rows if want is not None and formulas[r.id] and _atoms(formulas[r.id]) == want]
    if same:
        (row,) = same
        assert row.grams * 1000.0 == pytest.approx(mg_per_l, rel=1e-9)
        return
    # another form of the substance (tests/files/test_published_media.py checks the catalog's note says so)
    assert (mid, formula) in OTHER_FORMS, f"{mid}: no sheet row weighs {formula}"


#: published lines the catalog writes in another chemical form (its line notes say which and why)
OTHER_FORMS = {
    # Gamborg et al. 1968 used a commercial Fe-DTPA chelate (28 mg/L); the catalog enters FeSO4·7H2O + Na2EDTA·2H2O
    # as current B5 powders do (its line note), so no row weighs Fe-DTPA
    ("b5_1968", "Fe-DTPA"),
}


@pytest.fixture(scope="module")
def sheets_at_one_litre(catalog):
    cache = {}

    def sheet(mid):
        if mid not in cache:
            cache[mid] = build_sheet(Recipe(base=mid), catalog, volume="1 L")
        return cache[mid]

    return sheet


@pytest.mark.parametrize("src, dst, mg_expected, tol_mg", [
    # MS 1962 at 1 L; anhydrous/other-hydrate equivalents printed by vendor formulas, as quoted in the notes
    # of catalog/media/ms1962.yaml (they round to 0.1 mg or 0.001 mg)
    ("calcium_chloride_dihydrate", "calcium_chloride_anhydrous", 332.2, 0.06),
    ("magnesium_sulfate_heptahydrate", "magnesium_sulfate_anhydrous", 180.69, 0.01),
    ("manganese_sulfate_tetrahydrate", "manganese_sulfate_monohydrate", 16.9, 0.06),
    ("sodium_molybdate_dihydrate", "sodium_molybdate_anhydrous", 0.213, 0.0006),
])
def test_switching_a_hydrate_keeps_the_moles(catalog, src, dst, mg_expected, tol_mg):
    sheet = build_sheet(Recipe(base="ms1962"), catalog, volume="1 L", forms={src: dst})
    row = next(r for r in sheet.rows if r.id == dst)
    assert abs(row.grams * 1000 - mg_expected) <= tol_mg
    assert "same moles" in row.form_note
    assert not any(r.id == src for r in sheet.rows)


def test_switching_to_another_substance_is_refused(catalog):
    with pytest.raises(AmountError, match="not a form of"):
        build_sheet(Recipe(base="ms1962"), catalog, forms={"calcium_chloride_dihydrate": "potassium_nitrate"})


@pytest.mark.parametrize("grams, text", [
    (1.65, "1.650 g"), (30.0, "30.00 g"), (0.44, "440.0 mg"), (0.0062, "6.2 mg"), (0.000025, "< 0.1 mg"),
    (12.3456, "12.35 g"), (0.00026, "0.3 mg"), (1234.5, "1234 g"),  # rounding rules of this module
    (None, "—"), (float("nan"), "—"), (0.0, "0 g"),  # no mass, or none to weigh
])
def test_balance_rounding(grams, text):
    assert format_mass(grams) == text


def test_rounding_never_finer_than_a_tenth_of_a_milligram():
    for g in (0.012345, 0.0019876, 0.00054321):
        r = round_mass(g)
        assert abs(r / 1e-4 - round(r / 1e-4)) < 1e-6


def test_substock_pipettes_at_least_a_tenth_of_a_millilitre():
    for g in (5e-3, 2.5e-4, 2.5e-5, 1e-6):
        s = substock_for(g)
        assert s.grams >= 0.010  # the sub-stock itself is weighable
        assert s.pipette_ml == pytest.approx(g / s.grams * s.volume_ml)


def test_ms_stock_scheme_keeps_calcium_apart_and_below_solubility(catalog):
    sheet = build_sheet(Recipe(base="ms1962").with_amount("bap", "1 mg/L"), catalog, volume="1 L", stocks=True)
    keys = {s.key: s for s in sheet.stocks}
    assert {"macro", "calcium", "micro", "iron", "vitamins", "pgr:bap"} <= set(keys)
    for s in sheet.stocks:
        species = {sp for it in s.items for sp, _ in catalog.components[it.id].species}
        if "Ca[2+]" in species:
            assert not species & {"SO4[2-]", "H2PO4[-]", "HPO4[2-]"}
        if s.max_fraction is not None:
            assert s.max_fraction <= SOLUBILITY_MARGIN
        assert s.ml_per_batch == pytest.approx(1000.0 / s.factor)
    assert keys["pgr:bap"].items[0].grams_per_litre <= PGR_STOCK_MAX_G_PER_L
    sucrose = next(r for r in sheet.rows if r.id == "sucrose")
    assert sucrose.route == "weigh"


def test_calcium_and_sulfate_in_one_stock_is_flagged(catalog):
    """CaCl2 + MgSO4 of MS at 100× would exceed the gypsum solubility product (10^-4.58, from memory)."""
    from mediaplan.tasks.prep import _check_stock

    items = [(catalog.components["calcium_chloride_dihydrate"], 0.44),
             (catalog.components["magnesium_sulfate_heptahydrate"], 0.37)]
    assert any("gypsum" in p for p in _check_stock(items, 100.0))
    assert not any("gypsum" in p for p in _check_stock(items, 1.0))


def test_heat_labile_components_go_in_after_autoclaving(catalog):
    r = Recipe(base="ms1962").with_amount("gibberellic_acid", "0.5 mg/L").with_amount("l_glutamine", "200 mg/L")
    plain = build_sheet(r, catalog)
    assert {x.id for x in plain.rows if x.route == "late"} == {"gibberellic_acid", "l_glutamine"}
    stocked = build_sheet(r, catalog, stocks=True)
    assert next(s for s in stocked.stocks if s.key == "pgr:gibberellic_acid").filter_sterilise
    assert "filter-sterilised" in stocked.steps[-1]


def test_user_factor_beyond_solubility_is_refused(catalog):
    with pytest.raises(AmountError, match="solubility"):
        build_sheet(Recipe(base="ms1962"), catalog, stocks=True, factors={"macro": 100})


@pytest.mark.parametrize("argv, needle", [
    (["prep", "--base", "ms1962", "--volume", "0 L"], "more than zero"),
    (["prep", "--base", "ms1962", "--volume", "2 kg"], "not a volume"),
    (["prep", "--base", "ms1962", "--stocks", "--factor", "macro=100"], "solubility"),
    (["prep", "--base", "ms1962", "--stocks", "--factor", "nosuch=10"], "no stock named"),
    (["prep", "--base", "ms1962", "--form", "calcium_chloride_dihydrate=sucrose"], "not a form"),
])
def test_bad_input_is_one_line_and_exit_2(capsys, argv, needle):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert needle in err and err.count("\n") == 1 and "Traceback" not in err


def test_cli_prints_sheet_with_inline_amounts(capsys):
    assert main(["prep", "KNO3=1900 mg/L", "sucrose=30 g/L", "--volume", "500 mL", "--format", "csv"]) == 0
    out = capsys.readouterr().out
    assert "950.0 mg" in out and "15.00 g" in out


_IDS = ["ammonium_nitrate", "potassium_nitrate", "calcium_chloride_dihydrate", "magnesium_sulfate_heptahydrate",
        "potassium_dihydrogen_phosphate", "boric_acid", "zinc_sulfate_heptahydrate", "potassium_iodide",
        "iron_ii_sulfate_heptahydrate", "disodium_edta_dihydrate", "myo_inositol", "thiamine_hydrochloride",
        "glycine", "sucrose", "bap", "naa", "gibberellic_acid", "l_glutamine", "agar", "mannitol",
        "calcium_nitrate_tetrahydrate", "potassium_sulfate"]


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(amounts=st.dictionaries(st.sampled_from(_IDS), st.floats(0.01, 3000.0), min_size=1, max_size=10),
       volume_ml=st.sampled_from([50.0, 250.0, 1000.0, 2000.0, 20000.0]),
       molal=st.booleans())
def test_stocks_recombine_exactly(catalog, amounts, volume_ml, molal):
    """Σ stocks (stock g/L × mL per batch) + direct weighings = the plan's grams per batch (1e-9 relative)."""
    r = Recipe()
    for i, (cid, mg) in enumerate(amounts.items()):
        if molal and i == 0 and catalog.components[cid].molar_mass:
            r = r.with_amount(cid, f"{mg / 1e5:.6g} mol/kg")
        else:
            r = r.with_amount(cid, f"{mg:.6g} mg/L")
    sheet = build_sheet(r, catalog, volume=f"{volume_ml} mL", stocks=True)
    want = sheet.grams_per_batch()
    got = sheet.recombined()
    assert set(got) == set(want)
    for cid, g in want.items():
        assert math.isclose(got[cid], g, rel_tol=1e-9), cid


def test_stock_solubility_is_the_molality_over_the_saturation_molality(catalog):
    """A 100× stock of the MS 1962 potassium nitrate (1900 mg/L; Murashige & Skoog 1962, Table 6): 190 g per L
    of stock leave about 810 g of water (solutes displace about 1 g/mL, the module's stated guess), so the
    molality is 190 / M / 0.810 and the fraction is that over Component.saturation_molality."""
    from mediaplan.tasks.prep.stocks import solubility_fractions

    kno3 = catalog.components["potassium_nitrate"]
    fraction = solubility_fractions([(kno3, 190.0)])["potassium_nitrate"]
    assert fraction == pytest.approx(190.0 / kno3.molar_mass / 0.810 / kno3.saturation_molality, rel=1e-12)
    assert solubility_fractions([(catalog.components["agar"], 7.0)])["agar"] is None  # no solubility data


def test_sheet_to_dict_is_json_ready_with_the_rounded_reading_beside_the_exact_mass(catalog):
    import json

    from mediaplan.tasks.prep import sheet_to_dict

    sheet = build_sheet(Recipe(base="ms1962").with_amount("bap", "1 mg/L"), catalog, volume="1 L", stocks=True)
    d = sheet.to_dict()
    assert d == sheet_to_dict(sheet)
    assert list(d) == ["title", "volume_l", "temperature_c", "base", "strength", "rows", "stocks", "steps", "ph",
                       "sterilisation", "cautions", "notes", "provenance"]
    json.dumps(d, allow_nan=False)
    for r, row in zip(sheet.rows, d["rows"], strict=True):
        assert row["grams"] == r.grams and row["weigh"] == format_mass(r.grams)
        assert row["weigh_via_stock"] == (r.grams < 0.010)
        assert row["substock"] is None or set(row["substock"]) == {"grams", "volume_ml", "pipette_ml"}
    stock = d["stocks"][0]
    assert {"factor", "volume_ml", "ml_per_batch", "items"} <= set(stock)
    assert {"grams_per_litre", "grams_in_stock", "solubility_fraction"} <= set(stock["items"][0])


def test_sheet_to_dict_turns_a_non_finite_number_into_null(catalog):
    from dataclasses import replace

    sheet = build_sheet(Recipe().with_amount("sucrose", "30 g/L"), catalog, volume="1 L")
    sheet.rows = [replace(sheet.rows[0], grams=float("nan"))]
    assert sheet.to_dict()["rows"][0]["grams"] is None


def test_prep_json_is_the_sheets_to_dict(capsys, catalog):
    import json

    assert main(["prep", "plans/rooting_half_strength.toml", "--stocks", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    from mediaplan.files.planfile import read

    plan = read("plans/rooting_half_strength.toml", catalog=catalog)
    sheet = build_sheet(plan.recipe, catalog, stocks=True, title=plan.title)
    want = sheet.to_dict()
    assert [r["weigh"] for r in d["rows"]] == [r["weigh"] for r in want["rows"]]
    assert d["steps"] == want["steps"] and [s["key"] for s in d["stocks"]] == [s["key"] for s in want["stocks"]]
