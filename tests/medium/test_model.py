"""The compiled model's interface (mediaplan.medium.model): the volume balance and its one limit, the
osmolal shares and ionic strength, a medium along a line of amounts (Sweep), and how far it may go.

Amounts here are test inputs (no published values); the expected figures follow from the definitions.
"""

from __future__ import annotations

import numpy as np
import pytest

from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import MAX_MOLALITY, MIN_FREE_VOLUME, compiled
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import Amount
from mediaplan.thermo.potential import potential_from_osmolality


def _model(catalog, recipe: Recipe, extra=()):
    lines = recipe.lines(catalog)
    comps = [ln.component for ln in lines] + [catalog.components[c] for c in extra]
    model = compiled(catalog, comps, recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines] + [Amount(0.0, "molar", "0 mM")] * len(extra))
    return model, n, b


MS_SUCROSE = Recipe(base="ms1962").with_amount("sucrose", "30 g/L")


def test_water_is_the_volume_balance(catalog):
    model, n, b = _model(catalog, MS_SUCROSE.with_amount("mannitol", "0.2 mol/kg"))
    W = float(model.water(n, b))
    # V = W/ρ_w + Σ n v + W Σ b v for one m^3 of medium
    assert W / model.rho_w + n @ model.v + W * (b @ model.v) == pytest.approx(1.0, rel=1e-14)
    np.testing.assert_allclose(model.molality(n, b), n / W + b, rtol=1e-15)
    # batched: one row per medium, the same numbers
    np.testing.assert_allclose(model.water(np.vstack([n, n]), np.vstack([b, b])), [W, W], rtol=1e-15)


def test_no_water_left_is_refused_at_the_one_limit(catalog):
    model, n, b = _model(catalog, Recipe(), ["sucrose"])
    v = model.v[0]
    at_limit = (1.0 - MIN_FREE_VOLUME) / v  # mol/m^3 of sucrose that leave exactly the limit free
    model.water(np.array([at_limit * (1 - 1e-9)]), b)
    with pytest.raises(MediaplanError, match="no water left"):
        model.water(np.array([at_limit * (1 + 1e-9)]), b)
    with pytest.raises(MediaplanError, match="no water left"):
        evaluate(Recipe().with_amount("sucrose", f"{at_limit * 1.01 * model.M[0]:.6g} g/L"), catalog)


def test_shares_add_up_and_follow_each_group(catalog):
    recipe = MS_SUCROSE.with_amount("peg8000", "100 g/L")
    model, n, b = _model(catalog, recipe)
    st = model.solve(np.vstack([n, 0.5 * n]), np.vstack([b, 0.5 * b]))
    shares = model.shares(st)
    assert shares.shape == st.molality.shape
    np.testing.assert_allclose(shares.sum(axis=1), st.mix.osmolality, rtol=1e-12)
    ids = [c.id for c in model.components]
    peg = ids.index("peg8000")
    # PEG is its own ZSR group: its share is the group's fraction of the osmolality
    np.testing.assert_allclose(shares[:, peg], st.mix.fraction_peg[:, 0] * st.mix.osmolality, rtol=1e-12)
    # the evaluation reports the same split
    ev = evaluate(recipe, catalog)
    for i, cid in enumerate(ids):
        assert ev.components[i].id == cid
        assert ev.components[i].osmolality_mosmol_per_kg == pytest.approx(shares[0, i] * 1000, rel=1e-12)


def test_ionic_strength(catalog):
    # 0.1 mol/kg NaCl: I = 0.1; 0.1 mol/kg CaCl2: I = ½ (0.1·4 + 0.2·1) = 0.3; a neutral solute adds nothing
    for cid, expected in (("NaCl", 0.1), ("CaCl2", 0.3)):
        model, n, b = _model(catalog, Recipe().with_amount(cid, "0.1 mol/kg").with_amount("sucrose", "0.2 mol/kg"))
        assert model.ionic_strength(model.solve(n[None], b[None]))[0] == pytest.approx(expected, rel=1e-14)
    model, n, b = _model(catalog, Recipe().with_amount("sucrose", "0.2 mol/kg"))
    assert model.ionic_strength(model.solve(n[None], b[None]))[0] == 0.0


def test_species_by_kind(catalog):
    recipe = Recipe(temperature="40 degC").with_amount("KNO3", "0.05 mol/kg").with_amount(
        "sucrose", "0.1 mol/kg").with_amount("peg8000", "0.01 mol/kg")
    model, n, b = _model(catalog, recipe)
    st = model.solve(n[None], b[None])
    assert model.has_electrolytes and model.has_neutral and model.has_peg
    assert model.ion_molalities(st) == pytest.approx({"K[+]": 0.05, "NO3[-]": 0.05}, rel=1e-12)
    [(sp, m, p)] = model.neutral_solutes(st)
    assert (sp, p) == ("sucrose", catalog.neutral["sucrose"]) and m == pytest.approx(0.1, rel=1e-12)
    [(grade, c)] = model.peg_solutes(st)
    assert grade == 8000 and c == pytest.approx(0.01 * 8000 / 1000, rel=1e-12)  # g PEG per g water
    assert [(c, a) for c, a, _ in model.ion_pairs(st)] == [("K[+]", "NO3[-]")]
    assert set(model.species_present(st)) == {"K[+]", "NO3[-]", "sucrose", "peg8000"}


def test_sweep_is_the_model_along_a_line(catalog):
    model, n, b = _model(catalog, MS_SUCROSE, ["mannitol"])
    k = len(n) - 1
    dn = np.zeros_like(n)
    dn[k] = 1.0  # x: mol of mannitol per m^3 of medium
    sweep = model.along(n, b, dn, np.zeros_like(b))
    x = np.array([0.0, 50.0, 200.0, 400.0])
    N = np.tile(n, (4, 1))
    N[:, k] = x
    direct = model.solve(N, np.tile(b, (4, 1))).mix.osmolality
    np.testing.assert_array_equal(sweep.osmolality(x), direct)
    np.testing.assert_allclose(sweep.potential(x), potential_from_osmolality(direct, model.T), rtol=1e-15)
    assert sweep.osmolality(200.0)[0] == direct[2]
    # the ZSR residual at a known osmolality is zero where the sweep has that osmolality
    f = sweep.residual_at(float(direct[2]))
    assert abs(f(200.0)) < 1e-10 and f(50.0) < 0 < f(400.0)


def test_sweep_limit_volume_molality_and_solubility(catalog):
    # mannitol per m^3 of medium: stops at its solubility long before the water runs out
    model, n, b = _model(catalog, Recipe(), ["mannitol"])
    sweep = model.along(n, b, np.ones(1), np.zeros(1))
    mannitol = catalog.components["mannitol"]
    lim = sweep.limit([mannitol])
    assert lim.component is mannitol
    assert float(sweep.molality(lim.x)[0]) == pytest.approx(mannitol.saturation_molality, rel=1e-10)
    water_only = sweep.limit()
    assert water_only.component is None and water_only.x > lim.x
    assert float(model.free_volume(sweep.arrays(water_only.x)[0])) == pytest.approx(MIN_FREE_VOLUME, rel=1e-12)
    model.water(*sweep.arrays(water_only.x))  # the model accepts the limit itself
    # an amount per kg of water stops at MAX_MOLALITY; a sweep's own end comes first when nearer
    molal = model.along(n, b, np.zeros(1), np.ones(1))
    assert molal.limit().x == pytest.approx(MAX_MOLALITY)
    assert model.along(n, b, np.zeros(1), np.ones(1), x_max=2.0).limit().x == 2.0


def test_at_osmolality_matches_the_full_solution(catalog):
    """The ZSR residual at the medium's own osmolality is zero, for every kind of group."""
    recipe = MS_SUCROSE.with_amount("mannitol", "20 g/L").with_amount("peg8000", "50 g/L")
    model, n, b = _model(catalog, recipe)
    y = float(model.solve(n[None], b[None]).mix.osmolality[0])
    assert abs(model.at_osmolality(y)(n, b)) < 1e-10
    assert model.at_osmolality(1.05 * y)(n, b) < 0 < model.at_osmolality(0.95 * y)(n, b)


def test_nothing_outside_the_model_reads_its_arrays(catalog):
    """The stoichiometry and the ZSR grouping are the model's own: other modules ask its methods."""
    import re
    from pathlib import Path

    import mediaplan

    model, _, _ = _model(catalog, MS_SUCROSE)
    private = ("S", "ion_idx", "neutral_idx", "peg_idx", "pitzer", "peg_grades", "neutral_params")
    assert not any(hasattr(model, name) for name in private)
    pattern = re.compile(r"\._(" + "|".join(private) + r")\b")
    root = Path(mediaplan.__file__).parent
    readers = [str(p.relative_to(root)) for p in root.rglob("*.py")
               if p.name != "model.py" and pattern.search(p.read_text(encoding="utf-8"))]
    assert readers == []
