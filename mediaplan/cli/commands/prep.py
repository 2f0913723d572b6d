"""mediaplan prep: preparation sheet and stock solutions for a batch."""

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
    add_recipe_arguments(p, plan_option=False)
    p.add_argument("plan_file", nargs="?", metavar="PLAN", help="plan file (optional; inline ID=AMOUNT works too)")
    p.add_argument("--volume", metavar="V", help='batch volume, e.g. "2 L" (default: the plan\'s volume)')
    p.add_argument("--stocks", action="store_true", help="group components into stock solutions")
    p.add_argument("--factor", action="append", metavar="STOCK=X",
                   help="concentration factor of a stock (macro, calcium, micro, iron, vitamins or a growth "
                        "regulator id), e.g. --factor micro=1000; refused if it exceeds solubility")
    p.add_argument("--stock-volume", metavar="V", help='volume of each stock to make, e.g. "500 mL"')
    p.add_argument("--form", action="append", metavar="ID=FORM",
                   help="weigh another form of the same substance (moles kept), e.g. "
                        "--form calcium_chloride_dihydrate=calcium_chloride_anhydrous")
    p.add_argument("--ph", metavar="PH", help="target pH printed on the sheet (default: the base medium's)")
    add_mismatch_arguments(p)
    add_output_arguments(p, ("md", "csv", "html"), "md", format_help="output format",
                         json_help="print the sheet as one JSON object")


def split_plan_argument(args) -> None:
    """PLAN and ID=AMOUNT share the positional slots: the one item without '=' is the plan."""
    from mediaplan.medium.errors import MediaplanError

    items = list(args.amounts or []) + ([args.plan_file] if args.plan_file else [])
    plans = [i for i in items if "=" not in i]
    if len(plans) > 1:
        raise MediaplanError(f"more than one plan given: {', '.join(plans)}", hint="give one PLAN and ID=AMOUNT items")
    args.plan = plans[0] if plans else None
    args.amounts = [i for i in items if "=" in i]


def load(args):
    """(plan, recipe, catalog, notes) from PLAN, embedded entries and inline arguments; notes include shadowing."""
    from mediaplan.files.sharing import mismatch_notes, read_plan, shadow_notes

    split_plan_argument(args)
    catalog = catalog_from(args)
    notes = shadow_notes(catalog)
    for n in notes:  # before anything can fail: a conflict may come from the facility entry
        note(n)
    if args.plan:
        _, catalog, more = read_plan(args.plan, catalog, trust=getattr(args, "trust", None))
        notes += more
    plan, recipe = recipe_from(args, catalog, notes=notes)
    notes += mismatch_notes(plan, catalog, strict=getattr(args, "strict", False))
    return plan, recipe, catalog, notes


def run(args) -> int:
    from mediaplan.files.output import write_output
    from mediaplan.files.sharing import provenance_of, shadow_notes
    from mediaplan.tasks.prep import build_sheet, parse_factors, parse_pairs
    from mediaplan.tasks.prep.options import parse_ph
    from mediaplan.views.export import prep_sheet

    plan, recipe, catalog, notes = load(args)
    shown = len(shadow_notes(catalog))
    try:
        recipe.check_plausible(catalog)
        sheet = build_sheet(recipe, catalog, volume=args.volume, stocks=args.stocks,
                            forms=parse_pairs(args.form, "--form"), factors=parse_factors(args.factor),
                            stock_volume=args.stock_volume, title=plan.title if plan else None,
                            ph=parse_ph(args.ph))
    except MediaplanError as exc:
        raise located_in_plan(exc, plan, catalog) from None
    sheet.provenance = provenance_of(recipe, catalog)
    sheet.notes = notes + sheet.notes
    for n in notes[shown:]:
        note(n)
    reads = (args.plan,)
    if args.json:
        print_json(sheet.to_dict(), args.output, force=args.force, reads=reads)
        return 0
    write_output(prep_sheet(sheet, plan, args.format or "md"), args.output, force=args.force, reads=reads)
    return 0
