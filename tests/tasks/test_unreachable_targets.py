"""Targets past what a medium's salts can reach in the Pitzer model: a one-line refusal, never a crash.

At 0 °C the Pitzer osmotic coefficient of a plant medium's salts falls so fast with molality that their
osmolality alone peaks near 7-8 osmol/kg; a ZSR target beyond that has no binary solution of the salts to
refer to. The batched solver's secant for the salts' total once stepped to a negative molality there and
crashed with a math domain error (found by differential testing against the release before it). The class:
every osmoticum, background strength, cold temperature and far target either answers or refuses with a
MediaplanError in one line; targets media use are unaffected.
"""

from __future__ import annotations

import itertools

import pytest

import mediaplan as mp
from mediaplan.medium.errors import InfeasibleError
from mediaplan.medium.recipe import Recipe


def _cold_ms(strength: float, celsius: float) -> Recipe:
    return Recipe(base="ms1962", strength=strength, temperature=f"{celsius:g} degC")


@pytest.mark.parametrize("osmotica, ratio", [("potassium_chloride", None), ("sodium_chloride", None),
                                             (["sucrose", "potassium_chloride"], "1:1"), ("mannitol", None),
                                             ("sucrose", None)])
@pytest.mark.parametrize("strength, celsius, target", list(itertools.product(
    (1.0, 0.5), (0.0, 4.0), ("-19 MPa", "-20 MPa", "9000 mOsm/kg"))))
def test_far_targets_answer_or_refuse_in_one_line(catalog, osmotica, ratio, strength, celsius, target):
    try:
        sol = mp.solve_target(_cold_ms(strength, celsius), target, osmotica, ratio=ratio, catalog=catalog)
    except InfeasibleError as exc:  # out of reach (solubility, the model's range): said in one line
        assert "\n" not in str(exc) and len(str(exc)) < 400
        return
    assert sol.status  # an answer: re-evaluated by the solver with the full model
    assert sol.evaluation is not None


def test_the_reported_cases_are_refused_with_the_reason(catalog):
    ms0 = _cold_ms(1.0, 0.0)
    for target, osmotica, ratio in (("9000 mOsm/kg", "potassium_chloride", None),
                                    ("-19 MPa", ["sucrose", "potassium_chloride"], "1:1")):
        with pytest.raises(InfeasibleError, match="beyond what the model can compute with this medium's salts"):
            mp.solve_target(ms0, target, osmotica, ratio=ratio, catalog=catalog)
    with pytest.raises(InfeasibleError, match="beyond what the model can compute|cannot be made"):
        mp.design_series("potassium_chloride", first="-1 MPa", last="-19 MPa", background=ms0, catalog=catalog)


@pytest.mark.parametrize("target", ["-1 MPa", "-2.5 MPa", "1200 mOsm/kg"])
def test_targets_media_use_still_solve_at_0_degC(catalog, target):
    sol = mp.solve_target(_cold_ms(1.0, 0.0), target, "potassium_chloride", catalog=catalog)
    assert sol.status == "added", sol.message
