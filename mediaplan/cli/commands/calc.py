"""mediaplan calc: the water relations of a medium."""

from __future__ import annotations

from mediaplan.cli.common import (
    add_mismatch_arguments,
    add_output_arguments,
    add_recipe_arguments,
    catalog_from,
    located_in_plan,
    note,
    print_json,
    recipe_from,
)
from mediaplan.medium.errors import MediaplanError


def add_arguments(p) -> None:
    add_recipe_arguments(p)
    p.add_argument("--cells", metavar="REF", help='cell reference for tonicity: "450 mOsm/kg" or "-1.1 MPa" '
                   "(default: the plan's [cells] table)")
    p.add_argument("--tolerance", metavar="FRACTION",
                   help='half-width of the isotonic band: 0.05 or "5 %%" (default: [cells] tolerance, else 5 %%)')
    p.add_argument("--project", action="store_true",
                   help="add columns as made / after autoclaving / after N weeks (settings from the plan's "
                        "[projection] table and the options below)")
    p.add_argument("--hydrolysis", metavar="FRACTION",
                   help='sucrose hydrolysed on autoclaving: 0.1 or "10 %%" (default 10 %%; published 5-20 %% in '
                        "ordinary media, 53-95 %% with activated charcoal or at low pH)")
    loss = p.add_mutually_exclusive_group()
    loss.add_argument("--water-loss", metavar="FRACTION", help="water lost by the end of the culture (total)")
    loss.add_argument("--water-loss-per-week", metavar="FRACTION", help="water lost per week (of the water first present)")
    p.add_argument("--weeks", metavar="N", help="length of the culture in weeks (default 4)")
    p.add_argument("--save", metavar="NEW.toml",
                   help="save the medium as computed (plan, base, strength, temperature and ID=AMOUNT items, "
                        "--cells) as a new plan; never over an existing file unless --force, never over the "
                        "plan read")
    add_mismatch_arguments(p)
    add_budget_arguments(p)
    add_output_arguments(p, ("text", "md", "csv", "html"), "text; md with -o",
                         format_help="report format (md, csv and html include provenance and a place to sign)")


def add_budget_arguments(p) -> None:
    """Options of the uncertainty budget: the breakdown by source, and the lab's own tolerances."""
    p.add_argument("--budget", action="store_true",
                   help="list the sources of the 95 %% intervals (model error per solute class, ZSR mixing, "
                        "balance, volume, temperature, recalled amounts) with their shares")
    p.add_argument("--readability", metavar="MASS",
                   help='readability of the balance, e.g. "0.001 g" (default 0.01 g; common practice)')
    p.add_argument("--volume-tolerance", metavar="FRACTION",
                   help='tolerance of making up to volume: 0.002 or "0.2 %%" (default 1 %%; common practice)')


#: the flag behind each field of the lab's tolerances (named here, not in the shared map, because only
#: calc takes them: the app has no input for them)
TOLERANCE_FLAGS = {"balance_readability": "--readability", "volume_tolerance": "--volume-tolerance"}


def tolerances_from(args):
    """The lab's tolerances: the defaults with --readability and --volume-tolerance applied (an error names
    the flag)."""
    from mediaplan.medium.errors import MediaplanError
    from mediaplan.tasks.uncertainty import Tolerances, tolerances_with

    try:
        return tolerances_with(Tolerances(), balance_readability=getattr(args, "readability", None),
                               volume_tolerance=getattr(args, "volume_tolerance", None))
    except MediaplanError as exc:
        exc.field = TOLERANCE_FLAGS.get(exc.field or "", exc.field)
        raise


def projection_from(args, plan, recipe, catalog, ref: float | None, tol: float):
    """The projection asked for by --project (None when not asked)."""
    if not getattr(args, "project", False):
        return None
    from mediaplan.tasks.projection import project, settings_from

    settings = settings_from(plan.projection if plan else None, autoclave_hydrolysis=args.hydrolysis,
                             water_loss=args.water_loss, water_loss_per_week=args.water_loss_per_week,
                             weeks=args.weeks)
    return project(recipe, catalog, settings, cell_reference_mosmol=ref, isotonic_tolerance=tol)


def run(args) -> int:
    from mediaplan.files.output import write_output
    from mediaplan.files.sharing import mismatch_notes, read_plan, shadow_notes
    from mediaplan.medium.evaluate import evaluate
    from mediaplan.views.report import evaluation_text

    catalog = catalog_from(args)
    notes: list[str] = list(shadow_notes(catalog))
    if getattr(args, "plan", None):  # the plan's embedded entries in force (files/sharing.MISMATCH_POLICY)
        _, catalog, more = read_plan(args.plan, catalog, trust=args.trust)
        notes += more
    plan, recipe = recipe_from(args, catalog, notes=notes)
    notes += mismatch_notes(plan, catalog, strict=args.strict)
    cells = plan.cells if plan is not None else None
    from mediaplan.tasks.cells import cell_tolerance, reference_in_force

    tol = cell_tolerance(args.tolerance, cells)
    in_force = reference_in_force(args.cells, cells, recipe.temperature_k)
    ref = in_force.mosmol
    if in_force.ignored:  # more than one reference given: say which one counts
        notes.append(in_force.words)
    try:
        ev = evaluate(recipe, catalog, cell_reference_mosmol=ref, isotonic_tolerance=tol)
    except MediaplanError as exc:
        raise located_in_plan(exc, plan, catalog) from None
    proj = projection_from(args, plan, recipe, catalog, ref, tol)
    from mediaplan.tasks.uncertainty import with_budget

    ev = with_budget(ev, recipe, catalog, tolerances=tolerances_from(args))
    bud = ev.budget
    reads = (getattr(args, "plan", None),)
    saved = save_plan(args, plan, recipe, catalog, notes) if getattr(args, "save", None) else None
    if args.json:
        d = ev.to_dict()
        if saved:  # the key only when --save was given: the JSON of calc stays as it was otherwise
            d["saved"] = str(saved)
        d["notes"] = notes
        d["title"] = plan.title if plan else None
        if proj is not None:
            d["projection"] = proj.to_dict()
        print_json(d, args.output, force=args.force, reads=reads)
    elif args.format not in (None, "text") or args.output:
        from mediaplan.files.planfile import Plan
        from mediaplan.files.sharing import provenance_of
        from mediaplan.views.export import evaluation_report

        fmt = "md" if args.format in (None, "text") else args.format
        text = evaluation_report(ev, plan or Plan(recipe=recipe), fmt,
                                 provenance=provenance_of(recipe, catalog), budget=bud)
        for n in notes:
            note(n)
        write_output(text, args.output, force=args.force, reads=reads)
    else:
        for n in notes:
            note(n)
        text = evaluation_text(ev, plan.title if plan else None, budget=bud, breakdown=args.budget)
        if proj is not None:
            from mediaplan.views.projection import projection_text

            text += "\n\n" + projection_text(proj)
        write_output(text)
    return 0


def save_plan(args, plan, recipe, catalog, notes: list[str]):
    """Write the recipe as computed (with the plan's other tables and ``--cells``) as a new plan file at
    ``args.save``, atomically; returns the path written. Refuses the plan being read (even with --force:
    an edit of that plan keeps its comments only through the commands that edit in place), an existing file
    without --force. The strength scope is recorded (``[medium] strength_scope``), so the plan reopens with
    the same numbers."""
    from pathlib import Path

    from mediaplan.files import planfile
    from mediaplan.medium.errors import ConflictError
    from mediaplan.tasks.cells import CellReference

    out = Path(args.save)
    read = getattr(args, "plan", None)
    if read and _same_file(out, Path(read)):
        raise ConflictError("--save names the plan being read", file=str(out),
                            hint="save the medium under a new name, then compare with mediaplan diff")
    new = plan.with_recipe(recipe) if plan is not None else planfile.Plan(recipe=recipe, title="Medium")
    new.path, new.disk_digest = None, None  # a new file: written whole and created exclusively
    if getattr(args, "cells", None):
        new.cells = (new.cells or CellReference()).with_reference(args.cells)
    said: list[str] = []
    written = planfile.write(new, out, force=args.force, catalog=catalog, notes=said)
    notes += said
    notes.append(f"saved the medium as a plan: {written}")
    return written


def _same_file(a, b) -> bool:
    import os

    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.abspath(a) == os.path.abspath(b)
