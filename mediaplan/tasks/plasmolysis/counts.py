"""Observed plasmolysis counts (plasmolysed of total per level) and the checks every source of counts shares."""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any

from mediaplan.medium.errors import FitError
from mediaplan.tasks.records import TableView

if TYPE_CHECKING:  # numpy is imported where counts are made, not when a plan's [series] table is read
    import numpy as np

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
        # distinct levels (NaNs as one, as numpy.unique counts them; unique itself would import numpy.ma)
        import numpy as np

        x = np.asarray(self.water_potential_mpa, dtype=float).ravel()
        nan = np.isnan(x)
        v = np.sort(x[~nan])
        return int(v.size > 0) + int(np.count_nonzero(v[1:] != v[:-1])) + int(nan.any())


@dataclass(frozen=True, eq=False)
class LevelRecord(TableView):
    """One level of a plan's series as saved, with the counts entered for it (None = not in the table).

    level : number of the level (1 = least negative)
    water_potential_mpa : water potential of the solution [MPa]
    osmolality_mosmol_per_kg : its osmolality [mOsm/kg]
    molality_mol_per_kg : osmoticum per kg water [mol/kg]
    grams_per_litre : osmoticum per litre of solution [g/L]
    grams : osmoticum to weigh for the batch volume [g]
    stock_ml, diluent_ml : volumes of stock and diluent for the batch [mL]
    plasmolysed, total : counts, one per counted sample (replicate); ``()`` = none entered yet
    extra : keys this version does not know, as (key, value) pairs, kept as they were
    """

    level: int | None = None
    water_potential_mpa: float | None = None
    osmolality_mosmol_per_kg: float | None = None
    molality_mol_per_kg: float | None = None
    grams_per_litre: float | None = None
    grams: float | None = None
    stock_ml: float | None = None
    diluent_ml: float | None = None
    plasmolysed: tuple[int, ...] | None = None
    total: tuple[int, ...] | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    @property
    def counts(self) -> list[tuple[int, int]]:
        """(plasmolysed, total) per counted sample."""
        return list(zip(self.plasmolysed or (), self.total or (), strict=False))

    def with_counts(self, counts: Sequence[tuple[int, int]]) -> LevelRecord:
        """The level with these (plasmolysed, total) counts instead of its own (empty clears them)."""
        return replace(self, plasmolysed=tuple(k for k, _ in counts), total=tuple(n for _, n in counts))


@dataclass(frozen=True, eq=False)
class SeriesRecord(TableView):
    """A plan's ``[series]``: the design as saved plus the counts entered per level (None = not in the table).

    osmoticum : catalog id of the osmoticum
    spacing : how the levels were chosen, in words
    volume : batch volume of each level, as written (``"50 mL"``)
    temperature : temperature of the series, as written (``"25 degC"``)
    background_potential_mpa : water potential of the background alone [MPa]
    stock : the stock solution's amount, as written (``"1 mol/kg"``)
    levels : the levels, least negative first
    extra : keys this version does not know, as (key, value) pairs, kept as they were

    Read and written by :mod:`mediaplan.files.plan_tables` (which also makes one from a
    :class:`~mediaplan.tasks.plasmolysis.design.SeriesDesign`).
    """

    osmoticum: str | None = None
    spacing: str | None = None
    volume: str | None = None
    temperature: str | None = None
    background_potential_mpa: float | None = None
    stock: str | None = None
    levels: tuple[LevelRecord, ...] | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    def with_counts(self, index: int, counts: Sequence[tuple[int, int]]) -> SeriesRecord:
        """The series with the counts of level ``index`` (0-based) replaced."""
        levels = list(self.levels or ())
        levels[index] = levels[index].with_counts(counts)
        return replace(self, levels=tuple(levels))


def counts_from_series(series: SeriesRecord, *, file: str | None = None,
                       temperature_k: float | None = None) -> Counts:
    """Counts from a plan's series (the ``plasmolysed``/``total`` counts of each level).

    file : the plan the series came from (named in errors)
    temperature_k : temperature of the series [K] (kept with the counts)

    Raises FitError naming the level and count that cannot be used.
    """
    levels = series.levels
    if not levels:
        raise FitError("the [series] table has no levels", file=file, field="series.levels",
                       hint="design a series and save it in the plan first")
    xs, ys, ns = [], [], []
    skipped = 0
    for i, lv in enumerate(levels, start=1):
        where = f"series.levels[{i}]"
        x = lv.water_potential_mpa
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x) or x > 0:
            raise FitError(f"{POTENTIAL_COLUMN} must be a negative number", file=file,
                           field=f"{where}.{POTENTIAL_COLUMN}")
        pl, tot = lv.plasmolysed or (), lv.total or ()
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
    import numpy as np

    notes = [f"{skipped} level(s) without counts skipped"] if skipped else []
    counts = Counts(np.array(xs), np.array(ys), np.array(ns), file or "plan", temperature_k, notes)
    check_counts(counts, file)
    return counts


def counts_from_rows(rows: Iterable[Sequence[float]], *, temperature_k: float | None = None) -> Counts:
    """Counts from rows of (water potential [MPa], plasmolysed, total), one row per counted sample.

    The same checks as a plan's series (each row is one level of one count).
    """
    levels = tuple(LevelRecord(water_potential_mpa=x, plasmolysed=(y,), total=(n,)) for x, y, n in rows)
    return counts_from_series(SeriesRecord(levels=levels), temperature_k=temperature_k)


def check_counts(c: Counts, file: str | None) -> None:
    if c.n_levels < 3:
        raise FitError(f"{c.n_levels} counted level{'s' if c.n_levels != 1 else ''}: a fit needs at least 3",
                       file=file, hint="count cells at 3 or more levels (6-10 is usual)")
