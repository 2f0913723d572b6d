"""mediaplan diff: what changed between two plans, in components and in results (exit status 1 when they
differ, 0 when they make the same medium)."""

from __future__ import annotations

from mediaplan.cli.common import add_mismatch_arguments, catalog_from, plan_under_policy, print_json


def add_arguments(p) -> None:
    p.add_argument("a", metavar="A", help="first plan")
    p.add_argument("b", metavar="B", help="second plan")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    add_mismatch_arguments(p)
    p.epilog = ("Exit status: 0 when the two plans make the same medium (same settings, components and results; "
                "titles and notes aside), 1 when they differ, 2 for bad input.")


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.files.sharing import shadow_notes
    from mediaplan.tasks.compare import plan_diff

    catalog = catalog_from(args)
    for n in shadow_notes(catalog):
        note(n)
    na: list[str] = []
    nb: list[str] = []
    pa, ca = plan_under_policy(args.a, catalog, args, na)  # files/sharing.MISMATCH_POLICY, each plan
    pb, cb = plan_under_policy(args.b, catalog, args, nb)
    for path, n in [*((args.a, n) for n in na), *((args.b, n) for n in nb)]:
        note(f"{path}: {n}")
    d = plan_diff(pa, ca, pb, cb)
    if pa.readings or pb.readings:
        from mediaplan.cli.commands.check import readings_of

        d["readings"] = {"a": readings_of(pa), "b": readings_of(pb)}
    if args.json:
        print_json(d)
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.diff import diff_text

        write_output(diff_text(d))
    return 0 if d["same_medium"] else 1
