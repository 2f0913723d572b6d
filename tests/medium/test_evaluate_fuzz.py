"""Whatever recipe a plan file can hold, evaluate() answers with finite figures or refuses in words.

A seeded table of random recipes, far past what any medium holds included: any base of the catalog or
none, strengths 0 to 20 in every scope, temperatures from -5 to 80 °C, and up to four user lines of any
component of the catalog at 1e-3 to 2000 in any amount unit. Each must give an Evaluation whose figures
are finite (or None in JSON, with a warning that says why) or a MediaplanError; never another exception
(a power of a negative float turned complex, a square root of a negative number) and never a numpy
RuntimeWarning printed on a user's terminal (a log of a zero water activity). The recipes are random test
inputs, not published values; a run of 100,000 such recipes found each of the defects this table now
holds (N6 1975 at 20x, PEG at 37 mol/kg with phosphate, ions past Pitzer's range read as pure water).
"""

from __future__ import annotations

import math
import random
import warnings

import pytest

from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.evaluate import evaluate
from mediaplan.medium.recipe import Recipe

UNITS = ("g/L", "mg/L", "mmol/kg", "mol/kg", "mM", "g/kg", "% w/v")
#: recipes the random search found, kept so that the table always holds them
FOUND = [
    (("n6_1975", 20.0, "all", "25 degC"), ()),
    ((None, 1.0, "salts", "37 degC"), (("dichlorophenoxyacetic_acid", "0.002197 g/L"),
                                        ("disodium_hydrogen_phosphate", "832.4 mmol/kg"), ("peg6000", "37.46 mol/kg"))),
    # ions past Pitzer's range (their own phi < 0): once 0 mOsm/kg and a_w 1.00000, with exit status 0
    ((None, 1.0, "salts", "14.5 degC"), (("calcium_pantothenate", "32.74 mol/kg"), ("silver_nitrate", "4.693 mol/kg"))),
]


def _recipes(catalog, n: int, seed: int):
    rng = random.Random(seed)
    media, comps = [*sorted(catalog.media), None], sorted(catalog.components)
    out = list(FOUND)
    while len(out) < n:
        base = rng.choice(media)
        strength = rng.choice([0.0, 0.01, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, rng.uniform(0, 20)]) if base else 1.0
        head = (base, strength, rng.choice(["salts", "all", "macro"]),
                f"{rng.choice([0, 1, 4, 15, 25, 37, 40, 45, 60, -2, rng.uniform(-5, 80)]):.3g} degC")
        user = tuple((rng.choice(comps), f"{10 ** rng.uniform(-3, 3.3):.4g} {rng.choice(UNITS)}")
                     for _ in range(rng.randint(0, 4)))
        out.append((head, user))
    return out


def _build(head, user) -> Recipe:
    base, strength, scope, temperature = head
    r = Recipe(base=base, strength=strength, strength_scope=scope, temperature=temperature)
    for cid, amount in user:
        r = r.with_amount(cid, amount)
    return r


@pytest.mark.parametrize("seed", [1, 2])
def test_random_recipes_answer_in_finite_figures_or_refuse_in_words(catalog, seed):
    answered = refused = 0
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        for head, user in _recipes(catalog, 150, seed):
            try:
                recipe = _build(head, user)
                ev = evaluate(recipe, catalog)
            except MediaplanError as exc:
                assert str(exc).strip(), (head, user)
                refused += 1
                continue
            d = ev.to_dict()
            for key in ("osmolality_mosmol_per_kg", "water_activity", "osmotic_potential_mpa", "density_kg_per_l"):
                assert isinstance(d[key], float) and math.isfinite(d[key]), (head, user, key)
            if any(c.osmolality_ideal_mosmol_per_kg > 0 for c in ev.components):  # solutes: never read as pure water
                assert d["osmolality_mosmol_per_kg"] > 0 and d["water_activity"] < 1, (head, user)
            if d["freezing_point_depression_k"] is None:  # said in words, first of the warnings
                assert ev.warnings[0].code == "no_freezing_point", (head, user)
            answered += 1
    assert answered > 30 and refused > 10  # the table reaches both sides
