"""Equivalence of the batched solver paths with the scalar ones they replaced: a table of targets x media x
osmotica x strengths x temperatures solved by Brent's method on the one-row ZSR residual (the method of
before) and by the vectorised finder from the closed-form root (now); the range of an addition (both ends
in one batch) against one solve per end; a 60-level series (and its stock mixtures) against the forward
search of before.

Tolerances: the solver's root to 1e-12 of itself (both methods' bounds are 1e-13 and below), the amount text
of the recipe identical; the series' amounts to 1e-9 of themselves (the forward search of before stops
within 1e-10 of its upper bracket, a few times the largest level)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from mediaplan.medium import roots
from mediaplan.medium.errors import InfeasibleError
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks import solve as solver
from mediaplan.tasks.plasmolysis import design as designer
from mediaplan.tasks.plasmolysis import design_series, potentials_between
from mediaplan.tasks.solve import TargetSpec, parse_solve_target, solve_target, target_osmolality
from mediaplan.tasks.uncertainty import budget, solve_ranges

MEDIA = {
    "water": Recipe(),
    "ms_sucrose": Recipe(base="ms1962").with_amount("sucrose", "30 g/L"),
    "ms_half": Recipe(base="ms1962", strength=0.5).with_amount("sucrose", "20 g/L"),
    "ms_all_half": Recipe(base="ms1962", strength=0.5, strength_scope="all"),
    "b5_15C": Recipe(base="b5_1968", temperature="15 degC"),
    "kno3_4C": Recipe(temperature="4 degC").with_amount("KNO3", "2.5 g/L").with_amount("glucose", "10 g/L"),
}
#: targets across the range of culture and plasmolysis media (common practice); -1.4 MPa lies beyond
#: mannitol's solubility at 4 °C
TARGETS = ["-1.4 MPa", "500 mOsm/kg"]


def _reference_x(recipe: Recipe, catalog, target: str, osmoticum: str) -> float | None:
    """The addition x [mol/m^3] by the method of before: Brent's method on the one-row residual
    (Sweep.residual_at), bracketed by the solubility limit (Sweep.limit); None when out of reach."""
    s = solver._setup(recipe, catalog, solver._resolve_osmotica(catalog, [osmoticum]), None, None)
    y = target_osmolality(parse_solve_target(target), recipe.temperature_k, None)
    f = s.path.sweep.residual_at(y)
    T_sol, _ = solver._solubility_temperature(recipe)
    limit = s.path.sweep.limit([c.soluble_at(T_sol)[0] for c in s.free])
    f0, f_hi = f(0.0), f(limit.x)
    if f0 >= 0 or f_hi < 0:
        return None
    return roots.increasing_root(f, 0.0, limit.x, f_lo=f0, f_hi=f_hi)


@pytest.mark.parametrize("medium", list(MEDIA))
@pytest.mark.parametrize("osmoticum", ["mannitol", "sucrose", "peg8000", "KCl"])
def test_solve_table_equals_the_scalar_path(catalog, medium, osmoticum):
    recipe = MEDIA[medium]
    for target in TARGETS:
        ref = _reference_x(recipe, catalog, target, osmoticum)
        s = solver._setup(recipe, catalog, solver._resolve_osmotica(catalog, [osmoticum]), None, None)
        if ref is None:
            y = target_osmolality(parse_solve_target(target), recipe.temperature_k, None)
            if s.path.sweep.residual_at(y)(0.0) >= 0:
                continue  # the medium is already past the target: no root to compare
            with pytest.raises(InfeasibleError):
                solve_target(recipe, catalog, target, [osmoticum])
            continue
        y = target_osmolality(parse_solve_target(target), recipe.temperature_k, None)
        f = solver._residual(s.path, catalog, y, False)
        T_sol, _ = solver._solubility_temperature(recipe)
        x = solver._root_below_solubility(s.path.sweep, f.rows, f(0.0), [c.soluble_at(T_sol)[0] for c in s.free])
        assert x == pytest.approx(ref, rel=1e-12), (medium, osmoticum, target)
        sol = solve_target(recipe, catalog, target, [osmoticum])
        comp = s.free[0].id
        assert sol.recipe.amount_of(comp).text == s.path.build(ref, True).amount_of(comp).text


def _close(a, b, path=""):
    """Two JSON-like trees equal: texts and structure exactly, numbers to 1e-12 (relative)."""
    if isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for k in a:
            _close(a[k], b[k], f"{path}/{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (u, v) in enumerate(zip(a, b, strict=True)):
            _close(u, v, f"{path}[{i}]")
    elif isinstance(a, float) and isinstance(b, float) and math.isfinite(a):
        assert b == pytest.approx(a, rel=1e-12, abs=1e-300), path
    else:
        assert a == b, path


@pytest.mark.parametrize(("medium", "osmotica", "target", "kw"), [
    ("ms_sucrose", ["mannitol"], "-1.0 MPa", {}),
    ("ms_half", ["KCl"], "-0.8 MPa", {}),
    ("b5_15C", ["peg8000"], "isotonic+10%", {"cell_reference_mosmol": 450.0}),  # a cell sap of 450 mOsm/kg (from memory)
    ("ms_sucrose", ["sucrose", "mannitol"], "-1.2 MPa", {"hold": {"sucrose": "20 g/L"}}),
    ("water", ["sorbitol", "mannitol"], "-0.9 MPa", {"ratio": [1, 1]}),
    ("kno3_4C", ["KCl"], "-1.8 MPa", {}),  # the ions' proportions change along the sweep
])
def test_whole_answer_and_its_range_equal_the_scalar_path(catalog, monkeypatch, medium, osmotica, target, kw):
    """The solution (JSON) and the range of its addition, now and with the root of before (Brent's method
    on the scalar residual, which solve_target still takes when the batched root is not found)."""
    recipe = MEDIA[medium]
    now = solve_target(recipe, catalog, target, osmotica, **kw)
    ranges_now = [r.to_dict() for r in solve_ranges(now, catalog)]
    with monkeypatch.context() as m:
        m.setattr(solver, "_root_below_solubility", lambda *a: None)
        m.setattr(solver, "additions_at", lambda *a, **k: [None] * len(a[3]))  # each end solved alone
        before = solve_target(recipe, catalog, target, osmotica, **kw)
        ranges_before = [r.to_dict() for r in solve_ranges(before, catalog)]
    assert now.status == before.status == "added"
    _close(before.to_dict(), now.to_dict())
    assert ranges_now and ranges_now[0]["interval_g_per_l"][0] is not None
    _close(ranges_before, ranges_now)


def test_range_ends_beyond_solubility_are_solved_alone(catalog):
    """A target close to mannitol's solubility at 4 °C: the upper end of the range lies beyond it, which the
    batched path leaves to solve_target (None, with the note of before)."""
    recipe = MEDIA["kno3_4C"]
    sol = solve_target(recipe, catalog, "-1.3 MPa", ["mannitol"])  # just below the cold limit (-1.37 MPa)
    b = budget(sol.recipe, catalog, evaluation=sol.evaluation)
    ends = [sol.target_osmolality_mosmol_per_kg / 1000.0 / r for r in b.relative_osmolality]
    got = solver.additions_at(recipe, catalog, ["mannitol"], ends)
    for y, g in zip(ends, got, strict=True):
        try:
            alone = solve_target(recipe, catalog, TargetSpec("osmolality", y, text=f"{y * 1000:.1f} mOsm/kg"),
                                 ["mannitol"])
        except InfeasibleError:
            assert g is None
            continue
        assert g is not None and g["mannitol"] == pytest.approx(alone.additions[0].added_g_per_l, rel=1e-12)


# ---- a series of 60 levels ----------------------------------------------------------------------------
SERIES = [
    (Recipe(volume="50 mL"), "mannitol", "1 mol/kg", "in_background"),
    (Recipe(volume="50 mL", base="ms1962", strength=0.5), "mannitol", "1 mol/kg", "in_background"),
    (Recipe(volume="50 mL", base="ms1962", strength=0.5), "mannitol", "1 mol/kg", "weighed_together"),
    (Recipe(volume="50 mL", base="ms1962", strength=0.5), "KCl", "1.5 mol/kg", "in_background"),
    (Recipe(volume="100 mL", temperature="20 degC").with_amount("KCl", "10 mM"), "peg8000", None, "in_background"),
]


@pytest.mark.parametrize("case", range(len(SERIES)))
def test_sixty_levels_equal_the_forward_search(catalog, monkeypatch, case):
    background, osmoticum, stock, preparation = SERIES[case]
    psi = potentials_between(-0.4e6, -1.8e6, 60)  # Pa: a usual plasmolysis span (common practice)
    now = design_series(background, osmoticum, psi, catalog=catalog, stock=stock, preparation=preparation)
    with monkeypatch.context() as m:
        m.setattr(designer, "_FORWARD_CHECK", -1.0)  # no batched answer passes: the forward search of before
        before = design_series(background, osmoticum, psi, catalog=catalog, stock=stock, preparation=preparation)
    for a, b in zip(before.levels, now.levels, strict=True):
        for name in ("grams_per_litre", "molality_mol_per_kg", "osmolality_mosmol_per_kg", "density_kg_per_l"):
            assert getattr(b, name) == pytest.approx(getattr(a, name), rel=1e-9), name
        if stock is not None:
            assert b.stock_ml == pytest.approx(a.stock_ml, rel=1e-9)
            assert b.diluent_ml == pytest.approx(a.diluent_ml, rel=1e-9)
    # each level at its own potential, closer than the forward search's tolerance
    got = np.array([lv.water_potential_mpa for lv in now.levels]) * 1e6
    np.testing.assert_allclose(got, psi, rtol=1e-10)
    assert before.warnings == now.warnings
    assert before.plan_table() == now.plan_table()
