"""Sweeps solved chunk by chunk (mediaplan.medium.grid) give what MediumModel.solve gives on the dense input,
row by row, and what evaluate() gives for each variant."""

from __future__ import annotations

import numpy as np
import pytest

from mediaplan.files.catalog import get_catalog
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.grid import Axis, chunks, grid_rows, solve_grid, sweep_recipe
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import parse_amount
from mediaplan.thermo import potential


@pytest.fixture(scope="module")
def ms():
    """MS 1962 (its own sucrose) plus mannitol at 0, compiled at 25 °C."""
    cat = get_catalog()
    lines = Recipe(base="ms1962").lines(cat)
    comps = [ln.component for ln in lines] + [cat.components["mannitol"], cat.components["sorbitol"]]
    model = compiled(cat, comps, 298.15)
    n0, b0 = model.amounts_to_arrays([ln.amount for ln in lines] + [parse_amount("0 g/L")] * 2)
    ids = [c.id for c in comps]
    return cat, model, n0, b0, ids


def _axes(model, ids):
    # mannitol 0-60 g/L and sucrose 0-45 g/L per litre of medium, sorbitol 0-0.2 mol/kg per kg of water:
    # the osmotica and ranges of common media (common practice)
    mann = np.linspace(0, 60, 4) / (model.M[ids.index("mannitol")] * 1000)  # g/L -> mol/m^3
    sucr = np.linspace(0, 45, 3) / (model.M[ids.index("sucrose")] * 1000)
    sorb = np.array([0.0, 0.2])
    return [Axis.per_volume(ids.index("mannitol"), mann), Axis.per_volume(ids.index("sucrose"), sucr),
            Axis.per_water(ids.index("sorbitol"), sorb)]


def _dense(n0, b0, axes, full):
    """The whole input, made the plain way (what the sweep never holds)."""
    if full:
        idx = [g.ravel() for g in np.meshgrid(*(np.arange(len(a)) for a in axes), indexing="ij")]
    else:
        idx = [np.arange(len(axes[0]))] * len(axes)
    N = np.tile(n0, (idx[0].size, 1))
    B = np.tile(b0, (idx[0].size, 1))
    for a, i in zip(axes, idx, strict=True):
        N[:, a.index] = a.n[i]
        B[:, a.index] = a.b[i]
    return N, B


@pytest.mark.parametrize("full", [True, False])
def test_grid_equals_dense_solve_row_by_row(ms, full):
    _, model, n0, b0, ids = ms
    axes = _axes(model, ids)
    if not full:  # given rows: three lists of one length
        axes = [Axis(a.index, a.n[:2], a.b[:2]) for a in axes]
    N, B = _dense(n0, b0, axes, full)
    assert grid_rows(axes, full=full) == N.shape[0] == (24 if full else 2)
    # the chunks are the dense rows, exactly
    made = list(chunks(n0, b0, axes, full=full, chunk=5))
    np.testing.assert_array_equal(np.vstack([n for _, n, _ in made]), N)
    np.testing.assert_array_equal(np.vstack([b for _, _, b in made]), B)
    seen = []
    got = solve_grid(model, n0, b0, axes, full=full, chunk=5, progress=lambda done, total: seen.append((done, total)))
    assert seen[-1] == (N.shape[0], N.shape[0]) and len(seen) == -(-N.shape[0] // 5)
    for r in range(N.shape[0]):  # each row alone, as evaluate() solves it
        y = model.solve(N[r:r + 1], B[r:r + 1]).mix.osmolality[0]
        assert got["osmolality"][r] == pytest.approx(y, rel=1e-12)
        assert got["water_activity"][r] == pytest.approx(float(potential.water_activity(y)), rel=1e-12)
        psi = float(potential.potential_from_aw(potential.water_activity(y), model.T))
        assert got["potential"][r] == pytest.approx(psi, rel=1e-12)
    whole = model.solve(N, B).mix.osmolality  # and the dense batch in one call
    np.testing.assert_allclose(got["osmolality"], whole, rtol=1e-12, atol=0)


def test_only_the_figures_asked_for(ms):
    _, model, n0, b0, ids = ms
    got = solve_grid(model, n0, b0, _axes(model, ids)[:1], figures=("water_activity",))
    assert list(got) == ["water_activity"] and got["water_activity"].shape == (4,)
    with pytest.raises(MediaplanError, match="unknown figure"):
        solve_grid(model, n0, b0, _axes(model, ids), figures=("tonicity",))


def test_refusals_name_what_is_wrong(ms):
    _, model, n0, b0, ids = ms
    axes = _axes(model, ids)
    with pytest.raises(MediaplanError, match="different lengths"):
        solve_grid(model, n0, b0, axes, full=False)
    with pytest.raises(MediaplanError, match="same component"):
        solve_grid(model, n0, b0, [axes[0], axes[0]])
    with pytest.raises(MediaplanError, match="no amounts"):
        Axis.per_volume(0, [])
    # mannitol at 1.2e4 mol/m^3 (about 2.2 kg/L) leaves the solutes more than the whole volume
    full_of_solute = Axis.per_volume(ids.index("mannitol"), [0.0, 1.2e4])
    with pytest.raises(MediaplanError, match=r"no water left.*row 2 of the sweep: mannitol 12000 mol/m\^3"):
        solve_grid(model, n0, b0, [full_of_solute], chunk=1)


def test_sweep_of_a_recipe_is_evaluate_of_each_variant(ms):
    cat = ms[0]
    recipe = Recipe(base="ms1962")
    mann, sucr = ["0 g/L", "25 g/L", "0.2 mol/kg"], ["0 g/L", "30 g/L"]  # common practice
    got = sweep_recipe(recipe, cat, {"mannitol": mann, "sucrose": sucr})
    r = 0
    for a in mann:
        for b in sucr:
            ev = evaluate(recipe.with_amount("mannitol", a).with_amount("sucrose", b), cat)
            for f in ("osmolality_mosmol_per_kg", "water_activity", "osmotic_potential_mpa"):
                assert got[f][r] == pytest.approx(getattr(ev, f), rel=1e-12), (a, b, f)
            r += 1
    rows = sweep_recipe(recipe, cat, {"mannitol": mann[:2], "sucrose": sucr}, full=False,
                        figures=("osmotic_potential_mpa",))
    assert list(rows) == ["osmotic_potential_mpa"]
    np.testing.assert_allclose(rows["osmotic_potential_mpa"], got["osmotic_potential_mpa"][[0, 3]], rtol=1e-12)


def test_sweep_of_a_recipe_refuses_what_evaluate_refuses(ms):
    cat = ms[0]
    recipe = Recipe(base="ms1962")
    # 400 g/L mannitol is past twice its solubility (CRC Handbook: about 216 g/L at 25 degC)
    with pytest.raises(AmountError) as sweep_err:
        sweep_recipe(recipe, cat, {"mannitol": ["0 g/L", "400 g/L"]})
    with pytest.raises(AmountError) as eval_err:
        evaluate(recipe.with_amount("mannitol", "400 g/L"), cat)
    assert str(sweep_err.value) == str(eval_err.value)
    with pytest.raises(AmountError):
        sweep_recipe(recipe, cat, {"mannitol": ["20 g/l/L"]})
    with pytest.raises(MediaplanError, match="unknown figure"):
        sweep_recipe(recipe, cat, {"mannitol": ["0 g/L"]}, figures=("osmolality",))


def _rows_of(recipe, amounts):
    """The recipes of a full sweep's rows, in its order (the first component varying slowest)."""
    import itertools

    keys = list(amounts)
    for combo in itertools.product(*[amounts[k] for k in keys]):
        row = recipe
        for k, a in zip(keys, combo, strict=True):
            row = row.with_amount(k, a)
        yield row


#: sweeps a random search of 30,000 found answering otherwise than evaluate() (test inputs)
SWEEPS_AS_EVALUATE = {
    # another form of a base's substance replaces the base line (it was added beside it: CaCl2 counted twice)
    "other_form_of_a_base_line": (Recipe(base="ms1962"), {"calcium_chloride_anhydrous": ["0 mM", "0.0121 mM", "11.26 mM"],
                                                          "biotin": ["0.00216 mM", "10.17 mM"]}),
    "other_form_at_two_strengths": (Recipe(base="ms1962", strength=2, temperature="4 degC"),
                                    {"manganese_sulfate_monohydrate": ["0 g/L", "2.167 g/L"]}),
    "other_form_at_zero_celsius": (Recipe(base="n6_1975", temperature="0 degC"),
                                   {"manganese_sulfate_monohydrate": ["0.001371 g/L", "33.42 g/L"]}),
}


@pytest.mark.parametrize("name", list(SWEEPS_AS_EVALUATE))
def test_every_row_of_a_sweep_is_what_evaluate_gives_it_or_refuses(ms, name):
    cat = ms[0]
    recipe, amounts = SWEEPS_AS_EVALUATE[name]
    got = sweep_recipe(recipe, cat, amounts)
    for r, row in enumerate(_rows_of(recipe, amounts)):
        try:
            ev = evaluate(row, cat)
        except MediaplanError:
            assert all(np.isnan(got[f][r]) for f in got), (name, r)  # no answer: NaN, never a number
            continue
        for f in got:
            assert got[f][r] == pytest.approx(getattr(ev, f), rel=1e-12), (name, r, f)


def test_a_row_past_its_limit_is_refused_even_when_the_corner_by_volume_is_not_it(ms):
    """Magnesium sulfate takes less volume dissolved than its water (a negative apparent molar volume), so
    the corner that holds the most volume of solute is its smallest amount: every row is checked as
    evaluate() checks it, and the refusal names the row's amount in evaluate()'s words."""
    cat = ms[0]
    recipe = Recipe(base="nn1969", strength=0.5, temperature="0 degC")
    amounts = {"magnesium_sulfate_heptahydrate": ["0.1 mol/kg", "30.49 mol/kg"]}
    with pytest.raises(AmountError) as sweep_err:
        sweep_recipe(recipe, cat, amounts)
    with pytest.raises(AmountError) as eval_err:
        evaluate(recipe.with_amount("magnesium_sulfate_heptahydrate", "30.49 mol/kg"), cat)
    assert str(sweep_err.value) == str(eval_err.value)


def test_rows_past_pitzer_range_have_no_answer_in_every_figure(ms):
    """A row whose ions' own Pitzer φ is negative (calcium pantothenate at 32.74 mol/kg with silver nitrate
    at 4.693 mol/kg, 14.5 °C: a random search found it, when amounts past 5 kg per kg of water were not yet
    refused) is NaN in every figure of the grid, without numpy warnings; the row beside it is answered."""
    cat = ms[0]
    comps = [cat.components["silver_nitrate"], cat.components["calcium_pantothenate"]]
    model = compiled(cat, comps, 287.65)
    with np.errstate(all="raise"):
        got = solve_grid(model, np.zeros(2), np.array([4.693, 0.0]), [Axis.per_water(1, np.array([0.01, 32.74]))])
    for f, v in got.items():
        assert np.isfinite(v[0]) and np.isnan(v[1]), (f, v)
