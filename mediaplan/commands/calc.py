"""mediaplan calc: the water relations of a medium."""

from __future__ import annotations

import sys

from mediaplan.commands.common import add_recipe_arguments, catalog_from, print_json, recipe_from


def add_arguments(p) -> None:
    add_recipe_arguments(p)
    p.add_argument("--cells", metavar="REF", help='cell reference for tonicity: "450 mOsm/kg" or "-1.1 MPa"')
    p.add_argument("--json", action="store_true", help="print one JSON object")


def cell_reference(text: str | None, plan, T: float) -> float | None:
    """Cell reference [mOsm/kg] from --cells or the plan's [cells] table."""
    from mediaplan.thermo.potential import osmolality_from_potential
    from mediaplan.units import parse_target

    if text is None and plan is not None and plan.cells:
        text = plan.cells.get("osmolality") or plan.cells.get("potential")
    if not text:
        return None
    t = parse_target(str(text), field="cells")
    if t.kind == "osmolality":
        return t.value * 1000.0
    return float(osmolality_from_potential(t.value, T)) * 1000.0


def run(args) -> int:
    from mediaplan.evaluate import evaluate
    from mediaplan.report import evaluation_text

    catalog = catalog_from(args)
    notes: list[str] = []
    plan, recipe = recipe_from(args, catalog, notes=notes)
    tol = 0.05
    if plan is not None and plan.cells and "tolerance" in plan.cells:
        tol = float(plan.cells["tolerance"])
    ref = cell_reference(args.cells, plan, recipe.temperature_k)
    ev = evaluate(recipe, catalog, cell_reference_mosmol=ref, isotonic_tolerance=tol)
    if args.json:
        d = ev.to_dict()
        d["notes"] = notes
        d["title"] = plan.title if plan else None
        print_json(d)
    else:
        for n in notes:
            print(f"note: {n}", file=sys.stderr)
        print(evaluation_text(ev, plan.title if plan else None))
    return 0
