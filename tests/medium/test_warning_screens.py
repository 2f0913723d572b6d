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


def _pitzer_default_reference(ctx) -> list[str]:
    """pitzer_default written plainly: every pair present as a (weight, cation, anion) tuple, sorted."""
    model = ctx.model
    ions = list(model.ion_charges)
    column = {sp: k for k, sp in enumerate(model.species)}
    m = {ion: float(ctx.state.species_m[0][column[ion]]) for ion in ions}
    weights = sorted([(m[c] * m[a], c, a) for c, a in model.ion_pairs_without_parameters if m[c] > 0 and m[a] > 0],
                     reverse=True)
    if not weights:
        return []
    total = sum([m[i] for i in ions if model.ion_charges[i] > 0]) * sum([m[i] for i in ions if model.ion_charges[i] < 0])
    frac = sum([w for w, _, _ in weights]) / total if total > 0 else 0.0
    named = ", ".join(f"{c.split('[')[0]}–{a.split('[')[0]}" for _, c, a in weights[:3]) + (
        " …" if len(weights) > 3 else "")
    return [f"{len(weights)} ion pair{'s' if len(weights) > 1 else ''} without Pitzer parameters ({named}): "
            f"Debye–Hückel term only, {100 * frac:.2g} % of the cation–anion interactions"]


def test_the_unparametrised_pairs_note_matches_a_plain_sort_of_every_pair(catalog):
    """The note on ion pairs without Pitzer parameters (gathered and sorted in C, the top three picked
    by threshold) says what a plain sort of every pair's (weight, cation, anion) says, over a table of
    ion compositions: random molalities, ions absent (zero), equal molalities (ties in weight, broken by
    name), one ion pair alone, no pair at all."""
    import random
    from types import SimpleNamespace

    import numpy as np

    ctx = _context(Recipe(base="ms1962"), catalog)
    base = ctx.state.species_m[0].copy()
    ions = [k for k, sp in enumerate(ctx.model.species) if sp in ctx.model.ion_charges]
    rng = random.Random(16)
    cases = [base]
    for _ in range(300):
        sm = base.copy()
        for k in ions:
            sm[k] = rng.choice([0.0, 0.0, 1e-3, 2e-3, 10 ** rng.uniform(-9, 0.5), rng.random()])
        cases.append(sm)
    for keep in range(len(ions)):  # one ion left, then two, ...: single pairs and none
        sm = base.copy()
        for k in ions[keep + 1:]:
            sm[k] = 0.0
        cases.append(sm)
    equal = base.copy()
    equal[ions] = 0.004  # every pair the same weight: the names fall in descending name order
    cases.append(equal)
    fired = 0
    for sm in cases:
        fake = SimpleNamespace(recipe=ctx.recipe, catalog=catalog, lines=ctx.lines, model=ctx.model,
                               state=SimpleNamespace(species_m=np.array([sm])), evaluation=ctx.evaluation, T=ctx.T)
        got = [w.message for w in W.pitzer_default(fake)]
        assert got == _pitzer_default_reference(fake), sm
        fired += bool(got)
    assert 0 < fired < len(cases)  # the table holds compositions with and without such pairs
