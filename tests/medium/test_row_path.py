"""One composition on Python floats gives the answers of the vectorised path.

``evaluate()`` solves its one recipe on Python floats (``MediumModel.solve_row``, the row path of
``MediumModel.mixture``, ``shares_row``, the 0 °C solve warm-started from the 25 °C state); sweeps, the
solver and the series designer solve batches on numpy arrays (``MediumModel.solve``, ``shares``). Here,
over every plan of plans/ and a table of salt, sugar, polyol and PEG mixtures at 0, 4, 25 and 37 °C:

- every figure of the row path against the same recipe solved inside a batch of two rows (the array path,
  cold start at 0 °C as well): 1e-12 relative (rounding is about 1e-15; the ZSR solver stops at 1e-11 of
  its own steps, and the two paths take the same steps);
- ``solve_row`` against ``solve`` of the batch of that one row, and ``shares_row`` against ``shares``:
  the same bits (the same arithmetic in the same order);
- ``pairwise_sum`` against numpy's sum, and a base line at a new strength against ``Amount.scaled``.

The mixtures are test inputs (amounts near those of culture media and osmotic treatments), not published
values; the published-value checks run unchanged in their own files.
"""

from __future__ import annotations

import math
import random
from pathlib import Path

import numpy as np
import pytest

from mediaplan.files.planfile import read
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe, ScaledAmount
from mediaplan.medium.units import parse_amount
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0
from mediaplan.thermo.mixing import pairwise_sum

#: agreement asked of the row path against the array path [relative]
AGREE = 1e-12

PLANS = sorted((Path(__file__).resolve().parents[2] / "plans").glob("*.toml"))

MIXTURES = {  # test inputs (common practice amounts), each at every temperature below
    "nacl": [("sodium_chloride", "0.5 mol/kg")],
    "salts6": [("potassium_chloride", "20 mmol/kg"), ("calcium_chloride_anhydrous", "3 mmol/kg"),
               ("magnesium_sulfate_anhydrous", "1.5 mmol/kg"), ("sodium_chloride", "1 mmol/kg")],
    "sucrose": [("sucrose", "1.0 mol/kg")],
    "kno3_sucrose": [("KNO3", "20 mM"), ("sucrose", "60 g/L")],
    "sorbitol_glucose_mes": [("sorbitol", "0.4 mol/kg"), ("glucose", "30 g/L"), ("mes", "0.5 g/L")],
    "glycerol_nacl": [("glycerol", "0.3 mol/kg"), ("sodium_chloride", "50 mM")],
    "peg_kcl": [("peg8000", "200 g/L"), ("potassium_chloride", "10 mM")],
    "peg_mannitol": [("peg6000", "150 g/L"), ("mannitol", "0.2 mol/kg")],
    "ms_mannitol": "ms1962+mannitol",
    "wpm_half": "wpm1980@0.5",
}
TEMPERATURES = ("0 degC", "4 degC", "25 degC", "37 degC")


def _mixture(name: str, temperature: str) -> Recipe:
    spec = MIXTURES[name]
    if spec == "ms1962+mannitol":
        return Recipe(base="ms1962", temperature=temperature).with_amount("mannitol", "0.3 mol/kg")
    if spec == "wpm1980@0.5":
        return Recipe(base="wpm1980", strength=0.5, temperature=temperature).with_amount("sucrose", "20 g/L")
    r = Recipe(temperature=temperature)
    for cid, amount in spec:
        r = r.with_amount(cid, amount)
    return r


def _cases() -> dict[str, object]:
    cases: dict[str, object] = {p.name: p for p in PLANS}
    for name in MIXTURES:
        for t in TEMPERATURES:
            cases[f"{name}@{t}"] = (name, t)
    return cases


CASES = _cases()


def _recipe(case, catalog) -> Recipe:
    if isinstance(case, Path):
        return read(case, catalog=catalog).recipe
    return _mixture(*case)


def _close(a: float, b: float) -> bool:
    return a == pytest.approx(b, rel=AGREE, abs=1e-300) or (math.isnan(a) and math.isnan(b))


@pytest.mark.parametrize("case", list(CASES))
def test_row_path_gives_the_batch_answers(catalog, case):
    recipe = _recipe(CASES[case], catalog)
    ev = evaluate(recipe, catalog)  # the row path
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    # the same recipe as the first row of a batch of two (the second a diluted copy): the array path
    st = model.solve(np.vstack([n, 0.6 * n]), np.vstack([b, 0.6 * b]))
    y = float(st.mix.osmolality[0])
    assert _close(ev.osmolality_mosmol_per_kg, y * 1000.0)
    assert _close(ev.osmolality_ideal_mosmol_per_kg, float(st.mix.ideal[0]) * 1000.0)
    assert _close(ev.electrolyte_phi, float(st.mix.electrolyte_phi_own[0]))
    assert _close(ev.ionic_strength_mol_per_kg, float(model.ionic_strength(st)[0]))
    assert _close(ev.water_kg_per_l, float(st.water_kg_per_m3[0]) / 1000.0)
    shares = model.shares(st)[0]
    assert len(ev.components) == len(shares)
    for c, share, m in zip(ev.components, shares.tolist(), st.molality[0].tolist(), strict=True):
        assert _close(c.osmolality_mosmol_per_kg, share * 1000.0), c.id
        assert _close(c.molality_mmol_per_kg, m * 1000.0), c.id
    # the freezing point: the row path warm-starts at 0 °C from its own state, the batch starts cold
    y0 = float(model.mixture(st.species_m, T0).osmolality[0])
    theta = float(potential.freezing_point_depression(float(potential.water_activity(y0))))
    assert _close(ev.freezing_point_depression_k, theta)


@pytest.mark.parametrize("case", [c for c in CASES if "@25" in c or c.endswith(".toml")])
def test_solve_row_and_shares_row_are_the_batch_of_one(catalog, case):
    recipe = _recipe(CASES[case], catalog)
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    one, row = model.solve(n[None, :], b[None, :]), model.solve_row(n, b)
    for field in ("water_kg_per_m3", "n_per_m3", "molality", "species_m"):
        np.testing.assert_allclose(getattr(row, field), getattr(one, field), rtol=1e-15, atol=0, err_msg=field)
    for field in ("osmolality", "ideal", "electrolyte_phi", "fraction_electrolyte", "fraction_neutral"):
        np.testing.assert_allclose(getattr(row.mix, field), getattr(one.mix, field), rtol=AGREE, atol=0,
                                   err_msg=field)
    assert model.shares_row(row) == model.shares(row)[0].tolist()  # same arithmetic, same order: same bits


def test_pairwise_sum_is_numpys_sum():
    rng = random.Random(16)
    for _ in range(400):
        n = rng.choice([rng.randint(0, 40), rng.randint(100, 300), rng.choice([127, 128, 129, 1031])])
        values = [rng.choice((1, -1)) * rng.random() * 10 ** rng.randint(-8, 1) if rng.random() < 0.6 else 0.0
                  for _ in range(n)]
        assert pairwise_sum(values) == float(np.array(values, dtype=float).sum())


def test_a_scaled_base_line_is_amount_scaled():
    a = parse_amount("1900 mg/L")
    lazy = ScaledAmount(a.value * 0.37, a.kind, like=a.text)
    eager = a.scaled(0.37)
    assert lazy.value == eager.value and lazy.text == eager.text
    assert lazy == eager and eager == lazy and hash(lazy) == hash(eager)


def test_half_strength_lines_match_scaling_each_amount(catalog):
    recipe = Recipe(base="ms1962", strength=0.5)
    for ln in recipe.lines(catalog):
        published = next(ml.amount for ml in catalog.medium("ms1962").lines if ml.component == ln.component.id)
        expected = published.scaled(0.5) if ln.scaled else published
        assert ln.amount == expected and ln.amount.text == expected.text
    ev = evaluate(recipe, catalog)
    assert [c.amount for c in ev.components] == [ln.amount.text for ln in recipe.lines(catalog)]
    assert ev.to_dict()["components"][0]["amount"] == ev.components[0].amount
