"""Catalog entries for people and scripts: search results, one entry in full, and the check summary.

The dicts are the JSON of ``mediaplan catalog search|show --json``; the texts are what the terminal shows.
"""

from __future__ import annotations

from mediaplan.medium.catalog import Catalog
from mediaplan.views.safe_text import terminal
from mediaplan.views.table import Column, pairs_table, text_table

#: entry fields printed as a list under their name rather than as one value
_LISTED = ("components", "optional")


def search_rows(catalog: Catalog, text: str) -> list[dict]:
    """Components whose id, name, formula or alias contains ``text`` (all of them, by id, for no text):
    ``{"id", "name", "formula", "group"}`` each."""
    found = catalog.search(text) if text else sorted(catalog.components.values(), key=lambda c: c.id)
    return [{"id": c.id, "name": c.name, "formula": c.formula, "group": c.group} for c in found]


def search_text(rows: list[dict]) -> str:
    """Search results as lines ``id  name  formula  group`` (names cut at 40 characters)."""
    table = [[r["id"], r["name"], r["formula"] or "", r["group"]] for r in rows]
    return terminal("\n".join(text_table([Column(), Column(max_width=40, cut=""), Column(), Column()], table, header=False)))


def entry_dict(catalog: Catalog, cid: str) -> dict:
    """Every field of a component (or a medium) with its sources and hazard; units in the key names
    (``molar_mass_g_per_mol``, ``solubility_g_per_100g_water_25c`` ...)."""
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


def _value(v) -> str:
    if isinstance(v, dict):
        return ", ".join(f"{k} {n:g}" if isinstance(n, float) else f"{k}: {n}" for k, n in v.items()) or "—"
    if isinstance(v, list):
        return ", ".join(str(x) for x in v) or "—"
    return "—" if v is None else (f"{v:g}" if isinstance(v, float) else str(v))


def entry_text(entry: dict) -> str:
    """An :func:`entry_dict` as lines ``field  value``; a medium's lines and a component's sources listed
    below their heading."""
    d = dict(entry)
    sources = d.pop("sources", {}) if d["kind"] == "component" else {}
    width = max(len(k) for k in d)
    out: list[str] = []
    pairs: list[tuple[str, str]] = []
    for k, v in d.items():
        if k not in _LISTED:
            pairs.append((k, _value(v)))
            continue
        out += pairs_table(pairs, key_width=width)
        pairs = []
        out.append(f"{k}:")
        out += [f"  {ln['component']}: {ln['amount']} [{ln['confidence']}]" +
                (f" — {ln['note']}" if ln.get("note") else "") for ln in v]
    out += pairs_table(pairs, key_width=width)
    if sources:
        out.append("sources:")
        out += [f"  {k}: {v}" for k, v in sources.items()]
    return terminal("\n".join(out))


def check_text(problems: list[str], counts: dict) -> str:
    """The catalog check: one line per problem, then a summary of what was checked (when it loaded)."""
    out = list(problems)
    if counts:
        out.append(f"{counts['components']} components and {counts['media']} media in "
                   f"{len(counts['folders'])} folder(s); {counts['values_from_memory']} values marked from memory "
                   f"(unverified); {len(problems)} problem(s)")
    return terminal("\n".join(out))
