"""Plans that travel between labs: which catalog entries a plan used, and what differs elsewhere.

A plan's ``[provenance]`` table records the digest (content hash) of every catalog entry the recipe
used, and on request a full copy of each entry::

    [provenance]
    recorded = "2024-05-02"
    mediaplan = "0.1.0"

    [provenance.components]
    ammonium_nitrate = "3f0c9e…"           # Component.digest

    [provenance.media]
    ms1962 = "a81d…"                       # Medium.digest

    [provenance.embedded.components.ammonium_nitrate]   # only with embedding
    name = "ammonium nitrate"
    ...

A facility opening the plan with another catalog is told exactly which entries differ
(:func:`compare_provenance`); embedded entries fill in components its catalog lacks, and an
embedded entry that differs from the local one is a conflict the user must settle.

A Plan holds the table as a :class:`~mediaplan.files.plan_tables.Provenance` record
(:func:`provenance_record`); :func:`provenance_of` gives the same record as the TOML table, for the
documents that print it.
"""

from __future__ import annotations

import datetime
import hashlib
import json
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from mediaplan.files.catalog import parse_component, parse_medium
from mediaplan.files.plan_tables import Provenance, provenance_table
from mediaplan.medium.catalog import Catalog, Component, Medium
from mediaplan.medium.errors import CatalogError, MediaplanError
from mediaplan.medium.recipe import Recipe

#: keys of a component entry kept in an embedded copy (everything the loader reads)
_COMPONENT_KEYS = ("name", "formula", "aliases", "cas", "group", "molar_mass", "hydrate_water", "substance",
                   "default_form", "species", "solubility", "apparent_molar_volume", "density",
                   "reflection_coefficient", "hazard")
_MEDIUM_KEYS = ("name", "citation", "doi", "confidence", "ph", "notes")


class EmbeddedConflictError(MediaplanError):
    """An entry embedded in a plan differs from the local catalog's entry of the same id."""


@dataclass(frozen=True)
class Difference:
    """One catalog entry that differs between a plan's record and the local catalog."""

    kind: str  # "component" or "medium"
    id: str
    status: str  # "changed", "missing", "embedded-only", "conflict"
    recorded: str | None  # digest in the plan
    local: str | None  # digest in the local catalog
    local_file: str | None = None
    fields: tuple[tuple[str, Any, Any], ...] = ()  # (field, plan's value, local value) when a copy is embedded

    def text(self) -> str:
        changed = "; ".join(f"{f} {_shown(a)} in the plan, {_shown(b)} here" for f, a, b in self.fields[:4])
        if changed:
            changed = f": {changed}" + (" …" if len(self.fields) > 4 else "")
        if self.status == "missing":
            return f"{self.kind} {self.id} is not in this catalog"
        if self.status == "embedded-only":
            return f"{self.kind} {self.id} is not in this catalog; the plan's embedded copy is used"
        if self.status == "conflict":
            return (f"{self.kind} {self.id}: the plan's embedded copy differs from "
                    f"{self.local_file or 'the local entry'}{changed}")
        return (f"{self.kind} {self.id} differs (plan {self.recorded}, here {self.local}"
                + (f" from {self.local_file}" if self.local_file else "") + ")" + changed)

    def to_dict(self) -> dict:
        return {"kind": self.kind, "id": self.id, "status": self.status, "recorded": self.recorded,
                "local": self.local, "local_file": self.local_file, "message": self.text(),
                "fields": [{"field": f, "plan": a, "local": b} for f, a, b in self.fields]}


def _shown(value: Any) -> str:
    return "none" if value is None else str(value)


def _field_changes(kind: str, entry: Any, local) -> tuple[tuple[str, Any, Any], ...]:
    """(field, the plan's embedded value, the local value) for each field that differs."""
    if not isinstance(entry, dict):
        return ()
    mine = embedded_entry(local) if kind == "component" else embedded_medium(local)
    keys = list(mine) + [k for k in entry if k not in mine]
    return tuple((k, entry.get(k), mine.get(k)) for k in keys if entry.get(k) != mine.get(k))


# ---- recording --------------------------------------------------------------------------------------
def _used(recipe: Recipe, catalog: Catalog) -> tuple[list[Component], list[Medium]]:
    comps = [ln.component for ln in recipe.lines(catalog)]
    # a base line removed by "0 g/L" is still part of what the plan means: record it too
    seen = {c.id for c in comps}
    media = [catalog.medium(recipe.base)] if recipe.base else []
    for m in media:
        for ml in m.lines:
            if ml.component not in seen and ml.component in catalog.components:
                comps.append(catalog.components[ml.component])
                seen.add(ml.component)
    for cid, _ in recipe.amounts:
        c = catalog.resolve(cid).component
        if c.id not in seen:
            comps.append(c)
            seen.add(c.id)
    return comps, media


def provenance_record(recipe: Recipe, catalog: Catalog, *, embed: bool = False,
                      today: datetime.date | None = None) -> Provenance:
    """A plan's provenance: digests of the catalog entries the recipe uses, and copies with ``embed``."""
    from mediaplan import __version__

    comps, media = _used(recipe, catalog)
    comps = sorted(comps, key=lambda c: c.id)
    embedded = None
    if embed:
        embedded = {"components": {c.id: embedded_entry(c) for c in comps}}
        if media:
            embedded["media"] = {m.id: embedded_medium(m) for m in media}
    return Provenance(recorded=(today or datetime.date.today()).isoformat(), mediaplan=__version__,
                      components={c.id: c.digest for c in comps},
                      media={m.id: m.digest for m in media} if media else None, embedded=embedded)


def provenance_of(recipe: Recipe, catalog: Catalog, *, embed: bool = False,
                  today: datetime.date | None = None) -> dict:
    """The ``[provenance]`` table of :func:`provenance_record`, as a plan file writes it (for printing)."""
    return provenance_table(provenance_record(recipe, catalog, embed=embed, today=today))


def _drop_none(obj: Any) -> Any:
    """TOML has no null: leave out keys without a value (the loader reads absent as null)."""
    if isinstance(obj, dict):
        return {str(k): _drop_none(v) for k, v in obj.items() if v is not None}
    if isinstance(obj, (list, tuple)):
        return [_drop_none(v) for v in obj if v is not None]
    return obj


def embedded_entry(c: Component) -> dict:
    """A self-contained copy of a component entry (sources written out in full)."""
    raw = {k: getattr(c, k) for k in _COMPONENT_KEYS}
    raw["aliases"] = list(c.aliases)
    raw["species"] = {s: n for s, n in c.species}
    raw["hydrate_water"] = c.hydrate_water
    raw["source"] = dict(sorted(c.sources.items()))
    if c.solubility_table:  # the rows with their sources written out (a plan kept cold needs them)
        raw["solubility_table"] = [{"temperature_c": round(p.temperature_k - 273.15, 9),
                                    "g_per_100g_water": p.g_per_100g_water, "source": p.source}
                                   for p in c.solubility_table]
    return _drop_none(raw)


def embedded_medium(m: Medium) -> dict:
    raw: dict[str, Any] = {k: getattr(m, k) for k in _MEDIUM_KEYS}
    raw["notes"] = list(m.notes)

    def lines(ls):
        return [_drop_none({"component": ln.component, "amount": ln.amount.text, "confidence": ln.confidence,
                            "note": ln.note}) for ln in ls]

    raw["components"] = lines(m.lines)
    if m.optional:
        raw["optional"] = lines(m.optional)
    return _drop_none(raw)


def canonical_digest(entry: dict) -> str:
    """Hash of an embedded entry, independent of key order and of number spelling (1 vs 1.0)."""
    def norm(o):
        if isinstance(o, dict):
            return {str(k): norm(v) for k, v in sorted(o.items())}
        if isinstance(o, (list, tuple)):
            return [norm(v) for v in o]
        if isinstance(o, bool) or o is None:
            return o
        if isinstance(o, (int, float)):
            return float(o)
        return str(o)

    return hashlib.sha256(json.dumps(norm(_drop_none(entry)), sort_keys=True).encode()).hexdigest()[:16]


# ---- comparing --------------------------------------------------------------------------------------
def compare_provenance(plan, catalog: Catalog) -> list[Difference]:
    """Entries recorded in ``plan.provenance`` that differ from (or are absent in) ``catalog``."""
    prov = plan.provenance or Provenance()
    out: list[Difference] = []
    for kind, key, table in (("component", "components", catalog.components), ("medium", "media", catalog.media)):
        embedded = prov.embedded_entries(key)
        for eid, digest in (getattr(prov, key) or {}).items():
            local = table.get(eid)
            if local is None:
                out.append(Difference(kind, eid, "embedded-only" if eid in embedded else "missing", str(digest), None))
            elif embedded.get(eid) is not None and _embedded_conflicts(kind, embedded[eid], local):
                out.append(Difference(kind, eid, "conflict", str(digest), local.digest, local.file,
                                      _field_changes(kind, embedded[eid], local)))
            elif str(digest) != local.digest:
                out.append(Difference(kind, eid, "changed", str(digest), local.digest, local.file,
                                      _field_changes(kind, embedded.get(eid), local)))
    return out


#: The one catalog-mismatch policy of every command that reads a plan (see :func:`mismatch_notes`).
MISMATCH_POLICY = """A plan stamped with [provenance] records the catalog entries it used. Every command that reads a plan
compares them with the catalog in force:
- an entry the local catalog lacks is taken from the plan's embedded copy, and said so;
- an embedded copy that differs from the local entry is refused until you say which one to trust
  (--trust plan or --trust local);
- a recorded entry that differs from the local one is a warning naming the entry, each field that differs
  and both values (field values only when the plan embeds a copy), and the local entry is used;
  with --strict the command refuses instead (exit 2);
- components the stamp does not cover are named in a warning (stamp the plan again to cover them)."""


def mismatch_notes(plan, catalog: Catalog, *, strict: bool = False) -> list[str]:
    """The warnings of :data:`MISMATCH_POLICY` for ``plan`` read with ``catalog`` (the catalog in force,
    embedded entries merged); with ``strict`` the first difference is raised instead (exit 2)."""
    if plan is None or plan.provenance is None:
        return []
    diffs = [d for d in compare_provenance(plan, catalog) if d.status != "embedded-only"]
    where = str(plan.path) if getattr(plan, "path", None) else None
    if strict and diffs:
        raise MediaplanError(f"catalog differs from the plan's record: {diffs[0].text()}"
                             + (f" (and {len(diffs) - 1} more)" if len(diffs) > 1 else ""), file=where,
                             field="provenance", hint="use the catalog the plan was stamped with, or stamp "
                             "the plan again with this catalog (mediaplan check --stamp)")
    notes = [f"catalog differs from the plan's record: {d.text()}" for d in diffs]
    recorded = set(plan.provenance.components or {})
    uncovered = [cid for cid, _ in plan.recipe.amounts if cid not in recorded]
    if uncovered and recorded:
        notes.append("not covered by the plan's [provenance] stamp: " + ", ".join(uncovered[:6])
                     + (" …" if len(uncovered) > 6 else "") + " (stamp it again to record them)")
    return notes


def _embedded_conflicts(kind: str, entry: Any, local) -> bool:
    mine = embedded_entry(local) if kind == "component" else embedded_medium(local)
    return not isinstance(entry, dict) or canonical_digest(entry) != canonical_digest(mine)


# ---- using embedded entries ----------------------------------------------------------------------
def catalog_for(plan, catalog: Catalog, *, trust: str | None = None) -> tuple[Catalog, list[str]]:
    """The catalog to evaluate ``plan`` with: the local one plus the plan's embedded entries.

    Embedded entries fill in ids the local catalog lacks. An embedded entry that differs from the local
    one is a conflict: with ``trust="plan"`` the embedded copy wins, with ``trust="local"`` the local
    one, and without either an :class:`EmbeddedConflictError` names it. A malformed embedded entry
    raises CatalogError naming the plan and the entry.

    Returns (catalog, notes).
    """
    if trust not in (None, "plan", "local"):
        raise MediaplanError(f"unknown trust {trust!r}", field="trust", hint="use plan or local")
    prov = plan.provenance
    where = str(plan.path) if getattr(plan, "path", None) else "plan"
    if prov is None or not prov.embedded:
        return catalog, []
    comps = dict(catalog.components)
    media = dict(catalog.media)
    notes: list[str] = []
    for kind, key, table, parse in (("component", "components", comps, _parse_embedded_component),
                                    ("medium", "media", media, _parse_embedded_medium)):
        for eid, entry in prov.embedded_entries(key).items():
            obj = parse(eid, entry, where)
            local = table.get(eid)
            if local is None:
                table[eid] = obj
                notes.append(f"{kind} {eid} taken from the plan's embedded copy (not in this catalog)")
            elif _embedded_conflicts(kind, entry, local):
                if trust == "plan":
                    table[eid] = obj
                    notes.append(f"{kind} {eid}: the plan's embedded copy used instead of {local.file}")
                elif trust == "local":
                    notes.append(f"{kind} {eid}: the local entry ({local.file}) used, not the plan's embedded copy")
                else:
                    raise EmbeddedConflictError(
                        f"embedded {kind} '{eid}' differs from the local catalog entry in {local.file}",
                        file=where, field=f"provenance.embedded.{key}.{eid}",
                        hint=f"choose whether the plan's entry or the local catalog's entry of {eid} is trusted",
                        asks_for="trust")
    merged = Catalog(comps, media, catalog.pitzer, catalog.neutral, catalog.folders, list(catalog.shadowed))
    return merged, notes


def _parse_embedded_component(eid: str, entry: Any, where: str) -> Component:
    field = f"provenance.embedded.components.{eid}"
    if not isinstance(entry, dict):
        raise CatalogError(f"embedded component '{eid}' must be a table", file=where, field=field)
    try:
        c = parse_component({**entry, "id": eid}, where, {})
    except CatalogError as exc:
        raise CatalogError(f"embedded component '{eid}' is malformed: {exc.message}", file=where,
                           field=f"{field}.{exc.field}" if exc.field else field, hint=exc.hint) from None
    if c.molar_mass is None and c.species:
        raise CatalogError(f"embedded component '{eid}' lacks a molar_mass", file=where, field=field)
    return replace(c, line=0)


def _parse_embedded_medium(eid: str, entry: Any, where: str) -> Medium:
    field = f"provenance.embedded.media.{eid}"
    if not isinstance(entry, dict):
        raise CatalogError(f"embedded medium '{eid}' must be a table", file=where, field=field)
    try:
        return parse_medium({**entry, "id": eid}, where)
    except CatalogError as exc:
        raise CatalogError(f"embedded medium '{eid}' is malformed: {exc.message}", file=where,
                           field=field, hint=exc.hint) from None


def read_plan(path: str | Path, catalog: Catalog, *, trust: str | None = None):
    """Open a plan with its embedded entries in force: returns (plan, catalog, notes)."""
    from mediaplan.files import planfile

    bare = planfile.read(path)  # ids as written: an embedded component may be unknown locally
    cat, notes = catalog_for(bare, catalog, trust=trust)
    plan = planfile.read(path, catalog=cat)
    for cid, _ in plan.recipe.amounts:
        res = cat.resolve(cid)
        if res.note:
            notes.append(res.note)
    return plan, cat, notes


def shadow_notes(catalog: Catalog) -> list[str]:
    """One note per bundled entry that a facility or user catalog replaces."""
    return [f"facility catalog entry in force: {s}" for s in catalog.shadowed]


def stamp(plan, catalog: Catalog, *, embed: bool = False):
    """The plan with a fresh ``[provenance]`` table (returns a new Plan)."""
    return replace(plan, provenance=provenance_record(plan.recipe, catalog, embed=embed))


__all__ = ["Difference", "EmbeddedConflictError", "Provenance", "provenance_of", "provenance_record", "compare_provenance", "catalog_for",
           "read_plan", "shadow_notes", "stamp", "embedded_entry", "canonical_digest"]
