"""mediaplan check: validate plan files (for CI in a facility's plan repository).

One line per plan, ``PLAN: ok`` or ``PLAN: invalid: reason``; exit status 1 when any plan is invalid
(2 when ``--stamp`` could not write a plan: its line on standard error says why).
A plan is invalid when it cannot be read, a component does not resolve, the models cannot evaluate
it, or an embedded catalog entry conflicts with the local catalog. Catalog differences against the
plan's recorded provenance and model warnings are reported on the same line (``--strict`` makes
catalog differences invalid too).
"""

from __future__ import annotations

import sys

from mediaplan.cli.common import catalog_from, print_json


def add_arguments(p) -> None:
    p.add_argument("plans", nargs="+", metavar="PLAN", help="plan files to check")
    p.add_argument("--json", action="store_true", help="print a JSON list, one object per plan")
    p.add_argument("--strict", action="store_true", help="catalog differences make a plan invalid")
    p.add_argument("--trust", choices=("plan", "local"),
                   help="settle conflicts between a plan's embedded entries and the local catalog")
    p.add_argument("--stamp", action="store_true",
                   help="record the catalog entries each valid plan uses in its [provenance] table (edits the "
                        "file in place, keeping its comments; a numbered backup keeps the previous version)")
    p.add_argument("--embed", action="store_true", help="with --stamp: embed a full copy of each entry")


def check_one(path: str, catalog, *, strict: bool = False, trust: str | None = None) -> dict:
    """The verdict on one plan file: status ok/invalid, reason, differences, warnings, notes."""
    from mediaplan.files.sharing import compare_provenance, mismatch_notes, read_plan
    from mediaplan.medium.errors import MediaplanError
    from mediaplan.medium.evaluate import evaluate

    out: dict = {"path": path, "status": "ok", "reason": None, "differences": [], "warnings": [], "notes": []}
    try:
        plan, cat, notes = read_plan(path, catalog, trust=trust)
        # the warnings every command gives (files/sharing.MISMATCH_POLICY); --strict makes the plan invalid below
        out["notes"] = [*plan.read_notes, *notes, *mismatch_notes(plan, cat)]
        out["title"] = plan.title
        diffs = compare_provenance(plan, catalog)
        out["differences"] = [d.to_dict() for d in diffs]
        ev = evaluate(plan.recipe, cat)
        out["warnings"] = [w.to_dict() for w in ev.warnings]
        out["osmolality_mosmol_per_kg"] = _finite(ev.osmolality_mosmol_per_kg)
        out["osmotic_potential_mpa"] = _finite(ev.osmotic_potential_mpa)
        if plan.readings:
            out["readings"] = readings_of(plan)
        out["_plan"] = plan
        out["_catalog"] = cat
        blocking = [d for d in diffs if d.status == "missing" or (strict and d.status != "embedded-only")]
        if blocking:
            out["status"] = "invalid"
            out["reason"] = blocking[0].text() + (f" (and {len(blocking) - 1} more)" if len(blocking) > 1 else "")
    except MediaplanError as exc:
        if exc.file and exc.file == path:
            exc.file = None  # the line already starts with the path
        from mediaplan.cli.common import in_cli_words

        out["status"] = "invalid"
        out["reason"] = str(in_cli_words(exc))  # the flag that settles it named, as every command does
    except Exception as exc:  # noqa: BLE001 - one plan, whatever it holds, never costs the others a verdict
        out.update(status="invalid", reason=_unexpected(exc))
        out.pop("_plan", None)
        out.pop("_catalog", None)
    return out


def readings_of(plan) -> list[dict]:
    """The osmometer readings recorded in a plan (``[[readings]]``), as plain data."""
    return [{"value": r.value, "instrument": r.instrument, "date": str(r.date) if r.date is not None else None,
             "operator": r.operator, "note": r.note} for r in plan.readings]


def _finite(x):
    """A number for JSON: None for NaN or infinity (JSON has neither)."""
    import math

    return x if isinstance(x, (int, float)) and math.isfinite(x) else None


def _unexpected(exc: BaseException) -> str:
    """The reason of a plan that raised what no check foresaw: the error, logged with its traceback."""
    from mediaplan.cli.main import log_crash

    where = log_crash(exc)
    text = str(exc)
    if len(text) > 200:
        text = text[:200] + "…"
    return f"unexpected error {type(exc).__name__}: {text}" + (f"; details in {where}" if where else "")


def _json_ready(obj, depth: int = 0):
    """``obj`` with every NaN or infinity replaced by None, so that ``--json`` always prints."""
    if depth > 20:
        return None
    if isinstance(obj, float):
        return _finite(obj)
    if isinstance(obj, dict):
        return {k: _json_ready(v, depth + 1) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_json_ready(v, depth + 1) for v in obj]
    return obj


def run(args) -> int:
    from mediaplan.cli.common import note
    from mediaplan.files.sharing import shadow_notes

    catalog = catalog_from(args)
    for n in shadow_notes(catalog):
        note(n)
    results = [check_one(p, catalog, strict=args.strict, trust=args.trust) for p in args.plans]  # one verdict each
    unstamped = 0
    if args.stamp or args.embed:
        for r in results:
            if r["status"] == "ok":
                try:
                    unstamped += not stamp_one(r, embed=args.embed)
                except Exception as exc:  # noqa: BLE001 - the other plans are still stamped and reported
                    from mediaplan.views.safe_text import one_line

                    reason = _unexpected(exc)
                    print(one_line(f"mediaplan: {r['path']}: not stamped: {reason}"), file=sys.stderr)
                    r["notes"].append(f"not stamped: {reason}")
                    unstamped += 1
    for r in results:
        r.pop("_plan", None)
        r.pop("_catalog", None)
    if args.json:
        print_json(_json_ready(results))
    else:
        from mediaplan.files.output import write_output
        from mediaplan.views.check import check_text

        write_output(check_text(results))
    if unstamped:
        return 2
    return 1 if any(r["status"] != "ok" for r in results) else 0


def stamp_one(r: dict, *, embed: bool) -> bool:
    """Record the provenance of one valid plan in its own file (an edit: comments, spellings and the rest of
    the file stay); say on standard error what was written, or why nothing was. Returns whether it was."""
    from mediaplan.cli.common import error_line, note
    from mediaplan.files import planfile
    from mediaplan.files.sharing import stamp
    from mediaplan.medium.errors import MediaplanError

    plan = r["_plan"]
    stamped = stamp(plan, r["_catalog"], embed=embed)
    said: list[str] = []
    try:
        planfile.write(stamped, plan.path, catalog=r["_catalog"], notes=said)
    except MediaplanError as exc:
        exc.message = f"not stamped: {exc.message}"
        print(error_line(exc), file=sys.stderr)
        r["notes"].append(str(exc))
        return False
    prov = stamped.provenance
    n_comp, n_media = len(prov.components or {}), len(prov.media or {})
    what = (f"{n_comp} component{'s' if n_comp != 1 else ''}"
            + (f" and {n_media} medium" if n_media == 1 else f" and {n_media} media" if n_media else "")
            + (", with embedded copies" if embed else ""))
    if stamped.disk_digest == plan.disk_digest:
        note(f"{plan.path}: [provenance] already up to date ({what}, recorded {prov.recorded}); file unchanged")
    else:
        note(f"{plan.path}: [provenance] written ({what}, recorded {prov.recorded})")
    for n in said:
        note(n)
    r["notes"].append("provenance recorded" + (" with embedded entries" if embed else ""))
    return True
