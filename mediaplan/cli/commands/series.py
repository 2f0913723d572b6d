"""mediaplan series: a plasmolysis series evenly spaced in water potential, and how to make it."""

from __future__ import annotations

import sys

from mediaplan.cli.common import (
    add_mismatch_arguments,
    add_recipe_arguments,
    catalog_from,
    plan_under_policy,
    print_json,
    recipe_from,
)

DEFAULT_VOLUME = "50 mL"


def add_arguments(p) -> None:
    add_recipe_arguments(p)
    p.epilog = ("The background (--plan, --base, ID=AMOUNT items) is the solvent of every level; without one "
                "the osmoticum is dissolved in water.")
    p.add_argument("--with", dest="osmoticum", required=True, metavar="ID",
                   help="the osmoticum (mannitol, sorbitol, sucrose, KNO3, ...)")
    p.add_argument("--from", dest="start", metavar="PSI", help='first level, e.g. "-0.2 MPa" (or "100 mOsm/kg")')
    p.add_argument("--to", dest="stop", metavar="PSI", help='last level, e.g. "-1.6 MPa"')
    p.add_argument("--around", metavar="PSI", help='centre of the series, e.g. "-1.0 MPa" (with --step)')
    p.add_argument("--step", metavar="DPSI", help='spacing of levels around the centre, e.g. "0.1 MPa"')
    p.add_argument("--steps", type=int, default=8, metavar="N", help="number of levels (default 8)")
    p.add_argument("--volume", metavar="V", help=f'volume of each level, e.g. "50 mL" (default {DEFAULT_VOLUME} or '
                                                "the plan's volume)")
    p.add_argument("--preparation", choices=("in-background", "weighed-together"), default="in-background",
                   help="how each level is made: the osmoticum dissolved in the ready-made background and made up "
                        "to volume with it (default), or the background's components and the osmoticum weighed "
                        "together and made up to volume with water")
    p.add_argument("--stock", metavar="AMOUNT",
                   help='also give volumes of a stock of the osmoticum in the background, e.g. "1 mol/kg"')
    out = p.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print one JSON object")
    out.add_argument("--csv", action="store_true", help="print the levels as CSV (with empty count columns)")
    p.add_argument("--write", metavar="PLAN", help="save the background and the series (with empty counts) "
                                                   "as a plan file (written back into the --plan file when it is "
                                                   "the same, keeping its comments)")
    p.add_argument("--force", action="store_true", help="with --write: overwrite an existing file")
    add_mismatch_arguments(p)


def _potential(text: str, field: str, T: float) -> float:
    """A level as water potential [Pa]; an osmolality is converted at T [K]."""
    from mediaplan.medium.units import parse_target
    from mediaplan.thermo.potential import potential_from_osmolality

    t = parse_target(text, field=field)
    return t.value if t.kind == "potential" else float(potential_from_osmolality(t.value, T))


def _step(text: str) -> float:
    """A spacing in potential [Pa], sign ignored (parsed as a potential by the one unit parser)."""
    from mediaplan.medium.errors import AmountError
    from mediaplan.medium.units import normalise, parse_target

    t = parse_target("-" + normalise(text).strip().lstrip("+-"), field="--step")
    if t.kind != "potential":
        raise AmountError(f"step {text!r} is not a pressure", field="--step", hint='write it like "0.1 MPa"')
    return abs(t.value)


def build_design(args, catalog):
    """(plan, background recipe, design, catalog in force) from the command's arguments; a plan is read
    under the one catalog-mismatch policy (its notes said on standard error)."""
    from mediaplan.cli.common import note
    from mediaplan.files.sharing import shadow_notes
    from mediaplan.medium.errors import AmountError
    from mediaplan.tasks.plasmolysis import design_series, potentials_around, potentials_between

    if getattr(args, "plan", None):
        policy: list[str] = list(shadow_notes(catalog))
        _, catalog = plan_under_policy(args.plan, catalog, args, policy)
        for n in policy:
            note(n)
    plan, recipe = recipe_from(args, catalog)
    if args.volume or plan is None:
        recipe = recipe.with_settings(volume=args.volume or DEFAULT_VOLUME)
    T = recipe.temperature_k
    if args.around is not None:
        if args.start is not None or args.stop is not None:
            raise AmountError("give either --from/--to or --around/--step, not both", field="--around")
        if args.step is None:
            raise AmountError("--around needs --step", field="--step", hint='e.g. --around "-1.0 MPa" --step "0.1 MPa"')
        centre = _potential(args.around, "--around", T)
        psi = potentials_around(centre, _step(args.step), args.steps)
        spacing = f"{args.steps} levels around {args.around}, {args.step} apart"
    else:
        if args.start is None or args.stop is None:
            raise AmountError("say where the series runs", field="--from",
                              hint='e.g. --from "-0.2 MPa" --to "-1.6 MPa" --steps 8, or --around and --step')
        psi = potentials_between(_potential(args.start, "--from", T), _potential(args.stop, "--to", T), args.steps)
        spacing = f"{args.steps} levels evenly spaced in water potential from {args.start} to {args.stop}"
    design = design_series(recipe, args.osmoticum, psi, catalog=catalog, stock=args.stock, spacing=spacing,
                           preparation=getattr(args, "preparation", "in-background").replace("-", "_"))
    return plan, recipe, design, catalog


def csv_comments(design, recipe, plan, args) -> list[str]:
    """The ``# key: value`` lines above the counting sheet, so that ``mediaplan fit`` reads the series as it
    was made: osmoticum, temperature, background base and strength, and the plan (the one written or read).
    A strength scope other than a new recipe's is stated too (``# strength_scope: all``)."""
    from mediaplan.files.counts import header_comments
    from mediaplan.medium.recipe import DEFAULT_STRENGTH_SCOPE

    source = args.write or getattr(args, "plan", None)
    lines = header_comments(osmoticum=design.osmoticum, temperature=recipe.temperature, base=recipe.base,
                            strength=recipe.strength, plan=str(source) if source else None)
    if recipe.base and recipe.strength != 1 and recipe.strength_scope != DEFAULT_STRENGTH_SCOPE:
        lines.append(f"# strength_scope: {recipe.strength_scope}")
    return lines


def run(args) -> int:
    from pathlib import Path

    from mediaplan.cli.common import note
    from mediaplan.files import planfile
    from mediaplan.files.plan_tables import series_record_of
    from mediaplan.files.planfile import Plan
    from mediaplan.views.safe_text import one_line

    catalog = catalog_from(args)
    plan, recipe, design, catalog = build_design(args, catalog)
    if args.json:
        from mediaplan.tasks.uncertainty import with_level_intervals

        print_json(with_level_intervals(design, recipe, catalog).to_dict())
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.series import design_csv, design_text

        if args.csv:
            write_output(design_csv(design, csv_comments(design, recipe, plan, args)))
        else:
            from mediaplan.tasks.uncertainty import with_level_intervals

            write_output(design_text(design, with_level_intervals(design, recipe, catalog).level_intervals))
    if args.write:
        if plan is None:
            plan = Plan(recipe=recipe, title=f"Plasmolysis series: {design.osmoticum} in {design.background}")
        plan = plan.with_recipe(recipe)
        plan.series = series_record_of(design)
        if plan.path is None or plan.path.resolve() != Path(args.write).resolve():
            plan.path, plan.disk_digest = None, None
        said: list[str] = []
        path = planfile.write(plan, args.write, force=args.force, catalog=catalog, notes=said)
        print(one_line(f"saved {path} (fill in plasmolysed and total per level, then: mediaplan fit {path})"),
              file=sys.stderr)
        for n in said:
            note(n)
    return 0
