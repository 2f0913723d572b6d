"""A solve and a series design that carry their uncertainty (the command line and the Python API print the
same): kept apart from :mod:`mediaplan.tasks.uncertainty` so that a budget alone (``calc``) does not import
the solver and the series designer."""

from __future__ import annotations

from dataclasses import dataclass, field, fields

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.evaluate import finite
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.plasmolysis.design import SeriesDesign
from mediaplan.tasks.solve import Solution
from mediaplan.tasks.uncertainty import (
    Budget,
    Tolerances,
    budget,
    level_budgets,
    level_potential_intervals,
    solve_ranges,
)


@dataclass
class SolutionWithRanges(Solution):
    """A :class:`~mediaplan.tasks.solve.Solution` with the budget of its result and the range of each
    addition: ``to_dict()`` adds the result's interval keys, ``addition_ranges`` and ``uncertainty``."""

    budget: Budget | None = None
    ranges: list = field(default_factory=list)

    def to_dict(self) -> dict:
        d = super().to_dict()
        if self.budget is not None:
            bd = self.budget.to_dict()
            d["result"].update({k: v for k, v in bd.items() if k != "uncertainty"})
            d["addition_ranges"] = [r.to_dict() for r in self.ranges]
            d["uncertainty"] = bd["uncertainty"]
        return d


def with_ranges(solution, catalog: Catalog, *, tolerances: Tolerances | None = None):
    """The solution with the budget of its result and the range of each addition (:func:`solve_ranges`)."""
    tolerances = tolerances or Tolerances()
    b = budget(solution.recipe, catalog, tolerances=tolerances, evaluation=solution.evaluation)
    ranges = solve_ranges(solution, catalog, tolerances=tolerances, budget_of_result=b)
    return SolutionWithRanges(**{f.name: getattr(solution, f.name) for f in fields(type(solution)) if f.init
                  and f.name not in ("budget", "ranges")}, budget=b, ranges=ranges)


@dataclass
class SeriesWithIntervals(SeriesDesign):
    """A :class:`~mediaplan.tasks.plasmolysis.design.SeriesDesign` with each level's water potential as a
    95 % interval: ``to_dict()`` adds ``water_potential_interval_mpa`` to each level and ``uncertainty``."""

    level_intervals: list = field(default_factory=list)

    def to_dict(self) -> dict:
        d = super().to_dict()
        d.pop("level_intervals", None)
        for lv, iv in zip(d["levels"], self.level_intervals, strict=True):
            lv["water_potential_interval_mpa"] = iv.to_list() if iv is not None else None
        d["uncertainty"] = {"level": 0.95, "method": "each level's budget as made by weight: linearised, "
                                                     "sources independent, value ± 1.96 sd"}
        return finite(d)


def with_level_intervals(design, background: Recipe, catalog: Catalog, *, tolerances: Tolerances | None = None):
    """The design with each level's water potential interval (:func:`level_potential_intervals`)."""
    tolerances = tolerances or Tolerances()
    ivs = level_potential_intervals(design, level_budgets(design, background, catalog, tolerances=tolerances))
    return SeriesWithIntervals(**{f.name: getattr(design, f.name) for f in fields(type(design)) if f.init
                  and f.name != "level_intervals"}, level_intervals=ivs)


__all__ = ["SolutionWithRanges", "SeriesWithIntervals", "with_ranges", "with_level_intervals"]
