"""An evaluation at a strength reads the base's full-strength lines and the strength, and answers what the
scaled lines themselves give.

``evaluate()`` takes a base formulation at a strength as ``Recipe.lines_at_full_strength`` gives it (each
scaled line its full-strength line and a factor), so that a strength never seen before makes no line
object per scaled line. Here every figure, text and warning of an evaluation is compared with the same
evaluation made from ``Recipe.lines()`` (a line object per scaled line, each amount a ScaledAmount), over a
table of every base of the catalog x strengths (including 0 and 20, the limits) x the three strength
scopes x user lines (an override, a different form of a base substance, a zero that removes a line, an
addition), and the refusals (an amount past its plausible limit) say the same words. The recipes are
test inputs, not published values.
"""

from __future__ import annotations

import pytest

from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

STRENGTHS = (0.0, 1e-3, 0.25, 0.5 + 1e-9, 0.75, 1.0, 1.7, 20.0)
SCOPES = ("salts", "all", "macro")
USER_LINES = {  # test inputs
    "none": [],
    "override": [("potassium_nitrate", "1901 mg/L")],
    "other_form": [("calcium_chloride_anhydrous", "3 mmol/kg")],
    "removed": [("sucrose", "0 g/L"), ("potassium_nitrate", "0 mg/L")],
    "added": [("mannitol", "0.2 mol/kg")],
}


@pytest.fixture
def from_lines(monkeypatch):
    """evaluate() made to read Recipe.lines() (a line object per scaled line), as before the factors."""
    def run(recipe, catalog):
        with monkeypatch.context() as mp:
            mp.setattr(Recipe, "lines_at_full_strength", lambda self, cat: (self.lines(cat), None))
            return evaluate(recipe, catalog)
    return run


def _answer(fn, recipe, catalog):
    try:
        ev = fn(recipe, catalog)
    except MediaplanError as exc:
        return ("refused", type(exc).__name__, str(exc), getattr(exc, "field", None))
    return ev.to_dict(), [repr(w) for w in ev.warnings]


@pytest.mark.parametrize("user", list(USER_LINES))
def test_every_base_strength_and_scope_answers_as_the_scaled_lines_do(catalog, from_lines, user):
    compared = refused = 0
    for base in sorted(catalog.media):
        for scope in SCOPES:
            for s in STRENGTHS:
                r = Recipe(base=base, strength=s, strength_scope=scope)
                for cid, amount in USER_LINES[user]:
                    r = r.with_amount(cid, amount)
                got, want = _answer(evaluate, r, catalog), _answer(from_lines, r, catalog)
                assert got == want, (base, scope, s, user)
                compared += 1
                refused += got[0] == "refused"
    assert compared == len(catalog.media) * len(SCOPES) * len(STRENGTHS)


#: concentrated media written as bases (invented test inputs: a salt stock and a syrup), so that a strength can
#: take a scaled line past its plausible limit, or leave no water
STOCKS = {
    "test_stock": [("potassium_nitrate", "95 g/L"), ("sucrose", "30 g/L")],
    "test_syrup": [("sucrose", "100 g/L"), ("potassium_chloride", "1 g/L")],
}


@pytest.fixture(scope="module")
def stock_catalog(tmp_path_factory):
    from mediaplan.files.catalog import bundled_folder, load_catalog

    folder = tmp_path_factory.mktemp("stocks")
    (folder / "media").mkdir()
    for mid, lines in STOCKS.items():
        text = (f'id: {mid}\nname: "{mid} (an invented test input)"\ncitation: "invented for a test"\n'
                "doi: null\nconfidence: C\nph: null\ncomponents:\n")
        text += "".join(f'  - component: {cid}\n    amount: "{amount}"\n    confidence: C\n' for cid, amount in lines)
        (folder / "media" / f"{mid}.yaml").write_text(text, encoding="utf-8")
    return load_catalog([bundled_folder(), folder])


@pytest.mark.parametrize("strength", [1.0, 5.0, 20.0])
@pytest.mark.parametrize("base", list(STOCKS))
def test_a_scaled_line_past_its_limit_is_refused_in_its_scaled_amount(stock_catalog, from_lines, base, strength):
    """A base line the strength takes past its plausible limit, or a strength that leaves no water: the
    refusal names the line at its scaled amount (the words Recipe.lines() gives), not at its published one."""
    r = Recipe(base=base, strength=strength, strength_scope="all")
    got = _answer(evaluate, r, stock_catalog)
    assert got == _answer(from_lines, r, stock_catalog)
    if strength == 20.0:  # both stocks are refused there (KNO3 past its Pitzer range; sucrose fills the volume)
        assert got[0] == "refused" and got[3] == "medium.strength", got
        scaled = {"test_stock": "1900 g/L", "test_syrup": "2000 g/L"}[base]
        assert scaled in got[2], got


def test_a_base_past_pitzer_range_at_zero_celsius_says_so_instead_of_failing(catalog):
    """N6 1975 at 20x, every line scaled (sucrose to 8 mol/kg): at 0 °C Pitzer's φ at the warm start is
    negative. The evaluation answers at 25 °C and says in words that there is no freezing-point figure (it
    failed with an unexpected error before: a power of a negative float is complex in Python)."""
    ev = evaluate(Recipe(base="n6_1975", strength=20.0, strength_scope="all"), catalog)
    assert ev.osmolality_mosmol_per_kg > 0 and ev.water_activity < 1
    assert [w.code for w in ev.warnings][0] == "no_freezing_point"
    assert ev.to_dict()["freezing_point_depression_k"] is None
