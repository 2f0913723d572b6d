"""mediaplan fit: plasmolysis counts -> incipient plasmolysis point, cell sap potential and osmolality."""

from __future__ import annotations

import sys

from mediaplan.cli.common import add_mismatch_arguments, catalog_from, plan_under_policy, print_json


def add_arguments(p) -> None:
    p.add_argument("counts", metavar="COUNTS", help="CSV with water_potential_mpa,plasmolysed,total (or a level "
                                                    "column such as mannitol_mol_per_kg), or a plan with [series]")
    p.add_argument("--link", choices=("logit", "probit"), default="logit", help="link function (default logit)")
    p.add_argument("--with", dest="osmoticum", metavar="ID",
                   help="osmoticum of a concentration column (when its header does not name it)")
    p.add_argument("--base", metavar="ID", help="background medium of a concentration column (default water)")
    p.add_argument("--strength", type=float, metavar="X", help="strength of the background medium")
    p.add_argument("--strength-scope", choices=("all", "salts", "macro"),
                   help="which lines of the background's base the strength scales (default salts)")
    p.add_argument("--temperature", metavar="T",
                   help='series temperature, e.g. "25 degC" (default: the plan\'s, else 25 °C)')
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--plot", metavar="OUT", help="save the fitted curve as OUT.svg or OUT.png (a new file; see --force)")
    p.add_argument("--force", action="store_true", help="let --plot replace an existing file")
    p.add_argument("--write-cells", metavar="PLAN",
                   help="store the fitted cell reference in PLAN's [cells] table (created if missing)")
    add_mismatch_arguments(p)


def load_counts(args, catalog):
    """Counts from a CSV file or from a plan's [series] table."""
    from mediaplan.medium.recipe import Recipe

    path = args.counts
    T = None
    if args.temperature:
        T = Recipe(temperature=args.temperature).temperature_k
    if path.lower().endswith(".toml"):
        from mediaplan.files import planfile
        from mediaplan.medium.errors import FitError
        from mediaplan.tasks.plasmolysis import counts_from_series

        plan = planfile.read(path, catalog=catalog)
        if not plan.series:
            raise FitError("the plan has no [series] table", file=path,
                           hint="design one with: mediaplan series ... --write PLAN.toml")
        return plan, counts_from_series(plan.series, file=path, temperature_k=T or plan.recipe.temperature_k)
    from mediaplan.files.counts import read_counts_csv

    changes = _background_given(args, catalog)
    background = Recipe(**changes) if changes else None
    return None, read_counts_csv(path, osmoticum=args.osmoticum, background=background, catalog=catalog)


def _background_given(args, catalog) -> dict:
    """The series background the command line states (--base, --strength, --strength-scope, --temperature),
    as Recipe settings; empty when none is given."""
    changes: dict = {}
    if args.base:
        changes["base"] = catalog.medium(args.base, field="--base").id
    if args.strength is not None:
        changes["strength"] = args.strength
    if getattr(args, "strength_scope", None):
        changes["strength_scope"] = args.strength_scope
    if args.temperature:
        changes["temperature"] = args.temperature
    return changes


def levels_uncertainty(args, plan, catalog):
    """psi [MPa] -> standard uncertainty [MPa] of a level made at psi, for the series behind the counts (the
    plan's [series], or --with in --base); None when the osmoticum is not known."""
    from mediaplan.files.counts import stated_series
    from mediaplan.medium.recipe import Recipe
    from mediaplan.tasks.uncertainty import LEVEL_VOLUME, plan_series_uncertainty, series_level_uncertainty

    if plan is not None:
        return plan_series_uncertainty(plan.series, plan.recipe, catalog)
    changes = _background_given(args, catalog)
    osmoticum, background = stated_series(args.counts, args.osmoticum, Recipe(**changes) if changes else None)
    if not osmoticum:  # not known: no levels' uncertainty (and no level volume to read)
        return None
    return series_level_uncertainty(osmoticum, background.with_settings(volume=LEVEL_VOLUME), catalog)


def save_plot(fit, out: str, *, force: bool = False, reads: tuple = ()) -> str:
    """Write the curve as SVG or PNG (by extension) through the one safe write path (a new file unless
    ``force``; never one the command reads)."""
    from pathlib import Path

    from mediaplan.files.output import write_file
    from mediaplan.medium.errors import MediaplanError, PlanFileError
    from mediaplan.views.plot import curve_points, png_bytes, svg_text

    path = Path(out)
    ext = path.suffix.lower()
    if ext not in (".svg", ".png"):
        raise MediaplanError(f"cannot tell the plot format from {out!r}", field="--plot",
                             hint="end the file name with .svg or .png")
    cp = curve_points(fit)
    title = f"Incipient plasmolysis ({fit.link} fit, {fit.n_levels} levels)"
    data = svg_text(cp, title).encode("utf-8") if ext == ".svg" else png_bytes(cp, title)
    try:
        write_file(data, path, force=force, reads=reads)
    except PlanFileError as exc:
        if exc.message.startswith("cannot write ("):
            exc.message = exc.message.replace("cannot write (", "cannot write the plot (", 1)
        raise
    return str(path)


def write_cells(fit, target: str, counts_plan, catalog, notes: list[str] | None = None) -> str:
    """Store the fitted reference in the [cells] table of a plan (a new plan when the file does not exist);
    an existing plan is edited in place (comments, spellings and the rest of the file stay)."""
    import datetime
    from pathlib import Path

    from mediaplan.files import planfile
    from mediaplan.files.plan_tables import cell_reference_of

    path = Path(target)
    if counts_plan is not None and counts_plan.path is not None and counts_plan.path.resolve() == path.resolve():
        plan = counts_plan
    elif path.exists():
        plan = planfile.read(path, catalog=catalog)
    else:
        plan = planfile.Plan(title="Cell reference from an incipient plasmolysis fit")
    fitted = cell_reference_of(fit, datetime.date.today().isoformat())
    plan.cells = plan.cells.merged(fitted) if plan.cells is not None else fitted
    return str(planfile.write(plan, path, catalog=catalog, notes=notes))


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.views.safe_text import one_line

    catalog = catalog_from(args)
    if args.counts.lower().endswith(".toml"):  # a plan: read under the one catalog-mismatch policy
        from mediaplan.files.sharing import shadow_notes

        policy: list[str] = list(shadow_notes(catalog))
        _, catalog = plan_under_policy(args.counts, catalog, args, policy)
        for n in policy:
            note(n)
    plan, counts = load_counts(args, catalog)
    from mediaplan.tasks.uncertainty import fit_with_levels

    fit = fit_with_levels(counts, args.link, catalog, levels=levels_uncertainty(args, plan, catalog))
    saved = []
    said: list[str] = []
    if args.plot:
        saved.append(f"plot {save_plot(fit, args.plot, force=args.force, reads=(args.counts,))}")
    if args.write_cells:
        saved.append(f"cell reference in {write_cells(fit, args.write_cells, plan, catalog, said)}")
    if args.json:
        print_json(fit.to_dict())
    else:
        from mediaplan.views.fit import fit_text

        text = fit_text(fit)  # to standard output, as files.output.write_output prints (fit writes no -o file)
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
    for s in saved:
        print(one_line(f"saved {s}"), file=sys.stderr)
    for n in said:
        note(n)
    return 0
