"""mediaplan catalog: search, show or check the component catalog (bundled plus facility folders)."""

from __future__ import annotations

import sys

from mediaplan.cli.common import print_json

_NUMBER_FIELDS = ("molar_mass", "solubility", "apparent_molar_volume", "density", "reflection_coefficient")


def add_arguments(p) -> None:
    sub = p.add_subparsers(dest="action", metavar="ACTION", parser_class=type(p))
    for name, helptext, arg, arghelp in (
            ("search", "list components whose id, name, formula or alias contains TEXT", "text", "TEXT"),
            ("show", "print every field of a component or medium, with sources and hazard", "text", "ID"),
            ("check", "validate the catalog in force and report numbers without a source", None, None)):
        sp = sub.add_parser(name, help=helptext, description=helptext)
        if arg:
            sp.add_argument(arg, nargs="?" if name == "search" else None, default="", metavar=arghelp)
        sp.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(action="search", text="", json=False)


def _extra(args) -> list[str]:
    return getattr(args, "catalog", []) or []


def check(extra) -> tuple[list[str], dict]:
    """Problems of the catalog in force (load errors, numbers without a source); and counts.

    A catalog that does not load is checked entry by entry, so that every bad entry is listed (an
    implausible number, a missing field...), not only the first."""
    from mediaplan.files.catalog import default_folders, entry_problems, load_catalog
    from mediaplan.medium.errors import CatalogError

    try:
        catalog = load_catalog(extra=extra)
    except CatalogError as exc:
        try:
            every = entry_problems([*default_folders(), *extra])
        except CatalogError:
            every = []
        return (every if str(exc) in every else [str(exc), *every]), {}
    problems = []
    unverified = 0
    for c in catalog.components.values():
        for f in _NUMBER_FIELDS:
            if getattr(c, f) is None:
                continue
            src = c.source_of(f)
            if not src or not str(src).strip():
                problems.append(f"{c.file}:{c.line}: {c.id}: {f} = {getattr(c, f):g} has no source")
            elif "from memory" in str(src).lower():
                unverified += 1
    for m in catalog.media.values():
        if not m.citation.strip():
            problems.append(f"{m.file}: medium {m.id} has no citation")
    counts = {"components": len(catalog.components), "media": len(catalog.media),
              "folders": [str(f) for f in catalog.folders], "shadowed": list(catalog.shadowed),
              "values_from_memory": unverified}
    return problems, counts


def run(args) -> int:
    from mediaplan.cli.common import catalog_from, note
    from mediaplan.files.output import write_output
    from mediaplan.views import catalog as view
    from mediaplan.views.safe_text import one_line

    if args.action == "check":
        problems, counts = check(_extra(args))
        if args.json:
            print_json({"ok": not problems, "problems": problems, **counts})
        else:
            text = view.check_text(problems, counts)
            if text:
                write_output(text)
            for s in counts.get("shadowed", []):
                note(f"facility catalog entry in force: {s}")
        return 1 if problems else 0
    catalog = catalog_from(args)
    if args.action == "show":
        if not args.text:
            from mediaplan.medium.errors import MediaplanError

            raise MediaplanError("catalog show needs an ID", hint="e.g. mediaplan catalog show sucrose")
        d = view.entry_dict(catalog, args.text)
        if args.json:
            print_json(d)
        else:
            write_output(view.entry_text(d))
        return 0
    rows = view.search_rows(catalog, args.text or "")
    if args.json:
        print_json(rows)
        return 0
    if not rows:
        print(one_line(f"nothing matches '{args.text}'"), file=sys.stderr)
        return 1
    write_output(view.search_text(rows))
    return 0
