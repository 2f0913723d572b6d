"""mediaplan solve: the osmoticum addition that brings a plan to a target."""

from __future__ import annotations

import sys

from mediaplan.cli.common import add_mismatch_arguments, catalog_from, plan_under_policy, print_json

_TARGET_HELP = ('water potential ("-0.8 MPa", "-8 bar"), osmolality ("450 mOsm/kg"), or tonicity toward the '
                'cells: "isotonic", "isotonic+10%%", "isotonic-50 mOsm/kg" (offsets act on the osmolality, + is '
                "more concentrated; needs --cells or a [cells] table)")


def add_arguments(p) -> None:
    p.add_argument("plan", metavar="PLAN", help="plan file to start from")
    p.add_argument("--target", required=True, metavar="TARGET", help=_TARGET_HELP)
    p.add_argument("--with", dest="osmotica", action="append", required=True, metavar="ID",
                   help="osmoticum to add (mannitol, sorbitol, sucrose, peg8000 ...); give it twice for two")
    p.add_argument("--ratio", metavar="A:B", help="molar ratio of the additions of two osmotica, e.g. 1:1")
    p.add_argument("--hold", metavar="ID=AMOUNT", help='hold one of two osmotica at a set level, e.g. sucrose="20 g/L"')
    p.add_argument("--cells", metavar="REF", help='cell reference: "450 mOsm/kg" or "-1.1 MPa" (default: the plan\'s '
                   "[cells] table)")
    p.add_argument("--tolerance", metavar="FRACTION", help='isotonic band: 0.05 or "5 %%" (default 5 %%)')
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--write", metavar="OUT.toml", help="save the solved plan (never over an existing file "
                   "without --force)")
    p.add_argument("--force", action="store_true", help="let --write replace an existing file; the input plan "
                   "itself is edited in place, keeping its comments")
    add_mismatch_arguments(p)
    p.epilog = ("Exit status: 0 when the target is reached or already met, 1 when the medium is already more "
                "concentrated than the target (the strength or dilution that reaches it is printed; nothing is "
                "written), 2 for bad input or an unreachable target.")


def _ratio(text: str | None) -> list[float] | None:
    if text is None:
        return None
    from mediaplan.medium.errors import AmountError

    parts = text.replace("/", ":").split(":")
    try:
        return [float(x) for x in parts]
    except ValueError:
        raise AmountError(f"cannot read ratio {text!r}", field="--ratio", hint="write it like 1:1 or 3:1") from None


def _hold(text: str | None) -> dict[str, str] | None:
    if text is None:
        return None
    from mediaplan.medium.errors import AmountError

    key, sep, amount = text.partition("=")
    if not sep or not key.strip() or not amount.strip():
        raise AmountError(f"'{text}' is not ID=AMOUNT", field="--hold", hint='write e.g. sucrose="20 g/L"')
    return {key.strip(): amount.strip()}


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.files import planfile
    from mediaplan.files.sharing import shadow_notes
    from mediaplan.tasks.cells import cell_reference, cell_tolerance
    from mediaplan.tasks.solve import parse_solve_target, solve_target
    from mediaplan.views.safe_text import one_line

    catalog = catalog_from(args)
    spec = parse_solve_target(args.target, field="--target")
    policy: list[str] = list(shadow_notes(catalog))
    plan, catalog = plan_under_policy(args.plan, catalog, args, policy)  # files/sharing.MISMATCH_POLICY
    for n in policy:
        note(n)
    recipe = plan.recipe
    ref = cell_reference(args.cells, plan.cells, recipe.temperature_k)
    tol = cell_tolerance(args.tolerance, plan.cells)
    sol = solve_target(recipe, catalog, spec, args.osmotica, ratio=_ratio(args.ratio), hold=_hold(args.hold),
                       cell_reference_mosmol=ref, isotonic_tolerance=tol)
    from mediaplan.tasks.uncertainty import with_ranges

    sol = with_ranges(sol, catalog)
    written = None
    said: list[str] = []
    if args.write and sol.status != "too_concentrated":
        from pathlib import Path

        from mediaplan.files.plan_tables import target_record_of
        from mediaplan.tasks.cells import CellReference

        new = plan.with_recipe(sol.recipe)
        out = Path(args.write)
        if not _is_input(out, plan) or not args.force:
            # a new file: planfile.write refuses to replace any existing one unless --force
            new.path, new.disk_digest = None, None
        # else: written back into the input plan (with --force), which is edited, keeping its comments
        new.target = target_record_of(sol)
        if args.cells and not plan.cells:
            new.cells = CellReference(osmolality=f"{ref:.4g} mOsm/kg", source=f"--cells {args.cells}")
        written = planfile.write(new, out, force=args.force, catalog=catalog, notes=said)
    if args.json:
        d = sol.to_dict()
        d["written"] = str(written) if written else None
        print_json(d)
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.solve import solution_text

        write_output(solution_text(sol, budget=sol.budget, ranges=sol.ranges))
        if written:
            print("\n" + one_line(f"written: {written}"))
        elif args.write:
            print("\nnothing written: no addition reaches this target", file=sys.stderr)
    for n in said:
        note(n)
    return 1 if sol.status == "too_concentrated" else 0


def _is_input(out, plan) -> bool:
    """Is ``out`` the plan file the command read (the same name, a link to it or another hard link)?"""
    import os

    try:
        return plan.path is not None and os.path.samefile(out, plan.path)
    except (OSError, ValueError):
        return False
