"""Observed plasmolysis counts (plasmolysed of total per level) and the checks every source of counts shares."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from mediaplan.medium.errors import FitError

#: name of the level column and of the level key in a plan's series table
POTENTIAL_COLUMN = "water_potential_mpa"


@dataclass
class Counts:
    """Observed counts, one row per counted sample (replicates are separate rows)."""

    water_potential_mpa: np.ndarray
    plasmolysed: np.ndarray
    total: np.ndarray
    source: str
    temperature_k: float | None = None
    notes: list[str] = field(default_factory=list)

    @property
    def n_levels(self) -> int:
        return int(np.unique(self.water_potential_mpa).size)


def counts_from_series(series: dict, *, file: str | None = None, temperature_k: float | None = None) -> Counts:
    """Counts from a plan's ``[series]`` table (``plasmolysed``/``total`` lists per level)."""
    levels = series.get("levels")
    if not isinstance(levels, list) or not levels:
        raise FitError("the [series] table has no levels", file=file, field="series.levels",
                       hint="design a series and save it in the plan first")
    xs, ys, ns = [], [], []
    skipped = 0
    for i, lv in enumerate(levels, start=1):
        where = f"series.levels[{i}]"
        if not isinstance(lv, dict):
            raise FitError("a level must be a table", file=file, field=where)
        x = lv.get(POTENTIAL_COLUMN)
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x) or x > 0:
            raise FitError(f"{POTENTIAL_COLUMN} must be a negative number", file=file,
                           field=f"{where}.{POTENTIAL_COLUMN}")
        pl, tot = lv.get("plasmolysed", []), lv.get("total", [])
        pl = pl if isinstance(pl, list) else [pl]
        tot = tot if isinstance(tot, list) else [tot]
        if len(pl) != len(tot):
            raise FitError(f"{len(pl)} plasmolysed counts but {len(tot)} totals", file=file, field=where,
                           hint="one plasmolysed count and one total per replicate")
        if not pl:
            skipped += 1
        for r, (y, n) in enumerate(zip(pl, tot, strict=True), start=1):
            for name, v in (("plasmolysed", y), ("total", n)):
                if isinstance(v, bool) or not isinstance(v, (int, float)) or v < 0 or v != int(v):
                    raise FitError(f"{name} {v!r} is not a whole number of cells", file=file,
                                   field=f"{where}.{name}[{r}]", hint="counts are whole numbers, 0 or more")
            if n == 0:
                raise FitError("total is 0: no cells counted", file=file, field=f"{where}.total[{r}]")
            if y > n:
                raise FitError(f"plasmolysed ({y}) is more than total ({n})", file=file,
                               field=f"{where}.plasmolysed[{r}]")
            xs.append(float(x))
            ys.append(float(y))
            ns.append(float(n))
    notes = [f"{skipped} level(s) without counts skipped"] if skipped else []
    counts = Counts(np.array(xs), np.array(ys), np.array(ns), file or "plan", temperature_k, notes)
    check_counts(counts, file)
    return counts


def check_counts(c: Counts, file: str | None) -> None:
    if c.n_levels < 3:
        raise FitError(f"{c.n_levels} counted level{'s' if c.n_levels != 1 else ''}: a fit needs at least 3",
                       file=file, hint="count cells at 3 or more levels (6-10 is usual)")
