"""Catalog files: load, validate and merge the YAML folders into a :class:`~mediaplan.medium.catalog.Catalog`.

Files (YAML, safe loader only): ``components/*.yaml``, ``media/*.yaml``, ``pitzer.yaml`` and
``neutral.yaml`` in the bundled folder, then in each facility or user folder merged over it
(``MEDIAPLAN_CATALOG`` holds extra folders separated by the path separator; the user's own folder is
``<config dir>/catalog``). An entry whose id matches a bundled entry replaces it and is reported in
``Catalog.shadowed``.

The bundled catalog is the repository's top-level ``catalog/`` folder, shipped inside every install as
the package data ``mediaplan._catalog`` and found through :mod:`importlib.resources`.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

from mediaplan.files.yamlio import load_yaml
from mediaplan.medium.catalog import GROUPS, Catalog, Component, Medium, MediumLine
from mediaplan.medium.errors import CatalogError
from mediaplan.medium.units import parse_amount
from mediaplan.thermo.ions import charge_balance, parse_species
from mediaplan.thermo.params import NeutralParams

_NUMBER_FIELDS = ("molar_mass", "solubility", "apparent_molar_volume", "density", "reflection_coefficient")
_ID_RE = re.compile(r"^[a-z0-9][a-z0-9_]*$")


def _digest(raw: Any) -> str:
    return hashlib.sha256(json.dumps(raw, sort_keys=True, default=str).encode()).hexdigest()[:16]


def _req(entry: dict, key: str, file: str, kind: type | tuple[type, ...]) -> Any:
    line = getattr(entry, "line", None)
    if key not in entry or entry[key] is None:
        raise CatalogError(f"missing field '{key}'", file=file, line=line, field=key,
                           hint="see the catalog format in README.md")
    value = entry[key]
    if not isinstance(value, kind) or isinstance(value, bool) and kind is not bool:
        raise CatalogError(f"field '{key}' has the wrong type ({type(value).__name__})", file=file, line=line,
                           field=key)
    return value


def _opt_number(entry: dict, key: str, file: str, *, positive: bool = True) -> float | None:
    value = entry.get(key)
    if value is None:
        return None
    line = getattr(entry, "line", None)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise CatalogError(f"field '{key}' must be a number, not {value!r}", file=file, line=line, field=key)
    if positive and value <= 0 and key != "apparent_molar_volume":
        raise CatalogError(f"field '{key}' must be positive, not {value!r}", file=file, line=line, field=key)
    return float(value)


def parse_component(entry: Any, file: str, file_sources: dict[str, str]) -> Component:
    """Validate one component mapping; raises CatalogError naming file, line and field."""
    if not isinstance(entry, dict):
        raise CatalogError("each component must be a mapping", file=file)
    line = getattr(entry, "line", 0)
    cid = _req(entry, "id", file, str)
    if not _ID_RE.match(cid):
        raise CatalogError(f"id {cid!r} must be lower case letters, digits and _", file=file, line=line, field="id")
    where = dict(file=file, line=line)
    name = _req(entry, "name", file, str)
    group = _req(entry, "group", file, str)
    if group not in GROUPS:
        raise CatalogError(f"{cid}: unknown group {group!r}", **where, field="group", hint="one of " + ", ".join(GROUPS))
    species_raw = entry.get("species") or {}
    if not isinstance(species_raw, dict):
        raise CatalogError(f"{cid}: species must be a mapping of species to counts", **where, field="species")
    species = []
    for sp, n in species_raw.items():
        try:
            parse_species(str(sp))
        except ValueError as exc:
            raise CatalogError(f"{cid}: {exc}", **where, field="species") from None
        if isinstance(n, bool) or not isinstance(n, (int, float)) or n <= 0:
            raise CatalogError(f"{cid}: count of {sp} must be a positive number", **where, field="species")
        species.append((str(sp), float(n)))
    if abs(charge_balance(dict(species))) > 1e-9:
        raise CatalogError(f"{cid}: species charges do not balance", **where, field="species",
                           hint="a formula unit must dissolve into a neutral set of ions")
    molar_mass = _opt_number(entry, "molar_mass", file)
    if species and molar_mass is None:
        raise CatalogError(f"{cid}: a component that dissolves needs a molar_mass", **where, field="molar_mass")
    hydrate = entry.get("hydrate_water", 0) or 0
    if isinstance(hydrate, bool) or not isinstance(hydrate, (int, float)) or hydrate < 0:
        raise CatalogError(f"{cid}: hydrate_water must be 0 or more", **where, field="hydrate_water")
    aliases = entry.get("aliases") or []
    if not isinstance(aliases, list) or not all(isinstance(a, str) for a in aliases):
        raise CatalogError(f"{cid}: aliases must be a list of text", **where, field="aliases")
    raw_sources = entry.get("source") or {}
    if isinstance(raw_sources, str):
        raw_sources = {k: raw_sources for k in _NUMBER_FIELDS}
    if not isinstance(raw_sources, dict):
        raise CatalogError(f"{cid}: source must map fields to sources", **where, field="source")
    sources = {str(k): file_sources.get(str(v), str(v)) for k, v in raw_sources.items()}
    refl = _opt_number(entry, "reflection_coefficient", file, positive=False)
    if refl is not None and not 0 <= refl <= 1:
        raise CatalogError(f"{cid}: reflection_coefficient must lie in 0..1", **where, field="reflection_coefficient")
    formula = entry.get("formula")
    return Component(
        id=cid, name=name, formula=str(formula) if formula else None, aliases=tuple(aliases),
        cas=str(entry["cas"]) if entry.get("cas") else None, group=group, molar_mass=molar_mass,
        hydrate_water=float(hydrate), substance=entry.get("substance") or (str(formula) if formula else None),
        default_form=bool(entry.get("default_form", False)), species=tuple(species),
        solubility=_opt_number(entry, "solubility", file),
        apparent_molar_volume=_opt_number(entry, "apparent_molar_volume", file, positive=False),
        density=_opt_number(entry, "density", file), reflection_coefficient=refl,
        hazard=entry.get("hazard") or None, sources=sources, file=file, line=line, digest=_digest(dict(entry)),
    )


def _medium_lines(raw: Any, file: str, key: str) -> tuple[MediumLine, ...]:
    if raw is None:
        return ()
    if not isinstance(raw, list):
        raise CatalogError(f"'{key}' must be a list", file=file, field=key)
    out = []
    for item in raw:
        line = getattr(item, "line", None)
        if not isinstance(item, dict):
            raise CatalogError(f"each '{key}' entry must be a mapping", file=file, line=line, field=key)
        comp = _req(item, "component", file, str)
        amount_text = _req(item, "amount", file, str)
        try:
            amount = parse_amount(amount_text, field=f"{key}.{comp}.amount")
        except CatalogError:
            raise
        except Exception as exc:  # AmountError
            raise CatalogError(str(exc), file=file, line=line, field=f"{key}.{comp}.amount") from None
        out.append(MediumLine(comp, amount, str(item.get("confidence", "C")), item.get("note")))
    return tuple(out)


def parse_medium(raw: Any, file: str) -> Medium:
    if not isinstance(raw, dict):
        raise CatalogError("a medium file must be a mapping", file=file)
    mid = _req(raw, "id", file, str)
    notes = raw.get("notes") or []
    if isinstance(notes, str):
        notes = [notes]
    return Medium(
        id=mid, name=_req(raw, "name", file, str), citation=_req(raw, "citation", file, str),
        doi=raw.get("doi"), confidence=str(raw.get("confidence", "C")), ph=str(raw["ph"]) if raw.get("ph") else None,
        lines=_medium_lines(raw.get("components"), file, "components"),
        optional=_medium_lines(raw.get("optional"), file, "optional"),
        notes=tuple(str(n) for n in notes), file=file, digest=_digest(dict(raw)),
    )


def bundled_folder() -> Path:
    """The catalog folder shipped with mediaplan (package data ``mediaplan._catalog``).

    In a wheel the files sit inside the installed package; in an editable install the import system maps
    the same name onto the checkout's ``catalog/`` folder. A missing or empty bundled catalog is an error,
    never an empty catalog.
    """
    import importlib.resources

    package = Path(__file__).resolve().parents[1]
    try:
        folder = Path(str(importlib.resources.files("mediaplan._catalog")))
    except ModuleNotFoundError:
        folder = package / "_catalog"  # where an install keeps it: the error names this folder
    if not folder.is_dir() and (package.parent / "pyproject.toml").is_file():
        # a source tree that was never installed: the checkout's top-level folder (never a folder named
        # catalog that happens to sit beside an installed package)
        folder = package.parent / "catalog"
    if not (folder / "components").is_dir() or not any((folder / "components").glob("*.yaml")):
        raise CatalogError("the bundled catalog is missing or empty", file=str(folder),
                           hint="reinstall mediaplan: the installed package lacks its catalog files")
    return folder


def default_folders() -> list[Path]:
    """Bundled folder, then facility folders from MEDIAPLAN_CATALOG, then the user's folder."""
    from mediaplan.files.paths import user_catalog_dir

    folders = [bundled_folder()]
    env = os.environ.get("MEDIAPLAN_CATALOG")
    if env:
        folders += [Path(p) for p in env.split(os.pathsep) if p]
    user = user_catalog_dir()
    if user.is_dir():
        folders.append(user)
    return folders


def _component_files(folder: Path) -> list[Path]:
    d = folder / "components"
    return sorted(d.glob("*.yaml")) if d.is_dir() else []


def _medium_files(folder: Path) -> list[Path]:
    d = folder / "media"
    return sorted(d.glob("*.yaml")) if d.is_dir() else []


def load_catalog(folders: Sequence[Path | str] | None = None, *, extra: Iterable[Path | str] = ()) -> Catalog:
    """Load and validate the catalog from ``folders`` (default: :func:`default_folders`) plus ``extra``."""
    paths = [Path(f) for f in (folders if folders is not None else default_folders())] + [Path(e) for e in extra]
    for p in paths[1:]:
        if not p.is_dir():
            raise CatalogError("catalog folder not found", file=str(p), hint="check the facility catalog folders named (MEDIAPLAN_CATALOG and the extra folders given)")
    components: dict[str, Component] = {}
    media: dict[str, Medium] = {}
    shadowed: list[str] = []
    pitzer_raw: dict | None = None
    neutral_raw: dict | None = None
    for i, folder in enumerate(paths):
        seen_here: dict[str, str] = {}
        for f in _component_files(folder):
            data = load_yaml(f)
            if not isinstance(data, dict) or not isinstance(data.get("components"), list):
                raise CatalogError("expected a mapping with a 'components' list", file=str(f),
                                   hint="see the catalog format in README.md")
            file_sources = {str(k): str(v) for k, v in (data.get("sources") or {}).items()}
            for entry in data["components"]:
                comp = parse_component(entry, str(f), file_sources)
                if comp.id in seen_here:
                    raise CatalogError(f"duplicate component id '{comp.id}' (also in {seen_here[comp.id]})",
                                       file=str(f), line=comp.line, field="id", hint="ids must be unique")
                seen_here[comp.id] = f"{f}:{comp.line}"
                if comp.id in components and i > 0:
                    shadowed.append(f"{comp.id} ({f}:{comp.line} replaces {components[comp.id].file})")
                components[comp.id] = comp
        for f in _medium_files(folder):
            med = parse_medium(load_yaml(f), str(f))
            if med.id in media and i > 0:
                shadowed.append(f"medium {med.id} ({f} replaces {media[med.id].file})")
            media[med.id] = med
        pf = folder / "pitzer.yaml"
        if pf.is_file():
            pitzer_raw = _merge_params(pitzer_raw, load_yaml(pf), pf)
        nf = folder / "neutral.yaml"
        if nf.is_file():
            neutral_raw = _merge_params(neutral_raw, load_yaml(nf), nf)
    for med in media.values():
        for ln in med.lines + med.optional:
            if ln.component not in components:
                raise CatalogError(f"medium {med.id} uses unknown component '{ln.component}'", file=med.file,
                                   field="components", hint="add it to catalog/components or fix the id")
    pitzer = None
    if pitzer_raw is not None:
        from mediaplan.thermo.pitzer import pitzer_params_from_dict

        try:
            pitzer = pitzer_params_from_dict(pitzer_raw)
        except (ValueError, KeyError, TypeError) as exc:
            raise CatalogError(f"bad Pitzer parameters: {exc}", file="pitzer.yaml") from None
    neutral: dict[str, NeutralParams] = {}
    if neutral_raw is not None:
        from mediaplan.thermo.neutral import neutral_params_from_dict

        try:
            neutral = neutral_params_from_dict(neutral_raw)
        except (ValueError, KeyError, TypeError) as exc:
            raise CatalogError(f"bad neutral-solute parameters: {exc}", file="neutral.yaml") from None
    return Catalog(components, media, pitzer, neutral, tuple(paths), shadowed)


def _merge_params(base: dict | None, new: Any, path: Path) -> dict:
    """A facility file adds to or replaces list entries of the bundled parameter file."""
    if not isinstance(new, dict):
        raise CatalogError("expected a mapping", file=str(path))
    if base is None:
        return new
    merged = dict(base)
    for k, v in new.items():
        if isinstance(v, list) and isinstance(merged.get(k), list):
            merged[k] = list(merged[k]) + list(v)  # later entries win in the parsers
        elif isinstance(v, dict) and isinstance(merged.get(k), dict):
            merged[k] = {**merged[k], **v}
        else:
            merged[k] = v
    return merged


_CACHE: dict[tuple, Catalog] = {}


def get_catalog(extra: Iterable[Path | str] = ()) -> Catalog:
    """The default catalog (cached per process and per set of extra folders)."""
    key = (tuple(str(p) for p in default_folders()), tuple(str(e) for e in extra))
    if key not in _CACHE:
        _CACHE[key] = load_catalog(extra=extra)
    return _CACHE[key]



__all__ = ["load_catalog", "get_catalog", "bundled_folder", "default_folders", "parse_component", "parse_medium"]
