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

import difflib
import hashlib
import json
import math
import os
import re
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

from mediaplan.files.yamlio import load_yaml
from mediaplan.medium.catalog import GROUPS, Catalog, Component, Medium, MediumLine, SolubilityPoint
from mediaplan.medium.errors import CatalogError
from mediaplan.medium.units import parse_amount
from mediaplan.thermo.ions import charge_balance, parse_species
from mediaplan.thermo.params import NeutralParams

_NUMBER_FIELDS = ("molar_mass", "solubility", "apparent_molar_volume", "density", "reflection_coefficient")
_ID_RE = re.compile(r"^[a-z0-9][a-z0-9_]*$")

#: plausible ranges of a component's numbers, in the units of the catalog files: field -> (lowest, highest,
#: unit, why). A value outside is refused when the catalog loads (and so reported by ``catalog check``): a
#: number in the wrong unit or with a slipped exponent would otherwise flow into every result.
PLAUSIBLE: dict[str, tuple[float, float, str, str]] = {
    # nothing is lighter than a hydrogen atom (1.008 g/mol, IUPAC 2021); proteins and polymers dissolved in
    # media stay below 1e6 g/mol (common practice)
    "molar_mass": (1.0, 1e6, "g/mol", "no substance is lighter than a hydrogen atom, 1.008 g/mol"),
    # g of anhydrous substance per 100 g water: the most soluble solids of media dissolve a few hundred g
    # (fructose about 400, ammonium nitrate about 210); 2000 leaves room for any salt (common practice)
    "solubility": (1e-9, 2000.0, "g per 100 g water", "the most soluble solids dissolve a few hundred g"),
    # infinite-dilution volumes of common salts lie a few tens of cm3/mol around zero (MgSO4 -7.2, May et al.
    # 2011) and of sugars below 250 (sucrose 211.5); -200 is far below any of them. The upper limit is
    # 2000 cm3/mol or 1.5 cm3 per g of solute, whichever is larger: organic solids and polymers are denser
    # than 0.7 g/cm3 (common practice), so a polymer of 6000 g/mol stays below 9000 cm3/mol
    "apparent_molar_volume": (-200.0, 2000.0, "cm3/mol", "solutes lie between a few tens below zero and a "
                              "few hundred cm3/mol, polymers at most 1.5 cm3 per g"),
    # liquids added to media (ethanol 0.79, glycerol 1.26, DMSO 1.10) and any salt (below 7) lie well inside
    # 0.5 to 10 g/cm3 (common practice)
    "density": (0.5, 10.0, "g/cm3", "liquids and salts used in media lie between 0.7 and 7 g/cm3"),
    # the most hydrated salts in use carry 18 waters (aluminium sulfate octadecahydrate) (common practice)
    "hydrate_water": (0.0, 20.0, "mol water per mol", "the most hydrated common salts carry up to 18 waters"),
    # a dimensionless fraction by definition
    "reflection_coefficient": (0.0, 1.0, "", "a reflection coefficient is a fraction"),
}
#: the most ions of one species a formula unit may dissolve into (EDTA salts and alums stay below 12)
MAX_SPECIES_COUNT = 20
#: polymers may take more volume per mole than small solutes: at most this many cm3 per gram
_MAX_SPECIFIC_VOLUME = 1.5


def plausible(key: str, value: float, *, molar_mass: float | None = None) -> tuple[str, str] | None:
    """(what is wrong, why) when ``value`` of catalog field ``key`` is implausible (see :data:`PLAUSIBLE`),
    else None."""
    low, high, unit, why = PLAUSIBLE[key]
    if key == "apparent_molar_volume" and molar_mass is not None:
        high = max(high, _MAX_SPECIFIC_VOLUME * molar_mass)
    if math.isfinite(value) and low <= value <= high:
        return None
    unit = f" {unit}" if unit else ""
    return (f"{key} {value:g}{unit} is outside the plausible {low:g} to {high:g}{unit}",
            f"{why}; check the number and its unit")


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
        shown = repr(value) if len(repr(value)) <= 40 else repr(value)[:40] + "…"
        raise CatalogError(f"field '{key}' must be a number, not {shown}", file=file, line=line, field=key)
    if positive and value <= 0 and key != "apparent_molar_volume":
        raise CatalogError(f"field '{key}' must be positive, not {value!r}", file=file, line=line, field=key)
    return float(value)


def _opt_text(entry: dict, key: str, file: str, cid: str) -> str | None:
    """A text field that may be left out (None); anything but text is an error naming the field."""
    value = entry.get(key)
    if value is None or value == "":
        return None
    if isinstance(value, bool) or not isinstance(value, (str, int, float)):
        raise CatalogError(f"{cid}: {key} must be text, not a {type(value).__name__}", file=file,
                           line=getattr(entry, "line", None), field=key, hint=f'write it in quotes, like {key}: "..."')
    return str(value)


#: the keys of one row of a component's ``solubility_table`` (all three required)
SOLUBILITY_ROW_KEYS = ("temperature_c", "g_per_100g_water", "source")
#: temperatures [°C] a solubility row may name: from a cold room below freezing (brines) to an autoclave
SOLUBILITY_T_RANGE_C = (-40.0, 150.0)


def _solubility_table(entry: dict, file: str, cid: str, file_sources: dict[str, str]) -> tuple[SolubilityPoint, ...]:
    """The component's ``solubility_table``: a list of rows ``{temperature_c, g_per_100g_water, source}`` in
    increasing temperature, at least two. Strict: an unknown or missing key, a value that is not a number,
    a temperature out of order or a solubility outside :data:`PLAUSIBLE` is an error naming the row's line."""
    line = getattr(entry, "line", None)
    field = "solubility_table"
    for key in entry:  # a misspelt table key must not leave the table silently unread
        if key not in ("solubility", field) and isinstance(key, str) and difflib.get_close_matches(
                key, ("solubility", field), n=1, cutoff=0.75):
            raise CatalogError(f"{cid}: unknown key {key!r}", file=file, line=line, field=key,
                               hint=f"did you mean {difflib.get_close_matches(key, ('solubility', field), n=1)[0]}?")
    raw = entry.get("solubility_table")
    if raw is None:
        return ()
    if not isinstance(raw, list) or len(raw) < 2:
        raise CatalogError(f"{cid}: solubility_table must be a list of at least two rows", file=file, line=line,
                           field=field, hint="rows like {temperature_c: 20, g_per_100g_water: 31.6, source: ...}")
    rows: list[SolubilityPoint] = []
    for row in raw:
        where = dict(file=file, line=getattr(row, "line", line), field=field)
        if not isinstance(row, dict):
            raise CatalogError(f"{cid}: each solubility_table row must be a mapping", **where,
                               hint="{temperature_c: 20, g_per_100g_water: 31.6, source: ...}")
        for key in row:
            if key not in SOLUBILITY_ROW_KEYS:
                close = difflib.get_close_matches(str(key), SOLUBILITY_ROW_KEYS, n=1)
                raise CatalogError(f"{cid}: unknown key {key!r} in a solubility_table row", **where,
                                   hint=(f"did you mean {close[0]}? " if close else "") + "the keys are "
                                   + ", ".join(SOLUBILITY_ROW_KEYS))
        for key in SOLUBILITY_ROW_KEYS:
            if key not in row or row[key] is None or row[key] == "":
                raise CatalogError(f"{cid}: a solubility_table row lacks {key}", **where,
                                   hint="every row names its temperature, its solubility and its source")
        t, g, src = row["temperature_c"], row["g_per_100g_water"], row["source"]
        for key, v in (("temperature_c", t), ("g_per_100g_water", g)):
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                raise CatalogError(f"{cid}: {key} of a solubility_table row must be a number, not {v!r}", **where)
        if not SOLUBILITY_T_RANGE_C[0] <= t <= SOLUBILITY_T_RANGE_C[1]:
            raise CatalogError(f"{cid}: solubility_table temperature {t:g} °C is outside "
                               f"{SOLUBILITY_T_RANGE_C[0]:g} to {SOLUBILITY_T_RANGE_C[1]:g} °C", **where,
                               hint="temperatures are in °C")
        wrong = plausible("solubility", float(g))
        if wrong is not None:
            raise CatalogError(f"{cid}: solubility_table at {t:g} °C: {wrong[0]}", **where, hint=wrong[1])
        if not isinstance(src, str):
            raise CatalogError(f"{cid}: the source of a solubility_table row must be text", **where)
        if rows and t <= rows[-1].temperature_k - 273.15 + 1e-9:
            raise CatalogError(f"{cid}: solubility_table rows must go up in temperature ({t:g} °C after "
                               f"{rows[-1].temperature_k - 273.15:g} °C)", **where)
        text = file_sources.get(src, src)
        rows.append(SolubilityPoint(float(t) + 273.15, float(g), text,
                                    from_memory="from memory" in text.lower()))
    return tuple(rows)


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
        if isinstance(n, bool) or not isinstance(n, (int, float)) or not math.isfinite(n) or n <= 0:
            raise CatalogError(f"{cid}: count of {sp} must be a positive number", **where, field="species")
        if n > MAX_SPECIES_COUNT:
            raise CatalogError(f"{cid}: count of {sp} is {n:g}, more than the {MAX_SPECIES_COUNT} ions of one kind "
                               "a formula unit plausibly holds", **where, field="species",
                               hint="counts are ions per formula unit, e.g. 2 for Na2SO4")
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
    formula = _opt_text(entry, "formula", file, cid)
    substance = _opt_text(entry, "substance", file, cid)
    cas = _opt_text(entry, "cas", file, cid)
    hazard = _opt_text(entry, "hazard", file, cid)
    default_form = entry.get("default_form", False)
    if default_form is not None and not isinstance(default_form, bool):
        raise CatalogError(f"{cid}: default_form must be true or false", **where, field="default_form")
    numbers = {"molar_mass": molar_mass, "hydrate_water": float(hydrate),
               "solubility": _opt_number(entry, "solubility", file),
               "apparent_molar_volume": _opt_number(entry, "apparent_molar_volume", file, positive=False),
               "density": _opt_number(entry, "density", file), "reflection_coefficient": refl}
    for key, value in numbers.items():
        wrong = None if value is None else plausible(key, value, molar_mass=molar_mass)
        if wrong is not None:
            raise CatalogError(f"{cid}: {wrong[0]}", **where, field=key, hint=wrong[1])
    table = _solubility_table(entry, file, cid, file_sources)
    return Component(
        id=cid, name=name, formula=formula, aliases=tuple(aliases), cas=cas, group=group, molar_mass=molar_mass,
        hydrate_water=float(hydrate), substance=substance or formula, default_form=bool(default_form),
        species=tuple(species), solubility=numbers["solubility"],
        apparent_molar_volume=numbers["apparent_molar_volume"], density=numbers["density"],
        reflection_coefficient=refl, hazard=hazard, sources=sources, file=file, line=line,
        digest=_digest(dict(entry)), solubility_table=table,
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
        note = item.get("note")
        if note is not None and not isinstance(note, str):
            raise CatalogError(f"the note of {comp} must be text", file=file, line=line, field=f"{key}.{comp}.note")
        out.append(MediumLine(comp, amount, str(item.get("confidence", "C")), note))
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
        if os.path.lexists(pf):  # a FIFO or a folder of that name is refused by load_yaml, never skipped
            pitzer_raw = _merge_params(pitzer_raw, load_yaml(pf), pf)
        nf = folder / "neutral.yaml"
        if os.path.lexists(nf):
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
        except (ValueError, KeyError, TypeError, AttributeError, IndexError, OverflowError) as exc:
            raise CatalogError(f"bad Pitzer parameters: {exc}", file="pitzer.yaml") from None
    neutral: dict[str, NeutralParams] = {}
    if neutral_raw is not None:
        from mediaplan.thermo.neutral import neutral_params_from_dict

        try:
            neutral = neutral_params_from_dict(neutral_raw)
        except (ValueError, KeyError, TypeError, AttributeError, IndexError, OverflowError) as exc:
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


def entry_problems(folders: Sequence[Path | str]) -> list[str]:
    """Every problem of the component and medium entries in ``folders``, one line each, without stopping at
    the first (what :func:`load_catalog` raises stops there; ``catalog check`` lists them all).

    Each file is read and each entry checked on its own: a file that cannot be read at all is one line.
    """
    problems: list[str] = []
    for folder in (Path(f) for f in folders):
        for f in _component_files(folder):
            try:
                data = load_yaml(f)
            except CatalogError as exc:
                problems.append(str(exc))
                continue
            entries = data.get("components") if isinstance(data, dict) else None
            if not isinstance(entries, list):
                problems.append(str(CatalogError("expected a mapping with a 'components' list", file=str(f))))
                continue
            sources = data.get("sources") if isinstance(data.get("sources"), dict) else {}
            file_sources = {str(k): str(v) for k, v in sources.items()}
            for entry in entries:
                try:
                    parse_component(entry, str(f), file_sources)
                except CatalogError as exc:
                    problems.append(str(exc))
        for f in _medium_files(folder):
            try:
                parse_medium(load_yaml(f), str(f))
            except CatalogError as exc:
                problems.append(str(exc))
    return problems


_CACHE: dict[tuple, Catalog] = {}


def get_catalog(extra: Iterable[Path | str] = ()) -> Catalog:
    """The default catalog (cached per process and per set of extra folders, and on disk: see
    :func:`_load_through_disk_cache`)."""
    extra = tuple(extra)
    key = (tuple(str(p) for p in default_folders()), tuple(str(e) for e in extra))
    if key not in _CACHE:
        _CACHE[key] = _load_through_disk_cache(extra)
    return _CACHE[key]


#: the catalog files of a folder that load_catalog reads, and the code whose parsing a stored catalog holds
_CODE_FILES = ("files/catalog.py", "files/reading.py", "files/yamlio.py", "medium/catalog.py", "medium/units.py",
               "medium/errors.py", "thermo/params.py", "thermo/pitzer.py", "thermo/neutral.py", "thermo/ions.py")
#: largest catalog file hashed for the disk cache [bytes] (larger ones are left to load_catalog to refuse)
_CACHE_MAX_FILE = 4 * 1024 * 1024


def _cache_key(paths: list[Path]) -> str | None:
    """A digest of every file load_catalog would read in ``paths`` (names and bytes), of the code that
    parses them and of the Python version; None when any of them is not a plain small file (load_catalog
    then reads the folders and says what is wrong, nothing is stored)."""
    import stat
    import sys

    h = hashlib.blake2b(digest_size=20)
    h.update(sys.version.encode())
    here = Path(__file__).resolve().parents[1]
    files = [here / c for c in _CODE_FILES]
    for folder in paths:
        h.update(b"\0folder\0" + str(folder).encode())
        if not folder.is_dir():
            return None
        files += _component_files(folder) + _medium_files(folder)
        files += [f for f in (folder / "pitzer.yaml", folder / "neutral.yaml") if os.path.lexists(f)]
    for f in files:
        try:
            st = os.stat(f)
            if not stat.S_ISREG(st.st_mode) or st.st_size > _CACHE_MAX_FILE:
                return None
            with open(f, "rb") as fh:
                data = fh.read(_CACHE_MAX_FILE + 1)
        except OSError:
            return None
        h.update(b"\0file\0" + str(f).encode() + b"\0" + len(data).to_bytes(8, "little") + data)
    return h.hexdigest()


def _load_through_disk_cache(extra: tuple) -> Catalog:
    """load_catalog(extra=extra), served from the user's cache folder when every file it reads (and the code
    that parses them) is byte for byte what it was when that catalog was stored.

    Start-up of a command otherwise spends most of its time parsing the YAML and the amounts of every
    medium. The cache is a pickle in ``<cache dir>/catalog/`` named by the digest of those files; a catalog
    that fails to load is never stored; any trouble with the cache folder falls back to loading afresh.
    Only when a front end has turned the caches on (``files.paths.use_unit_cache``, as for the units).
    """
    import pickle

    from mediaplan.files.paths import user_cache_dir
    from mediaplan.medium.units import cache_folder

    if cache_folder() is None:  # the front ends turn the caches on (files.paths.use_unit_cache)
        return load_catalog(extra=extra)
    paths = list(default_folders()) + [Path(e) for e in extra]
    try:
        key = _cache_key(paths)
        folder = user_cache_dir() / "catalog"
    except Exception:  # noqa: BLE001 - a cache must never stop the program
        key = None
    if key is not None:
        try:
            with open(folder / f"{key}.pickle", "rb") as fh:
                got = pickle.load(fh)  # the user's own cache folder, written by the code below
            if isinstance(got, Catalog):
                return got
        except Exception:  # noqa: BLE001 - missing, stale or unreadable: load afresh
            pass
    cat = load_catalog(extra=extra)
    if key is not None:
        try:
            import tempfile

            folder.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(dir=folder, suffix=".tmp")
            try:
                with os.fdopen(fd, "wb") as fh:
                    pickle.dump(cat, fh, protocol=pickle.HIGHEST_PROTOCOL)
                os.replace(tmp, folder / f"{key}.pickle")
            finally:
                if os.path.exists(tmp):
                    os.unlink(tmp)
            stored = sorted(folder.glob("*.pickle"), key=lambda f: f.stat().st_mtime, reverse=True)
            for old in stored[8:]:  # keep the latest few
                old.unlink(missing_ok=True)
        except Exception:  # noqa: BLE001 - a cache must never stop the program
            pass
    return cat



__all__ = ["PLAUSIBLE", "load_catalog", "get_catalog", "bundled_folder", "default_folders", "entry_problems",
           "parse_component", "parse_medium", "plausible"]
