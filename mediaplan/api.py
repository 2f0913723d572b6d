"""The Python API for notebooks and scripts (``import mediaplan as mp``).

A layer above the views and below the front ends (terminal app, command line). Each function takes
amounts, potentials and volumes as the text a user would type (``"30 g/L"``, ``"-0.8 MPa"``,
``"450 mOsm/kg"``, ``"50 mL"``) and returns the result object the command line prints; every result has
attributes with their unit in the name (``osmotic_potential_mpa``, ``grams_per_litre``) and ``to_dict()``,
which gives the numbers of the matching command's JSON.

Without ``catalog=`` a function uses the catalog the command line uses: the bundled one, then the
facility folders named in ``MEDIAPLAN_CATALOG``, then the user's own folder (``mediaplan locate``),
read once per process. Pass a :class:`Catalog` from :func:`load_catalog` to choose another.

Errors a user can fix raise :class:`MediaplanError` (one line: file, line, field, what to do).

Example::

    import mediaplan as mp

    medium = mp.Recipe(base="ms1962").with_amount("sucrose", "30 g/L")
    mp.evaluate(medium).osmotic_potential_mpa
    mp.solve_target(medium, "-0.8 MPa", "mannitol").additions[0].added_g_per_l
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path

from mediaplan.files.planfile import Plan
from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.evaluate import Evaluation
from mediaplan.medium.recipe import Recipe
from mediaplan.tasks.plasmolysis import Counts, PlasmolysisFit, SeriesDesign
from mediaplan.tasks.prep import PrepSheet
from mediaplan.tasks.solve import Solution

__all__ = [
    "Catalog", "Evaluation", "MediaplanError", "Plan", "PlasmolysisFit", "PrepSheet", "Recipe", "SeriesDesign",
    "Solution", "budget", "check_reading", "design_series", "evaluate", "fit_counts", "load_catalog", "load_plan",
    "prep_sheet", "solve_target", "sweep",
]

#: volume of each level of a series designed without a plan (the command line's default too)
SERIES_VOLUME = "50 mL"

_started = False


def _start() -> None:
    """Once per process: let the unit registry keep its parsed definitions in the user's cache folder, as
    the command line does (``MEDIAPLAN_CACHE_DIR`` chooses another folder)."""
    global _started
    if not _started:
        from mediaplan.files.paths import use_unit_cache

        use_unit_cache()
        _started = True


def _catalog(catalog: Catalog | None) -> Catalog:
    _start()
    if catalog is None:
        from mediaplan.files.catalog import get_catalog

        return get_catalog()
    if not isinstance(catalog, Catalog):
        raise TypeError(f"catalog= takes a Catalog, not {type(catalog).__name__} "
                        "(read a folder with mediaplan.load_catalog(folder))")
    return catalog


def _plan_and_recipe(medium: Recipe | Plan) -> tuple[Plan | None, Recipe]:
    if isinstance(medium, Plan):
        return medium, medium.recipe
    if isinstance(medium, Recipe):
        return None, medium
    raise TypeError(f"expected a Recipe or a Plan, not {type(medium).__name__}")


# ---- catalog and plans ---------------------------------------------------------------------------------
def load_catalog(*folders: str | os.PathLike, environment: bool = True) -> Catalog:
    """Read and check the component catalog.

    Parameters
    ----------
    folders : facility catalog folders merged over the others in the order given (an entry whose id
        matches an earlier one replaces it and is listed in ``Catalog.shadowed``), as ``--catalog DIR``
    environment : also merge the folders named in ``MEDIAPLAN_CATALOG`` and the user's own folder, as the
        command line does (between the bundled catalog and ``folders``); False for the bundled catalog and
        ``folders`` alone, whatever the machine

    Returns
    -------
    Catalog : ``components`` (id -> Component), ``media`` (id -> published formulation), ``search(text)``,
        ``resolve(name)`` (id, formula, alias or name -> component)
    """
    from mediaplan.files import catalog as catalog_files

    _start()
    extra = [Path(f) for f in folders]
    if environment:
        return catalog_files.load_catalog(extra=extra)
    return catalog_files.load_catalog([catalog_files.bundled_folder(), *extra])


def load_plan(path: str | os.PathLike, *, catalog: Catalog | None = None) -> Plan:
    """Open a plan file (TOML); component names in it are resolved against the catalog.

    Returns
    -------
    Plan : ``recipe`` (a Recipe), ``title``, ``notes``, ``cells`` (cell reference table or None),
        ``target``, ``projection``, ``series``, ``provenance``
    """
    from mediaplan.files import planfile

    return planfile.read(path, catalog=_catalog(catalog))


# ---- the medium --------------------------------------------------------------------------------------
def _cells(cells: str | None, tolerance: str | float | None, plan: Plan | None,
           recipe: Recipe) -> tuple[float | None, float]:
    from mediaplan.tasks.cells import cell_reference, cell_tolerance

    return cell_reference(cells, plan, recipe.temperature_k), cell_tolerance(tolerance, plan)


def evaluate(medium: Recipe | Plan, *, cells: str | None = None, tolerance: str | float | None = None,
             catalog: Catalog | None = None) -> Evaluation:
    """The water relations of a medium (``mediaplan calc``).

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe, and its ``[cells]`` table for tonicity)
    cells : cell reference for tonicity, an osmolality (``"450 mOsm/kg"``) or a water potential
        (``"-1.1 MPa"``); default the plan's ``[cells]`` table, else no tonicity
    tolerance : half-width of the isotonic band, ``0.05`` or ``"5 %"`` [fraction of the reference];
        default the plan's, else 5 %
    catalog : see the module's notes

    Returns
    -------
    Evaluation : ``osmolality_mosmol_per_kg`` (non-ideal) beside ``osmolality_ideal_mosmol_per_kg`` (van't
        Hoff sum), ``water_activity``, ``osmotic_potential_mpa``, ``vant_hoff_potential_mpa``,
        ``freezing_point_depression_k``, ``effective_osmolality_mosmol_per_kg``, ``tonicity`` (or None),
        ``components`` (molality, share of the osmolality per component), ``warnings``; ``to_dict()``
    """
    from mediaplan.medium.evaluate import evaluate as evaluate_recipe

    cat = _catalog(catalog)
    plan, recipe = _plan_and_recipe(medium)
    ref, tol = _cells(cells, tolerance, plan, recipe)
    from mediaplan.tasks.uncertainty import with_budget

    # with its 95 % intervals (``budget``), as ``mediaplan calc --json`` prints it
    return with_budget(evaluate_recipe(recipe, cat, cell_reference_mosmol=ref, isotonic_tolerance=tol), recipe, cat)


def budget(medium: Recipe | Plan, *, readability: str | float | None = None,
           volume_tolerance: str | float | None = None, catalog: Catalog | None = None,
           evaluation: Evaluation | None = None):
    """The 95 % uncertainty budget of a medium's figures (what ``mediaplan calc --budget`` shows).

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe)
    readability : the balance's readability, ``"0.001 g"`` or grams (default 0.01 g; common practice)
    volume_tolerance : tolerance of making up to volume, ``0.002`` or ``"0.2 %"`` (default 1 %)
    catalog : see the module's notes
    evaluation : ``evaluate(medium)`` when already at hand

    Returns
    -------
    :class:`mediaplan.tasks.uncertainty.Budget`: ``osmolality`` [mOsm/kg], ``water_activity``,
    ``osmotic_potential`` [MPa], ``freezing_point_depression`` [K] and ``osmometer`` [mOsm/kg] as
    intervals (``value``, ``low``, ``high``), ``contributions`` by source; ``to_dict()``
    """
    from mediaplan.tasks.uncertainty import Tolerances, tolerances_with
    from mediaplan.tasks.uncertainty import budget as recipe_budget

    cat = _catalog(catalog)
    _, recipe = _plan_and_recipe(medium)
    tol = tolerances_with(Tolerances(), balance_readability=readability, volume_tolerance=volume_tolerance)
    return recipe_budget(recipe, cat, tolerances=tol, evaluation=evaluation)


def check_reading(medium: Recipe | Plan, value: str | float, *, instrument: str = "freezing-point",
                  chamber_temperature: str | None = None, repeatability: str | None = None,
                  calibrated: bool = True, catalog: Catalog | None = None):
    """An osmometer reading of a batch against its plan (what ``mediaplan reading`` prints).

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe; its target's and series' osmotica name the unlisted solutes)
    value : what the osmometer displayed, ``"182 mOsm/kg"``, or a number [mOsm/kg]
    instrument : ``"freezing-point"`` or ``"vapour-pressure"``
    chamber_temperature : a vapour-pressure osmometer's chamber, ``"25 degC"`` (default: the recipe's)
    repeatability : s.d. of one reading, ``"2 mOsm/kg"`` or ``"0.5 %"`` (default: the lab's, else common practice)
    calibrated : apply the instrument's stored calibration (``mediaplan osmometer calibrate``)
    catalog : see the module's notes

    Returns
    -------
    :class:`mediaplan.tasks.reading.ReadingCheck`: ``verdict``, ``predicted_mosmol_per_kg``,
    ``interval_mosmol_per_kg`` (95 %), ``reading_mosmol_per_kg``, ``deviation_percent``, ``explanations``
    (ranked slips); ``to_dict()`` is the ``reading --json`` object
    """
    from mediaplan.files import osmometers
    from mediaplan.tasks.reading import check_reading as check

    cat = _catalog(catalog)
    plan, recipe = _plan_and_recipe(medium)
    inst, cal = osmometers.reading_setup(instrument, chamber=chamber_temperature, repeatability=repeatability,
                                         calibrated=calibrated)
    named = osmometers.osmotica_named(plan) if plan is not None else []
    return check(recipe, cat, value, instrument=inst, osmotica_named=named, calibration=cal)


def _ratio(ratio: str | Sequence[float] | None) -> list[float] | None:
    if ratio is None or not isinstance(ratio, str):
        return None if ratio is None else [float(r) for r in ratio]
    try:
        return [float(x) for x in ratio.replace("/", ":").split(":")]
    except ValueError:
        raise AmountError(f"cannot read ratio {ratio!r}", field="ratio", hint='write it like "1:1" or "3:1"') from None


def _hold(hold: str | Mapping[str, str] | None) -> dict[str, str] | None:
    if hold is None or not isinstance(hold, str):
        return None if hold is None else dict(hold)
    key, sep, amount = hold.partition("=")
    if not sep or not key.strip() or not amount.strip():
        raise AmountError(f"'{hold}' is not ID=AMOUNT", field="hold", hint='write e.g. "sucrose=20 g/L"')
    return {key.strip(): amount.strip()}


def solve_target(medium: Recipe | Plan, target: str, osmotica: str | Sequence[str], *,
                 ratio: str | Sequence[float] | None = None, hold: str | Mapping[str, str] | None = None,
                 cells: str | None = None, tolerance: str | float | None = None,
                 catalog: Catalog | None = None) -> Solution:
    """The addition of one osmoticum, or of two, that brings a medium to a target (``mediaplan solve``).

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe, and its ``[cells]`` table for a tonicity target)
    target : a water potential (``"-0.8 MPa"``, ``"-8 bar"``), an osmolality (``"450 mOsm/kg"``) or a
        tonicity toward the cells (``"isotonic"``, ``"isotonic+10%"``, ``"isotonic-50 mOsm/kg"``)
    osmotica : one id, formula or name (``"mannitol"``), or two in a list
    ratio : molar ratio of the additions of two osmotica, ``"1:1"`` or ``[1, 1]``
    hold : one of two osmotica held at a set level, ``"sucrose=20 g/L"`` or ``{"sucrose": "20 g/L"}``
    cells, tolerance : cell reference and isotonic band, as for :func:`evaluate`

    Returns
    -------
    Solution : ``status`` ("added", "on_target" or "too_concentrated"), ``additions`` (per osmoticum
        ``added_g_per_l``, ``added_mol_per_l``, ``added_g_per_batch``, ``total_amount``), ``recipe`` (the new
        recipe), ``evaluation`` (the new medium, evaluated from scratch), ``start``, ``reduction`` (the
        strength or dilution that reaches a target below the medium), ``message``; ``to_dict()``
    """
    from mediaplan.tasks.solve import solve_target as solve

    cat = _catalog(catalog)
    plan, recipe = _plan_and_recipe(medium)
    ref, tol = _cells(cells, tolerance, plan, recipe)
    names = [osmotica] if isinstance(osmotica, str) else list(osmotica)
    from mediaplan.tasks.uncertainty import with_ranges

    # with the result's intervals and each addition's range, as ``mediaplan solve --json`` prints it
    return with_ranges(solve(recipe, cat, target, names, ratio=_ratio(ratio), hold=_hold(hold),
                             cell_reference_mosmol=ref, isotonic_tolerance=tol), cat)


# ---- plasmolysis ---------------------------------------------------------------------------------------
def _level_pa(text: str, field: str, T: float) -> float:
    """A level as water potential [Pa]; an osmolality is converted at T [K]."""
    from mediaplan.medium.units import parse_target
    from mediaplan.thermo.potential import potential_from_osmolality

    t = parse_target(text, field=field)
    return t.value if t.kind == "potential" else float(potential_from_osmolality(t.value, T))


def _step_pa(text: str) -> float:
    """A spacing of levels [Pa], sign ignored."""
    from mediaplan.medium.units import parse_target

    t = parse_target("-" + text.strip().lstrip("+-"), field="series.step")
    if t.kind != "potential":
        raise AmountError(f"step {text!r} is not a pressure", field="series.step", hint='write it like "0.1 MPa"')
    return abs(t.value)


def design_series(osmoticum: str, *, first: str | None = None, last: str | None = None,
                  around: str | None = None, step: str | None = None, steps: int = 8,
                  background: Recipe | Plan | None = None, volume: str | None = None, stock: str | None = None,
                  catalog: Catalog | None = None) -> SeriesDesign:
    """A plasmolysis series evenly spaced in water potential (``mediaplan series``).

    Give ``first`` and ``last`` (both levels included), or ``around`` and ``step``; each a water potential
    (``"-0.2 MPa"``) or an osmolality (``"100 mOsm/kg"``, converted at the background's temperature).

    Parameters
    ----------
    osmoticum : id, formula or name (``"mannitol"``)
    steps : number of levels
    background : the solvent of every level, a Recipe or a Plan; default water at 25 °C
    volume : volume of each level (``"50 mL"``); default the plan's volume when the background is a Plan,
        else 50 mL
    stock : also give volumes of a stock of the osmoticum made up in the background (``"1 mol/kg"``)

    Returns
    -------
    SeriesDesign : ``levels`` (per level ``water_potential_mpa``, ``osmolality_mosmol_per_kg``,
        ``molality_mol_per_kg``, ``grams_per_litre``, ``grams`` for the volume, ``stock_ml`` and
        ``diluent_ml`` with a stock), ``stock``, ``background_potential_mpa``, ``warnings``; ``to_dict()``,
        and ``plan_table()`` (the ``[series]`` table of a plan)
    """
    from mediaplan.tasks.plasmolysis import design_series as design
    from mediaplan.tasks.plasmolysis import potentials_around, potentials_between

    cat = _catalog(catalog)
    if background is None:
        plan, recipe = None, Recipe()
    else:
        plan, recipe = _plan_and_recipe(background)
    if volume or plan is None:
        recipe = recipe.with_settings(volume=volume or SERIES_VOLUME)
    T = recipe.temperature_k
    if around is not None:
        if first is not None or last is not None:
            raise AmountError("give either first and last, or around and step, not both", field="series.first")
        if step is None:
            raise AmountError("a series around a level needs a step", field="series.step",
                              hint='e.g. around="-1.0 MPa", step="0.1 MPa"', asks_for="series.step")
        psi = potentials_around(_level_pa(around, "series.around", T), _step_pa(step), steps)
        spacing = f"{steps} levels around {around}, {step} apart"
    else:
        if first is None or last is None:
            raise AmountError("say where the series runs", field="series.first",
                              hint='e.g. first="-0.2 MPa", last="-1.6 MPa", or around and step')
        psi = potentials_between(_level_pa(first, "series.first", T), _level_pa(last, "series.last", T), steps)
        spacing = f"{steps} levels evenly spaced in water potential from {first} to {last}"
    from mediaplan.tasks.uncertainty import with_level_intervals

    # with each level's 95 % interval, as ``mediaplan series --json`` prints it
    return with_level_intervals(design(recipe, osmoticum, psi, catalog=cat, stock=stock, spacing=spacing), recipe, cat)


def stated_series(path: str | os.PathLike, osmoticum: str | None, background: Recipe | None) -> tuple[str | None, Recipe]:
    """The osmoticum and the background of the series behind a counts file: the caller's, else what the file's
    ``# key: value`` comments state; the background at the level volume (for the levels' uncertainty)."""
    from mediaplan.files import counts
    from mediaplan.tasks.uncertainty import LEVEL_VOLUME

    osmoticum, background = counts.stated_series(path, osmoticum, background)
    return osmoticum, background.with_settings(volume=LEVEL_VOLUME)


def _counts_from_rows(rows: Iterable[Sequence[float]], temperature_k: float | None) -> Counts:
    from mediaplan.tasks.plasmolysis.counts import counts_from_rows

    rows = [tuple(row) for row in rows]
    for row in rows:
        if len(row) != 3:
            raise AmountError(f"a row of counts has {len(row)} values, not 3", field="counts",
                              hint="each row: (water potential [MPa], plasmolysed, total)")
    counts = counts_from_rows(rows, temperature_k=temperature_k)
    counts.source = "counts given as rows"
    return counts


def fit_counts(counts: str | os.PathLike | Plan | Counts | Iterable[Sequence[float]], link: str = "logit", *,
               osmoticum: str | None = None, background: Recipe | None = None, temperature: str | None = None,
               catalog: Catalog | None = None) -> PlasmolysisFit:
    """The incipient-plasmolysis point from counts: a binomial GLM with its 50 % point (``mediaplan fit``).

    Parameters
    ----------
    counts : a counts file (CSV: ``water_potential_mpa,plasmolysed,total``, or a concentration column such
        as ``mannitol_mol_per_kg``), a plan file (``.toml``) or Plan with a ``[series]`` table, a Counts, or
        rows of (water potential [MPa], plasmolysed, total)
    link : ``"logit"`` or ``"probit"``
    osmoticum : osmoticum of a concentration column whose header does not name it
    background : background medium of a concentration column (default water)
    temperature : series temperature (``"22 degC"``); default the plan's or the background's, else 25 °C

    Returns
    -------
    PlasmolysisFit : ``water_potential_50_mpa`` with ``ci95_mpa`` ([low, high] or None), the cell sap's
        ``osmotic_potential_mpa`` and ``osmolality_50_mosmol_per_kg``, ``intercept``, ``slope_per_mpa``,
        ``deviance``, ``pearson_chi2``, ``rows`` (observed and fitted), ``warnings``; ``to_dict()``
    """
    from mediaplan.files import planfile
    from mediaplan.medium.errors import FitError
    from mediaplan.tasks.plasmolysis import counts_from_series
    from mediaplan.tasks.uncertainty import (
        LEVEL_VOLUME,
        fit_with_levels,
        plan_series_uncertainty,
        series_level_uncertainty,
    )

    _start()
    cat = _catalog(catalog)
    T = Recipe(temperature=temperature).temperature_k if temperature else None
    if temperature:
        background = (background or Recipe()).with_settings(temperature=temperature)
    # the levels' own uncertainty, carried into the 50 % point as ``mediaplan fit`` does
    levels = series_level_uncertainty(osmoticum, (background or Recipe()).with_settings(volume=LEVEL_VOLUME), cat)
    if isinstance(counts, (str, os.PathLike)) and not str(counts).lower().endswith(".toml"):
        from mediaplan.files.counts import read_counts_csv

        read = read_counts_csv(counts, osmoticum=osmoticum, background=background, catalog=cat)
        levels = series_level_uncertainty(*stated_series(counts, osmoticum, background), cat)
        return fit_with_levels(read, link, cat, levels=levels)
    if isinstance(counts, (str, os.PathLike)):
        counts = planfile.read(counts, catalog=cat)
    if isinstance(counts, Plan):
        where = str(counts.path) if counts.path else None
        if not counts.series:
            raise FitError("the plan has no [series] table", file=where,
                           hint="design a series and store its plan_table() in the plan first")
        levels = plan_series_uncertainty(counts.series, counts.recipe, cat)
        counts = counts_from_series(counts.series, file=where, temperature_k=T or counts.recipe.temperature_k)
    elif not isinstance(counts, Counts):
        counts = _counts_from_rows(counts, T)
    return fit_with_levels(counts, link, cat, levels=levels, temperature_k=T)


# ---- sweeps ----------------------------------------------------------------------------------------
def sweep(medium: Recipe | Plan, amounts: Mapping[str, Sequence[str] | str], *, grid: bool = True,
          figures: Sequence[str] = ("osmolality_mosmol_per_kg", "water_activity", "osmotic_potential_mpa"),
          catalog: Catalog | None = None, progress=None) -> dict:
    """Many variants of a medium at once: some components' amounts varied, the figures of every variant.

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe); its temperature is the sweep's
    amounts : component -> its amounts as text, e.g. ``{"mannitol": ["0 g/L", "20 g/L", "40 g/L"],
        "sucrose": ["0 g/L", "30 g/L"]}``; an amount replaces the medium's own of that component
    grid : every combination of the amounts (the first component varying slowest: 3 x 2 = 6 rows above),
        or False: given rows, the lists read side by side (all of one length)
    figures : which of ``osmolality_mosmol_per_kg`` [mOsm/kg], ``water_activity`` [-] and
        ``osmotic_potential_mpa`` [MPa] to return
    catalog : see the module's notes
    progress : called as ``progress(rows_done, rows_in_all)`` after each chunk of rows, or None

    Returns
    -------
    dict : figure name -> a 1-D numpy array, one value per row, as :func:`evaluate` gives each (to 1e-12),
        NaN in every figure of a row :func:`evaluate` refuses for want of an answer (past every model's
        range); rows are solved in chunks, so 10^6 variants need no more memory than their answers and one
        chunk

    The figures are the model's values only: no warnings, cautions or intervals (evaluate the rows you act
    on with :func:`evaluate` and :func:`budget` for those).

    Raises MediaplanError as :func:`evaluate` does, in its words, when a row holds more than a medium can
    (each row is checked as :func:`evaluate` checks it), or a row leaves no water. A varied component
    stands where :meth:`Recipe.with_amount` puts it: another form of its substance in the base is replaced.
    """
    from mediaplan.medium.grid import sweep_recipe

    cat = _catalog(catalog)
    _, recipe = _plan_and_recipe(medium)
    return sweep_recipe(recipe, cat, amounts, full=grid, figures=tuple(figures), progress=progress)


# ---- preparation -----------------------------------------------------------------------------------
def _pairs(items: Mapping[str, str] | Sequence[str] | None, what: str) -> dict[str, str]:
    from mediaplan.tasks.prep import parse_pairs

    if isinstance(items, Mapping):
        return {str(k): str(v) for k, v in items.items()}
    return parse_pairs([items] if isinstance(items, str) else list(items or []), what)


def _factors(factors: Mapping[str, float] | Sequence[str] | None) -> dict[str, float]:
    from mediaplan.tasks.prep import parse_factors

    if isinstance(factors, Mapping):
        return {str(k): float(v) for k, v in factors.items()}
    return parse_factors([factors] if isinstance(factors, str) else list(factors or []))


def prep_sheet(medium: Recipe | Plan, *, volume: str | None = None, stocks: bool = False,
               forms: Mapping[str, str] | Sequence[str] | None = None,
               factors: Mapping[str, float] | Sequence[str] | None = None, stock_volume: str | None = None,
               ph: str | None = None, trust: str | None = None, catalog: Catalog | None = None) -> PrepSheet:
    """The preparation sheet of a batch, with a stock-solution scheme on request (``mediaplan prep``).

    Parameters
    ----------
    medium : a Recipe, or a Plan (its recipe and title; entries embedded in its ``[provenance]`` fill in
        components the catalog lacks)
    volume : batch volume (``"2 L"``); default the recipe's volume
    stocks : group the components into stock solutions
    forms : weigh another form of the same substance, moles kept:
        ``{"calcium_chloride_dihydrate": "calcium_chloride_anhydrous"}`` or ``["ID=FORM", ...]``
    factors : concentration factor [-] per stock (macro, calcium, micro, iron, vitamins or a growth
        regulator id): ``{"micro": 1000}`` or ``["micro=1000"]``
    stock_volume : volume of each stock to make (``"500 mL"``)
    ph : target pH printed on the sheet; default the base medium's
    trust : ``"plan"`` or ``"local"``: which entry wins when a plan's embedded copy differs from the catalog

    Returns
    -------
    PrepSheet : ``rows`` (per component ``grams`` per batch [g] or ``millilitres`` [mL], ``route``,
        ``substock``), ``stocks`` (per stock ``ml_per_batch`` and items with ``grams_per_litre``),
        ``steps``, ``ph``, ``sterilisation``, ``cautions``, ``notes``, ``provenance``
    """
    from mediaplan.files.sharing import catalog_for, provenance_of, shadow_notes
    from mediaplan.tasks.prep import build_sheet

    cat = _catalog(catalog)
    plan, recipe = _plan_and_recipe(medium)
    notes = shadow_notes(cat)
    if plan is not None:
        cat, more = catalog_for(plan, cat, trust=trust)
        notes += more
    sheet = build_sheet(recipe, cat, volume=volume, stocks=stocks, forms=_pairs(forms, "form"),
                        factors=_factors(factors), stock_volume=stock_volume, title=plan.title if plan else None,
                        ph=ph)
    sheet.provenance = provenance_of(recipe, cat)
    sheet.notes = notes + sheet.notes
    return sheet
