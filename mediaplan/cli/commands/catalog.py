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


def search(catalog, text: str) -> list[dict]:
    return [{"id": c.id, "name": c.name, "formula": c.formula, "group": c.group}
            for c in (catalog.search(text) if text else sorted(catalog.components.values(), key=lambda c: c.id))]


def show(catalog, cid: str) -> dict:
    """Every field of a component (or a medium) with its sources and hazard."""
    if cid in catalog.media or (cid not in catalog.components and cid.lower() in {k.lower() for k in catalog.media}):
        m = catalog.medium(cid)
        return {"kind": "medium", "id": m.id, "name": m.name, "citation": m.citation, "doi": m.doi,
                "confidence": m.confidence, "ph": m.ph, "file": m.file, "digest": m.digest, "notes": list(m.notes),
                "components": [{"component": ln.component, "amount": ln.amount.text, "confidence": ln.confidence,
                                "note": ln.note} for ln in m.lines],
                "optional": [{"component": ln.component, "amount": ln.amount.text, "confidence": ln.confidence}
                             for ln in m.optional]}
    c = catalog.resolve(cid, field="ID").component
    forms = [o.id for o in catalog.components.values() if c.substance and o.substance == c.substance and o.id != c.id]
    return {"kind": "component", "id": c.id, "name": c.name, "formula": c.formula, "aliases": list(c.aliases),
            "cas": c.cas, "group": c.group, "molar_mass_g_per_mol": c.molar_mass, "hydrate_water": c.hydrate_water,
            "substance": c.substance, "other_forms": forms, "default_form": c.default_form,
            "species": {s: n for s, n in c.species},
            "solubility_g_per_100g_water_25c": c.solubility,
            "apparent_molar_volume_cm3_per_mol": c.apparent_molar_volume, "density_g_per_cm3": c.density,
            "reflection_coefficient": c.reflection_coefficient, "hazard": c.hazard, "sources": dict(c.sources),
            "file": f"{c.file}:{c.line}", "digest": c.digest}


def check(extra) -> tuple[list[str], dict]:
    """Problems of the catalog in force (load errors, numbers without a source); and counts."""
    from mediaplan.files.catalog import load_catalog
    from mediaplan.medium.errors import CatalogError

    try:
        catalog = load_catalog(extra=extra)
    except CatalogError as exc:
        return [str(exc)], {}
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


def _value(v) -> str:
    if isinstance(v, dict):
        return ", ".join(f"{k} {n:g}" if isinstance(n, float) else f"{k}: {n}" for k, n in v.items()) or "—"
    if isinstance(v, list):
        return ", ".join(str(x) for x in v) or "—"
    return "—" if v is None else (f"{v:g}" if isinstance(v, float) else str(v))


def run(args) -> int:
    from mediaplan.cli.common import catalog_from

    if args.action == "check":
        problems, counts = check(_extra(args))
        if args.json:
            print_json({"ok": not problems, "problems": problems, **counts})
        else:
            for p in problems:
                print(p)
            if counts:
                print(f"{counts['components']} components and {counts['media']} media in "
                      f"{len(counts['folders'])} folder(s); {counts['values_from_memory']} values marked from memory "
                      f"(unverified); {len(problems)} problem(s)")
                for s in counts["shadowed"]:
                    print(f"note: facility catalog entry in force: {s}", file=sys.stderr)
        return 1 if problems else 0
    catalog = catalog_from(args)
    if args.action == "show":
        if not args.text:
            from mediaplan.medium.errors import MediaplanError

            raise MediaplanError("catalog show needs an ID", hint="e.g. mediaplan catalog show sucrose")
        d = show(catalog, args.text)
        if args.json:
            print_json(d)
            return 0
        sources = d.pop("sources", {}) if d["kind"] == "component" else {}
        w = max(len(k) for k in d)
        for k, v in d.items():
            if k == "components" or k == "optional":
                print(f"{k}:")
                for ln in v:
                    print(f"  {ln['component']}: {ln['amount']} [{ln['confidence']}]" +
                          (f" — {ln['note']}" if ln.get("note") else ""))
                continue
            print(f"{k.ljust(w)}  {_value(v)}")
        if sources:
            print("sources:")
            for k, v in sources.items():
                print(f"  {k}: {v}")
        return 0
    rows = search(catalog, args.text or "")
    if args.json:
        print_json(rows)
        return 0
    if not rows:
        print(f"nothing matches '{args.text}'", file=sys.stderr)
        return 1
    wi = max(len(r["id"]) for r in rows)
    wn = min(max(len(r["name"]) for r in rows), 40)
    wf = max(len(r["formula"] or "") for r in rows)
    for r in rows:
        print(f"{r['id'].ljust(wi)}  {r['name'][:40].ljust(wn)}  {(r['formula'] or '').ljust(wf)}  {r['group']}")
    return 0
