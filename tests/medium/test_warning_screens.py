"""A warning's quick screen never decides otherwise than the full check it stands in front of.

``warnings.pitzer_range`` stops early when the evaluation's ionic strength lies well below every Pitzer
pair's range (``PitzerSystem.min_pair_ionic_strength``), instead of summing I again and looking at each
pair. Here the screened answer is compared with the full check on media whose ionic strength is brought
to within 1e-12 .. 1e-3 (relative) of that floor, from both sides. The compositions are test inputs
(a KCl-CaCl2-MgSO4-NaCl mixture and KNO3 alone), not published values.
"""

from __future__ import annotations

import pytest

from mediaplan.medium import warnings as W
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.model import compiled
from mediaplan.medium.recipe import Recipe

#: test inputs [mmol/kg water]
MIXTURES = {
    "four_salts": {"potassium_chloride": 20.0, "calcium_chloride_anhydrous": 3.0,
                   "magnesium_sulfate_anhydrous": 1.5, "sodium_chloride": 1.0},
    "potassium_nitrate": {"potassium_nitrate": 100.0},
}


def _recipe(mix: dict[str, float], factor: float) -> Recipe:
    r = Recipe()
    for cid, mmol in mix.items():
        r = r.with_amount(cid, f"{mmol * factor!r} mmol/kg")
    return r


def _context(recipe: Recipe, catalog) -> W.Context:
    lines = recipe.lines(catalog)
    model = compiled(catalog, [ln.component for ln in lines], recipe.temperature_k)
    n, b = model.amounts_to_arrays([ln.amount for ln in lines])
    return W.Context(recipe, catalog, lines, model, model.solve_row(n, b), evaluate(recipe, catalog),
                     recipe.temperature_k)


def _unscreened(ctx: W.Context) -> list[str]:
    return [f"{c}–{a}: ionic strength beyond the Pitzer parameters' data range"
            for c, a in ctx.model.ion_pairs_beyond_data(ctx.state)]


@pytest.mark.parametrize("name", list(MIXTURES))
def test_the_ionic_strength_screen_agrees_with_the_full_check_at_its_edge(catalog, name):
    mix = MIXTURES[name]
    ctx = _context(_recipe(mix, 1.0), catalog)
    floor = ctx.model.pitzer_range_floor
    # the factor that brings I to the floor: I is close to proportional to the amounts; refine once
    f = floor / ctx.evaluation.ionic_strength_mol_per_kg
    f *= floor / _context(_recipe(mix, f), catalog).evaluation.ionic_strength_mol_per_kg
    fired = screened = 0
    for rel in (-1e-3, -1e-6, -1e-9, -1e-12, 0.0, 1e-12, 1e-9, 1e-6, 1e-3):
        ctx = _context(_recipe(mix, f * (1 + rel)), catalog)
        got = [w.message for w in W.pitzer_range(ctx)]
        assert got == _unscreened(ctx), (name, rel)
        fired += bool(got)
        screened += ctx.evaluation.ionic_strength_mol_per_kg * (1 + W.PITZER_RANGE_SCREEN) < floor
    assert fired >= 3 and screened >= 2  # both sides of the edge were met
