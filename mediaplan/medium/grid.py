"""Sweeps over many variants of one medium, solved chunk by chunk without the whole input in memory.

A sweep is a base row of amounts (every component of a compiled :class:`~mediaplan.medium.model.MediumModel`)
and a few varying components, the :class:`Axis` objects, each with its own list of amounts. The variants
are either the full grid of the axes (every combination, the first axis varying slowest, as
``numpy.meshgrid(..., indexing="ij")`` flattened) or given rows (the axes' lists read side by side, row r
taking the r-th amount of every axis).

:func:`solve_grid` makes the dense amounts of one chunk of rows at a time (at most ``chunk`` rows x the
model's components), solves them with :meth:`MediumModel.solve` and keeps only the figures asked for, as
1-D arrays over all rows: osmolality [osmol/kg], water activity [-] and water potential [Pa] (these two
from the osmolality as :func:`~mediaplan.medium.evaluate.evaluate` takes them). A 10^6-row sweep of a
31-component medium thus never holds the 10^6 x 31 input (0.5 GB for n and b): its memory is one chunk's
solver temporaries plus 8 bytes per row and figure.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass

import numpy as np

from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.model import MIN_FREE_VOLUME, SOLVE_CHUNK, MediumModel, ModelState
from mediaplan.thermo import potential

#: the figures a sweep can return, by name: osmolality [osmol/kg], water activity [-], water potential [Pa]
FIGURES = ("osmolality", "water_activity", "potential")
#: most rows of one sweep (10^8 rows x 3 figures is 2.4 GB of answers)
MAX_ROWS = 100_000_000


@dataclass(frozen=True, eq=False)
class Axis:
    """One varying component of a sweep: its index among the model's components and its amounts, per
    value n [mol per m^3 of medium] and b [mol per kg of water] (as :meth:`MediumModel.amounts_to_arrays`
    gives them; an amount per volume has b = 0 and one per kg of water n = 0). A value replaces the base
    row's amount of the component."""

    index: int
    n: np.ndarray
    b: np.ndarray

    @classmethod
    def per_volume(cls, index: int, n) -> Axis:
        """An axis of amounts per volume of medium, n [mol/m^3]."""
        n = np.asarray(n, dtype=float).ravel()
        return cls(index, n, np.zeros_like(n))

    @classmethod
    def per_water(cls, index: int, b) -> Axis:
        """An axis of amounts per kg of water, b [mol/kg]."""
        b = np.asarray(b, dtype=float).ravel()
        return cls(index, np.zeros_like(b), b)

    def __post_init__(self) -> None:
        n = np.asarray(self.n, dtype=float).ravel()
        b = np.asarray(self.b, dtype=float).ravel()
        if n.shape != b.shape:
            raise MediaplanError(f"an axis has {n.size} amounts per volume but {b.size} per kg of water",
                                 field="sweep", hint="give both lists one value per step (0 where unused)")
        if n.size == 0:
            raise MediaplanError("an axis of the sweep has no amounts", field="sweep", hint="give at least one")
        object.__setattr__(self, "n", n)
        object.__setattr__(self, "b", b)

    def __len__(self) -> int:
        return int(self.n.size)


def grid_rows(axes: Sequence[Axis], *, full: bool = True) -> int:
    """How many variants the axes make: the product of their lengths (full grid) or their common length."""
    if not axes:
        return 1
    if full:
        return math.prod(len(a) for a in axes)
    sizes = {len(a) for a in axes}
    if len(sizes) != 1:
        raise MediaplanError(f"the axes have different lengths ({', '.join(str(len(a)) for a in axes)}) for "
                             "given rows", field="sweep", hint="give every axis one amount per row, or ask for "
                                                              "the full grid")
    return sizes.pop()


def _axis_indices(axes: Sequence[Axis], rows: np.ndarray, full: bool) -> list[np.ndarray]:
    """For each axis, the index of its value on each of ``rows`` (flat row numbers)."""
    if not full:
        return [rows for _ in axes]
    return list(np.unravel_index(rows, tuple(len(a) for a in axes)))


def chunks(n0: np.ndarray, b0: np.ndarray, axes: Sequence[Axis], *, full: bool = True,
           chunk: int = SOLVE_CHUNK) -> Iterator[tuple[int, np.ndarray, np.ndarray]]:
    """(first row, n, b) of each chunk of the sweep: the dense amounts of at most ``chunk`` rows,
    (rows, components) [mol/m^3] and [mol/kg], made when asked for."""
    n0 = np.asarray(n0, dtype=float).ravel()
    b0 = np.asarray(b0, dtype=float).ravel()
    if n0.shape != b0.shape:
        raise MediaplanError("the base row's n and b differ in length", field="sweep")
    for a in axes:
        if not 0 <= a.index < n0.size:
            raise MediaplanError(f"axis index {a.index} is not one of the model's {n0.size} components",
                                 field="sweep")
    if len({a.index for a in axes}) != len(axes):
        raise MediaplanError("two axes vary the same component", field="sweep", hint="give each component once")
    total = grid_rows(axes, full=full)
    if total > MAX_ROWS:
        raise MediaplanError(f"the sweep has {total:,} variants, more than {MAX_ROWS:,}", field="sweep",
                             hint="sweep fewer values, or in parts")
    chunk = max(1, int(chunk))
    for start in range(0, total, chunk):
        stop = min(total, start + chunk)
        rows = np.arange(start, stop)
        n = np.repeat(n0[None, :], stop - start, axis=0)
        b = np.repeat(b0[None, :], stop - start, axis=0)
        for a, idx in zip(axes, _axis_indices(axes, rows, full), strict=True):
            n[:, a.index] = a.n[idx]
            b[:, a.index] = a.b[idx]
        yield start, n, b


def solve_grid(model: MediumModel, n0, b0, axes: Sequence[Axis], *, full: bool = True,
               figures: Sequence[str] = FIGURES, T: float | None = None, chunk: int = SOLVE_CHUNK,
               progress: Callable[[int, int], None] | None = None,
               check: Callable[[int, ModelState], None] | None = None) -> dict[str, np.ndarray]:
    """The figures of every variant of the sweep, as 1-D arrays over its rows (see the module's notes).

    Parameters
    ----------
    model : the compiled components (base and axes alike)
    n0, b0 : the base row [mol per m^3 of medium], [mol per kg of water], one value per component
    axes : the varying components (:class:`Axis`)
    full : the full grid of the axes (True) or given rows (False: the axes read side by side)
    figures : names from :data:`FIGURES`
    T : temperature [K] (the model's own by default)
    chunk : rows solved at once (:data:`~mediaplan.medium.model.SOLVE_CHUNK` by default)
    progress : called after each chunk with (rows done, rows in all)
    check : called with (first row, state) of each chunk once solved, before its figures are kept (it may
        raise: :func:`sweep_recipe` refuses a row no medium can hold there)

    Returns
    -------
    dict figure name -> array of one value per row: ``osmolality`` [osmol/kg], ``water_activity`` [-],
    ``potential`` [Pa]; NaN in every figure of a row the models have no answer for (past every model's
    range: no osmolality, or one whose water activity underflows to zero), where ``evaluate`` refuses

    Raises
    ------
    MediaplanError naming the first row (and the amounts of its axes) where the solutes leave less than
    :data:`~mediaplan.medium.model.MIN_FREE_VOLUME` of the volume.
    """
    unknown = [f for f in figures if f not in FIGURES]
    if unknown or not figures:
        raise MediaplanError(f"unknown figure {unknown[0]!r}" if unknown else "no figure asked for",
                             field="sweep.figures", hint=f"choose from {', '.join(FIGURES)}")
    T = model.T if T is None else float(T)
    total = grid_rows(axes, full=full)
    out = {f: np.empty(total) for f in figures}
    for start, n, b in chunks(n0, b0, axes, full=full, chunk=chunk):
        try:
            st = model.solve(n, b, T=T)
        except MediaplanError as exc:
            raise _where(exc, model, axes, start, n, b) from None
        if check is not None:
            check(start, st)
        y = st.mix.osmolality
        stop = start + y.shape[0]
        with np.errstate(under="ignore", divide="ignore", invalid="ignore"):
            aw = potential.water_activity(y)
            answered = aw > 0  # no answer: NaN osmolality, or a water activity that underflows (no logarithm)
            if not answered.all():
                y = np.where(answered, y, np.nan)
                aw = np.where(answered, aw, np.nan)
            if "osmolality" in out:
                out["osmolality"][start:stop] = y
            if "water_activity" in out:
                out["water_activity"][start:stop] = aw
            if "potential" in out:
                out["potential"][start:stop] = potential.potential_from_aw(aw, T)
        if progress is not None:
            progress(stop, total)
    return out


def _where(exc: MediaplanError, model: MediumModel, axes: Sequence[Axis], start: int, n: np.ndarray,
           b: np.ndarray) -> MediaplanError:
    """The solver's refusal, naming the first row of the chunk without water and its axes' amounts."""
    bad = np.flatnonzero(model.free_volume(n) < MIN_FREE_VOLUME)
    if bad.size == 0:
        return exc
    r = int(bad[0])

    def amount(i: int) -> str:
        return f"{n[r, i]:.6g} mol/m^3" if n[r, i] or not b[r, i] else f"{b[r, i]:.6g} mol/kg"

    said = ", ".join(f"{model.components[a.index].id} {amount(a.index)}" for a in axes)
    exc.message = f"{exc.message} (row {start + r + 1} of the sweep{': ' + said if said else ''})"
    return exc


# ---- a recipe and its varying components ----------------------------------------------------------------
#: the figures of :func:`sweep_recipe`, by name, as :class:`~mediaplan.medium.evaluate.Evaluation` names them
RECIPE_FIGURES = {"osmolality_mosmol_per_kg": "osmolality", "water_activity": "water_activity",
                  "osmotic_potential_mpa": "potential"}
#: from the solver's SI figure to the named one, as evaluate() does it (times 1000, or divided by 10^6)
_TO_NAMED = {"osmolality_mosmol_per_kg": lambda v: v * 1000.0, "water_activity": lambda v: v,
             "osmotic_potential_mpa": lambda v: v / 1e6}


#: the amount a varied component's line is placed with (any amount not zero: its value is never used)
_PLACEHOLDER = "1 mol/L"


def sweep_recipe(recipe, catalog, amounts, *, full: bool = True, figures: Sequence[str] = tuple(RECIPE_FIGURES),
                 chunk: int = SOLVE_CHUNK, progress: Callable[[int, int], None] | None = None) -> dict[str, np.ndarray]:
    """The figures of a recipe with some components varied: a full grid of their amounts, or given rows.

    Parameters
    ----------
    recipe : the medium (a :class:`~mediaplan.medium.recipe.Recipe`; its temperature is the sweep's)
    catalog : the component catalog
    amounts : component name or id -> its amounts, each an Amount or text (``"20 g/L"``, ``"0.1 mol/kg"``);
        an amount replaces the recipe's own of that component (0 included, as a row without it)
    full : every combination of the components' amounts (the first varying slowest), or False: given rows,
        the lists read side by side (all of one length)
    figures : names from ``osmolality_mosmol_per_kg`` [mOsm/kg], ``water_activity`` [-] and
        ``osmotic_potential_mpa`` [MPa]
    chunk, progress : see :func:`solve_grid`

    Returns
    -------
    dict figure name -> one value per row (1-D array), each as :func:`~mediaplan.medium.evaluate.evaluate`
    gives it for the recipe with that row's amounts (to rounding, 1e-12)

    Raises
    ------
    AmountError for an amount that cannot be read, or when the sweep's most concentrated corner (every
    varied component at its largest amount) holds more than a medium can (as ``evaluate`` refuses it);
    MediaplanError for a component the catalog does not know or a row without water.
    """
    from mediaplan.medium.model import compiled
    from mediaplan.medium.recipe import plausible_limits
    from mediaplan.medium.units import Amount, parse_amount

    unknown = [f for f in figures if f not in RECIPE_FIGURES]
    if unknown or not figures:
        raise MediaplanError(f"unknown figure {unknown[0]!r}" if unknown else "no figure asked for",
                             field="sweep.figures", hint=f"choose from {', '.join(RECIPE_FIGURES)}")
    if not amounts:
        raise MediaplanError("no component to vary", field="sweep", hint='give e.g. {"mannitol": ["0 g/L", "20 g/L"]}')
    varied: list[tuple] = []  # (component, [Amount])
    for name, values in amounts.items():
        comp = catalog.resolve(name).component
        if any(c.id == comp.id for c, _ in varied):
            raise MediaplanError(f"{comp.id} is given twice", field=f"sweep.{comp.id}", hint="give each component once")
        if isinstance(values, (str, Amount)):
            values = [values]
        parsed = [v if isinstance(v, Amount) else parse_amount(v, field=f"sweep.{comp.id}") for v in values]
        if not parsed:
            raise MediaplanError(f"no amounts of {comp.id}", field=f"sweep.{comp.id}", hint="give at least one")
        varied.append((comp, parsed))
    # the lines as evaluate() makes them for any row: each varied component given an amount (not zero, so its
    # line stands where a row's amount puts it: over its own line, or replacing a base line of another form
    # of its substance, else after the others), then taken as zero in the fixed part
    zero = parse_amount("0 mol/L")
    placed = recipe
    for comp, _ in varied:
        placed = placed.with_amount(comp.id, _PLACEHOLDER)
    lines = placed.lines(catalog)
    comps = [ln.component for ln in lines]
    varied_ids = {comp.id for comp, _ in varied}
    base_amounts = [zero if ln.component.id in varied_ids else ln.amount for ln in lines]
    model = compiled(catalog, comps, recipe.temperature_k)
    n0, b0 = model.amounts_to_arrays(base_amounts)
    ids = [c.id for c in comps]
    axes = []
    corner = recipe
    for comp, parsed in varied:
        i = ids.index(comp.id)
        n = np.empty(len(parsed))
        b = np.empty(len(parsed))
        for k, a in enumerate(parsed):  # each amount converted as the recipe's own would be
            nk, bk = model.amounts_to_arrays([a if j == i else zero for j in range(len(comps))])
            n[k], b[k] = nk[i], bk[i]
        axes.append(Axis(i, n, b))
        largest = int(np.argmax(n * model.v[i] + b * model.v[i] * model.rho_w))  # the most volume of solute
        corner = corner.with_amount(comp.id, parsed[largest])
    corner.check_plausible(catalog)
    limits = plausible_limits(lines, catalog.pitzer)
    # per substance: which columns hold it (a 0/1 matrix) and its limit, a hair lowered: rows at the edge are
    # looked at one by one with evaluate()'s own check, which decides
    columns = np.zeros((len(comps), len(limits)))
    for j, (idx, _) in enumerate(limits):
        columns[idx, j] = 1.0
    edge = np.array([limit for _, limit in limits]) * (1.0 - 1e-9)

    def check(start: int, st) -> None:
        """Each row as evaluate() would check it: a row with a substance past its limit (or a molality that
        is not a finite number) is refused in the words evaluate() gives that row."""
        m = st.molality
        with np.errstate(invalid="ignore"):
            over = np.any(m @ columns > edge, axis=1)
            if not (np.isfinite(m).all() and (m >= 0).all()):
                over |= ~np.all(np.isfinite(m) & (m >= 0), axis=1)
        for r in np.flatnonzero(over).tolist():
            row = recipe
            for (comp, parsed), k in zip(varied, _axis_indices(axes, np.array([start + r]), full), strict=True):
                row = row.with_amount(comp.id, parsed[int(k[0])])
            row.check_plausible(catalog)  # raises, naming the line (a row at the very edge may pass: it stands)

    got = solve_grid(model, n0, b0, axes, full=full, figures=tuple({RECIPE_FIGURES[f] for f in figures}),
                     chunk=chunk, progress=progress, check=check)
    return {f: _TO_NAMED[f](got[RECIPE_FIGURES[f]]) for f in figures}
