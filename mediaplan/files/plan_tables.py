"""The optional tables of a plan file as typed records: read with file/line/field errors, written back as read.

=================  ===========================================================================
``[target]``       :class:`TargetRecord` (defined here: only files and the front ends use it)
``[cells]``        :class:`mediaplan.tasks.cells.CellReference`
``[projection]``   :class:`mediaplan.tasks.projection.ProjectionRecord`
``[series]``       :class:`mediaplan.tasks.plasmolysis.counts.SeriesRecord` (its levels: ``LevelRecord``)
``[provenance]``   :class:`Provenance` (defined here: it records catalog entries, a files matter)
``[[readings]]``   :class:`ReadingRecord`, one per osmometer reading of a batch (defined here)
=================  ===========================================================================

Reading checks the shape of each table: text where text belongs, numbers where numbers belong, arrays
and tables where those belong. Anything else raises PlanFileError (CatalogError for the provenance tables,
as before) naming the file, the line and the field. What a value means (its unit, its range, whole counts)
is checked where it is used, exactly as for a value typed on the command line.

Read strictly (a plan of a format version this release writes), a key or table a table does not know is
an error naming it, its line and the nearest known name (:func:`unknown_name`). Read leniently (a plan of a
newer minor version), such keys are kept in the record's ``extra`` and listed in ``kept``.

Writing gives each table back in the form it was read: values keep their TOML type (``4`` stays ``4``,
``"10 %"`` stays text), keys keep their order (the :class:`Layout` of each table, which the Plan keeps
beside its records), unknown keys are kept, and counts written as one bare number stay one number. Keys a
record gains are written after the others, in the order this module's writers give them.
"""

from __future__ import annotations

import datetime
import difflib
import re
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from typing import Any, ClassVar

from mediaplan.medium.errors import CatalogError, MediaplanError, PlanFileError
from mediaplan.tasks.cells import CellReference
from mediaplan.tasks.plasmolysis.counts import LevelRecord, SeriesRecord
from mediaplan.tasks.projection import ProjectionRecord
from mediaplan.tasks.records import TableView

#: the optional tables, in the order a plan file holds them
TABLES = ("target", "cells", "projection", "series", "provenance")
#: the plan's array of tables of recorded osmometer readings (after the optional tables)
READINGS = "readings"


# ---- records defined here ------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class TargetRecord(TableView):
    """A plan's ``[target]``: the target and osmotica of the last solve (None = not in the table).

    value : the target as written (``"-0.8 MPa"``, ``"450 mOsm/kg"``, ``"isotonic+10%"``)
    osmotica : catalog ids of the osmotica, in the order given
    hold : (osmoticum id, amount held at a set level, e.g. ``"20 g/L"``) pairs
    ratio : molar ratio in which the osmotica are added [-]
    extra : keys this version does not know, as (key, value) pairs, kept as they were
    """

    value: str | None = None
    osmotica: tuple[str, ...] | None = None
    hold: tuple[tuple[str, str], ...] | None = None
    ratio: tuple[float, ...] | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    _PAIRS: ClassVar[tuple[str, ...]] = ("hold",)


@dataclass(frozen=True, eq=False)
class Provenance(TableView):
    """A plan's ``[provenance]``: the catalog entries its recipe used (None = not in the table).

    recorded : the day the record was made (``"2024-05-02"``)
    mediaplan : the version of mediaplan that made it
    components, media : entry id -> digest of the entry (``Component.digest``, ``Medium.digest``)
    embedded : ``"components"`` / ``"media"`` -> entry id -> a full copy of the entry as the catalog
        loader reads it (checked when the plan meets a catalog: :func:`mediaplan.files.sharing.catalog_for`)
    extra : keys this version does not know, as (key, value) pairs, kept as they were

    The mappings belong to the record: make a new Provenance rather than changing them.
    """

    recorded: str | datetime.date | None = None
    mediaplan: str | None = None
    components: Mapping[str, str] | None = None
    media: Mapping[str, str] | None = None
    embedded: Mapping[str, Any] | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    def embedded_entries(self, kind: str) -> Mapping[str, Any]:
        """The embedded copies of one kind (``"components"`` or ``"media"``): entry id -> entry."""
        return (self.embedded or {}).get(kind) or {}


@dataclass(frozen=True, eq=False)
class ReadingRecord(TableView):
    """One ``[[readings]]`` entry: an osmometer reading of a batch made from the plan (None = not written).

    value : what the instrument displayed, as written (``"182 mOsm/kg"``)
    instrument : ``"freezing-point"`` or ``"vapour-pressure"``
    date : the day of the reading (a TOML date, or text)
    operator : who measured; note : free text (the batch, the vessel...)
    chamber_temperature : the chamber temperature of a vapour-pressure osmometer (``"25 degC"``)
    extra : keys this version does not know, as (key, value) pairs, kept as they were
    """

    value: str | None = None
    instrument: str | None = None
    date: str | datetime.date | None = None
    operator: str | None = None
    note: str | None = None
    chamber_temperature: str | None = None
    extra: tuple[tuple[str, Any], ...] = ()


@dataclass(frozen=True)
class Layout:
    """How a table was written: its keys in order, the arrays written as one bare value, and the layout
    of each entry of its array of tables (the series' levels)."""

    keys: tuple[str, ...] = ()
    single: frozenset[str] = frozenset()
    items: tuple[Layout, ...] = ()


# ---- finding lines -------------------------------------------------------------------------------
_HEADER = re.compile(r"^\s*\[")


def line_of(text: str, key: str | None = None, table: str | None = None, nth: int | None = None) -> int | None:
    """Best guess at the line of ``key`` in ``[table]``, or in the ``nth`` ``[[table]]`` (1-based) [line].

    Without ``key``: the table's header line. A key not found in its table gives the header line.
    """
    lines = text.splitlines()
    start, stop, header = 0, len(lines), None
    if table:
        esc = re.escape(table)
        pat = re.compile(rf"^\s*\[\[\s*{esc}\s*\]\]\s*(#.*)?$" if nth else rf"^\s*\[\s*{esc}\s*\]\s*(#.*)?$")
        hits = [i for i, ln in enumerate(lines) if pat.match(ln)]
        if len(hits) >= (nth or 1):
            header = hits[(nth or 1) - 1]
            start = header + 1
            stop = next((j for j in range(start, len(lines)) if _HEADER.match(lines[j])), len(lines))
    if key is not None:
        pat = re.compile(rf'^\s*["\']?{re.escape(key)}["\']?\s*=')
        for i in range(start, stop):
            if pat.match(lines[i]):
                return i + 1
    return header + 1 if header is not None else None


def locate(text: str, path: tuple[str, ...]) -> int | None:
    """Best guess at the line [1-based] where the table or key ``path`` (``("medium", "component")``) is
    written: its header (``[medium.component]``, ``[[...]]``, or the first header below it), or its key in
    the table above it, written plainly (``component =``) or dotted (``component.sucrose =``)."""
    if not path:
        return None
    lines = text.splitlines()
    dotted = r"\s*\.\s*".join(rf"[\"']?{re.escape(p)}[\"']?" for p in path)
    header = re.compile(rf"^\s*\[\[?\s*{dotted}\s*(\]|\.)")
    for i, ln in enumerate(lines):
        if header.match(ln):
            return i + 1
    table, key = ".".join(path[:-1]), path[-1]
    start, stop = 0, len(lines)
    if table:
        found = line_of(text, None, table)
        if found is None:
            found = locate(text, path[:-1])
        if found is None:
            return None
        start = found
        stop = next((j for j in range(start, len(lines)) if _HEADER.match(lines[j])), len(lines))
    else:
        stop = next((j for j in range(len(lines)) if _HEADER.match(lines[j])), len(lines))
    pat = re.compile(rf"^\s*[\"']?{re.escape(key)}[\"']?\s*[=.]")
    for i in range(start, stop):
        if pat.match(lines[i]):
            return i + 1
    return start if table else None


def _is_table(value: Any) -> bool:
    return isinstance(value, dict) or (isinstance(value, list) and bool(value)
                                       and all(isinstance(v, dict) for v in value))


def _toml_key(key: str) -> str:
    """``key`` as TOML writes it: bare when it can be, else quoted."""
    return key if re.fullmatch(r"[A-Za-z0-9_-]+", key) else '"' + key.replace("\\", "\\\\").replace('"', '\\"') + '"'


def nearest(name: str, known: Iterable[str]) -> str | None:
    """The known name closest to ``name`` (case ignored), or None when none is close."""
    known = list(known)
    lower = {k.lower(): k for k in known}
    hit = difflib.get_close_matches(name.lower(), list(lower), n=1, cutoff=0.6)
    return lower[hit[0]] if hit else None


def unknown_name(path: tuple[str, ...], value: Any, known: Iterable[str], *, text: str = "",
                 file: str | None = None, line: int | None = None, error: type[MediaplanError] = PlanFileError,
                 hint: str | None = None, field_name: str | None = None) -> MediaplanError:
    """The error of a key or table ``path`` that its table does not know, naming the nearest known name.

    known : the keys the table knows (tables among them are named as tables in the hint)
    """
    table, key = ".".join(path[:-1]), path[-1]
    full = ".".join(_toml_key(p) for p in path)
    close = nearest(key, known)
    if _is_table(value):
        message = f"unknown table [{full}]"
        if close is not None:
            hint = hint or f"did you mean [{table + '.' if table else ''}{_toml_key(close)}]?"
    else:
        message = f"unknown key {_toml_key(key)}" + (f" in [{table}]" if table else "")
        if close is not None:
            hint = hint or f"did you mean {_toml_key(close)}?"
    if hint is None:
        known = sorted(known)
        hint = ("this format version knows " + (", ".join(known) if known else "no keys here")) if table else \
            "the tables of a plan are " + ", ".join(f"[{k}]" for k in known)
    return error(message, file=file, line=line if line is not None else locate(text, path),
                 field=field_name or ".".join(path), hint=hint)


def dotted_key(key: str, value: Any) -> tuple[str, Any] | None:
    """When ``value`` is what TOML makes of an unquoted dotted key (``MgSO4.7H2O = "370 mg/L"`` gives
    ``{"MgSO4": {"7H2O": "370 mg/L"}}``): the key as written (``MgSO4.7H2O``) and its value; else None."""
    parts = [key]
    while isinstance(value, dict) and len(value) == 1:
        (k, value), = value.items()
        parts.append(k)
    if len(parts) < 2 or isinstance(value, (dict, list)):
        return None
    return ".".join(parts), value


def dotted_key_error(key: str, value: Any, where: str, *, text: str = "", file: str | None = None,
                     table: str | None = None, error: type[MediaplanError] = PlanFileError) -> MediaplanError | None:
    """The error of an unquoted dotted key in a table of ``id = "amount"`` lines (``where``: that table's
    name, ``medium.components``), showing the quoted form; None when ``value`` is no dotted key."""
    found = dotted_key(key, value)
    if found is None:
        return None
    name, leaf = found
    shown = f'"{leaf}"' if isinstance(leaf, str) else repr(leaf)
    parts = tuple((table or where).split(".")) + tuple(name.split("."))
    return error(f"{name} is read as a table (an unquoted dot splits a TOML key)", file=file,
                 line=locate(text, parts), field=f"{where}.{name}",
                 hint=f'quote the name: "{name}" = {shown}')


# ---- reading -------------------------------------------------------------------------------------
def _number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


class _Table:
    """One table being read: where it sits in the file (for errors) and how it is written (its layout)."""

    def __init__(self, path: str, raw: dict, text: str, file: str | None, *, nth: int | None = None,
                 field_name: str | None = None, error: type[MediaplanError] = PlanFileError,
                 kept: list[str] | None = None) -> None:
        self.path, self.raw, self.text, self.file, self.nth, self.cls = path, raw, text, file, nth, error
        self.field_name = field_name or path  # "series.levels[2]" for the second level
        self.single: set[str] = set()
        self.items: tuple[Layout, ...] = ()
        self.kept = kept  # None: strict (an unknown key is an error); a list: unknown keys kept, named here

    def error(self, message: str, key: str | None = None, *, field_name: str | None = None,
              table: str | None = None, hint: str | None = None) -> MediaplanError:
        """An error at ``key`` of this table (or of its sub-table ``table``)."""
        line = line_of(self.text, key, table or self.path, None if table else self.nth)
        where = field_name or (f"{self.field_name}.{key}" if key else self.field_name)
        return self.cls(message, file=self.file, line=line, field=where, hint=hint)

    def read(self, cls: type, spec: Mapping[str, Callable]) -> tuple[Any, Layout]:
        """The record (known keys read by ``spec``, the others kept in ``extra``) and the table's layout."""
        known, extra = {}, []
        for key, value in self.raw.items():
            if key in spec:
                known[key] = spec[key](self, key, value)
            elif self.kept is None:
                line = line_of(self.text, key, self.path, self.nth) if self.nth and not _is_table(value) else None
                raise unknown_name((*self.path.split("."), key), value, spec, text=self.text, file=self.file,
                                   line=line, error=self.cls, field_name=f"{self.field_name}.{key}")
            else:
                extra.append((key, value))
                self.kept.append(f"{self.field_name}.{key}")
        return cls(**known, extra=tuple(extra)), Layout(tuple(self.raw), frozenset(self.single), self.items)


_EXAMPLES = {"osmolality": '"450 mOsm/kg"', "potential": '"-1.1 MPa"', "value": '"-0.8 MPa"',
             "volume": '"50 mL"', "temperature": '"25 degC"', "stock": '"1 mol/kg"', "osmoticum": '"mannitol"'}


def _text(t: _Table, key: str, v: Any) -> str:
    if not isinstance(v, str):
        raise t.error(f"{key} must be text", key,
                      hint=f"write it in quotes, like {key} = {_EXAMPLES.get(key, chr(34) * 2)}")
    return v


def _number_value(t: _Table, key: str, v: Any) -> float:
    if not _number(v):
        raise t.error(f"{key} must be a number", key)
    return v


def _scalar(t: _Table, key: str, v: Any) -> float | str:
    """A number or a text, as written (what it means is checked where it is used)."""
    if not isinstance(v, (int, float, str)):
        raise t.error(f"{key} must be a number or a text", key, hint='e.g. 0.1 or "10 %"')
    return v


def _fraction(t: _Table, key: str, v: Any) -> float | str:
    if isinstance(v, bool) or not isinstance(v, (int, float, str)):
        raise t.error(f"{key} must be a fraction or a percentage", key, hint='e.g. 0.05 or "5 %"')
    return v


def _stamp(t: _Table, key: str, v: Any) -> str | datetime.date:
    if not isinstance(v, (str, datetime.date)):
        raise t.error(f"{key} must be text", key)
    return v


def _texts(t: _Table, key: str, v: Any) -> tuple[str, ...]:
    if not isinstance(v, list) or not all(isinstance(x, str) for x in v):
        raise t.error(f"{key} must be an array of text", key, hint=f'e.g. {key} = ["mannitol", "sucrose"]')
    return tuple(v)


def _numbers(t: _Table, key: str, v: Any) -> tuple[float, ...]:
    if not isinstance(v, list) or not all(_number(x) for x in v):
        raise t.error(f"{key} must be an array of numbers", key, hint=f"e.g. {key} = [1, 1]")
    return tuple(v)


def _amounts(t: _Table, key: str, v: Any) -> tuple[tuple[str, str], ...]:
    if not isinstance(v, dict):
        raise t.error(f"[{t.path}.{key}] must be a table of id = \"amount\"", key, hint='e.g. sucrose = "20 g/L"')
    for cid, amount in v.items():
        dotted = dotted_key_error(cid, amount, f"{t.field_name}.{key}", text=t.text, file=t.file,
                                  table=f"{t.path}.{key}", error=t.cls)
        if dotted is not None:
            raise dotted
        if not isinstance(amount, str):
            raise t.error(f"amount of {cid} must be text with a unit", cid, table=f"{t.path}.{key}",
                          field_name=f"{t.field_name}.{key}.{cid}", hint='like "20 g/L"')
    return tuple(v.items())


def _potential(t: _Table, key: str, v: Any) -> float:
    if not _number(v):
        raise t.error(f"{key} must be a negative number", key)
    return v


def _counts(t: _Table, key: str, v: Any) -> tuple[int, ...]:
    """An array of counts, or one bare count (kept bare on writing); whole numbers are checked on fitting."""
    if not isinstance(v, list):
        t.single.add(key)
        v = [v]
    for r, x in enumerate(v, start=1):
        if not _number(x):
            raise t.error(f"{key} {x!r} is not a whole number of cells", key, field_name=f"{t.field_name}.{key}[{r}]",
                          hint="counts are whole numbers, 0 or more")
    return tuple(v)


_LEVEL = {"level": _number_value, "water_potential_mpa": _potential, "osmolality_mosmol_per_kg": _number_value,
          "molality_mol_per_kg": _number_value, "grams_per_litre": _number_value, "grams": _number_value,
          "stock_ml": _number_value, "diluent_ml": _number_value, "plasmolysed": _counts, "total": _counts}


def _levels(t: _Table, key: str, v: Any) -> tuple[LevelRecord, ...]:
    if not isinstance(v, list):
        raise t.error(f"{key} must be an array of tables, one [[{t.path}.{key}]] per level", key)
    levels, layouts = [], []
    for i, lv in enumerate(v, start=1):
        where = f"{t.field_name}.{key}[{i}]"
        if not isinstance(lv, dict):
            raise t.error("a level must be a table", key, field_name=where)
        level, layout = _Table(f"{t.path}.{key}", lv, t.text, t.file, nth=i, field_name=where,
                               kept=t.kept).read(LevelRecord, _LEVEL)
        levels.append(level)
        layouts.append(layout)
    t.items = tuple(layouts)
    return tuple(levels)


def _digests(t: _Table, key: str, v: Any) -> dict[str, str]:
    if not isinstance(v, dict):
        raise t.error(f"[{t.path}.{key}] must be a table", key)
    return dict(v)


def _embedded(t: _Table, key: str, v: Any) -> dict[str, Any]:
    if not isinstance(v, dict):
        raise t.error(f"[{t.path}.{key}] must be a table", key)
    for kind in ("components", "media"):
        if kind in v and not isinstance(v[kind], dict):
            raise t.error(f"[{t.path}.{key}.{kind}] must be a table", kind, table=f"{t.path}.{key}",
                          field_name=f"{t.field_name}.{key}.{kind}")
    for kind, entries in v.items():
        if kind in ("components", "media"):
            continue
        if t.kept is None:
            raise unknown_name((*t.path.split("."), key, kind), entries, ("components", "media"), text=t.text,
                               file=t.file, error=t.cls)
        t.kept.append(f"{t.field_name}.{key}.{kind}")
    return dict(v)


#: per table: the record class, the reader of each known key, the error class
_READ: dict[str, tuple[type, dict[str, Callable], type[MediaplanError]]] = {
    "target": (TargetRecord, {"value": _text, "osmotica": _texts, "hold": _amounts, "ratio": _numbers},
               PlanFileError),
    "cells": (CellReference, {"osmolality": _text, "potential": _text, "tolerance": _fraction, "source": _text,
                              "ci95": _text}, PlanFileError),
    "projection": (ProjectionRecord, dict.fromkeys(("autoclave_hydrolysis", "water_loss_per_week", "water_loss",
                                                    "weeks"), _scalar), PlanFileError),
    "series": (SeriesRecord, {"osmoticum": _text, "spacing": _text, "volume": _text, "temperature": _text,
                              "background_potential_mpa": _number_value, "stock": _text, "levels": _levels},
               PlanFileError),
    "provenance": (Provenance, {"recorded": _stamp, "mediaplan": _stamp, "components": _digests, "media": _digests,
                                "embedded": _embedded}, CatalogError),
}


_READING = {"value": _text, "instrument": _text, "date": _stamp, "operator": _text, "note": _text,
            "chamber_temperature": _text}
_READING_KEYS = tuple(_READING)


def read_readings(raw: Any, *, text: str = "", file: str | None = None, kept: list[str] | None = None,
                  strict: bool = False) -> tuple[tuple[ReadingRecord, ...], Layout]:
    """The ``[[readings]]`` records of a plan (each reading's keys checked like any table's) and their
    layouts (``Layout.items``, one per reading). What a value means (its unit, the instrument's name) is
    checked where it is used."""
    if raw is None:
        return (), Layout()
    if not isinstance(raw, list) or not all(isinstance(r, dict) for r in raw):
        raise PlanFileError(f"{READINGS} must be an array of tables, one [[{READINGS}]] per reading", file=file,
                            line=line_of(text, None, READINGS) or locate(text, (READINGS,)), field=READINGS,
                            hint=f'[[{READINGS}]] then value = "182 mOsm/kg", instrument = "freezing-point"')
    records, layouts = [], []
    for i, r in enumerate(raw, start=1):
        rec, layout = _Table(READINGS, r, text, file, nth=i, field_name=f"{READINGS}[{i}]",
                             kept=None if strict else kept if kept is not None else []).read(ReadingRecord, _READING)
        records.append(rec)
        layouts.append(layout)
    return tuple(records), Layout(items=tuple(layouts))


def readings_table(readings: Iterable[ReadingRecord], layout: Layout | None = None) -> list[dict[str, Any]]:
    """The ``[[readings]]`` array of tables, each reading laid out as it was read (new ones in key order)."""
    items = layout.items if layout is not None else ()
    return [_arranged(_ordered(r, _READING_KEYS), items[i] if i < len(items) else None)
            for i, r in enumerate(readings)]


def known_keys(name: str) -> tuple[str, ...]:
    """The keys an optional table knows in this format version (``"series.levels"`` for a level)."""
    if name == "series.levels":
        return tuple(_LEVEL)
    if name == READINGS:
        return _READING_KEYS
    return tuple(_READ[name][1])


def read_table(name: str, raw: dict, *, text: str = "", file: str | None = None,
               kept: list[str] | None = None, strict: bool = False) -> tuple[Any, Layout]:
    """The record of one optional table (None for an empty table) and the table's layout.

    name : ``"target"``, ``"cells"``, ``"projection"``, ``"series"`` or ``"provenance"``
    raw : the table as TOML gave it
    text : the file's text (to name the line of an error)
    strict : a key the table does not know is an error (:func:`unknown_name`); else it is kept in the
        record's ``extra`` and its name appended to ``kept``
    """
    cls, spec, error = _READ[name]
    if not raw:
        return None, Layout()
    return _Table(name, raw, text, file, error=error, kept=None if strict else kept if kept is not None else []
                  ).read(cls, spec)


def read_tables(data: Mapping[str, Any], *, text: str = "", file: str | None = None, strict: bool = False,
                kept: list[str] | None = None) -> tuple[dict[str, Any], dict[str, Layout]]:
    """The records of every optional table in ``data`` (a parsed plan file) and their layouts.

    strict, kept : as for :func:`read_table`
    """
    records, layouts = {}, {}
    for name in TABLES:
        if name in data:
            records[name], layouts[name] = read_table(name, data[name], text=text, file=file, kept=kept,
                                                      strict=strict)
    if READINGS in data:
        records[READINGS], layouts[READINGS] = read_readings(data[READINGS], text=text, file=file, kept=kept,
                                                             strict=strict)
    return records, layouts


# ---- writing -------------------------------------------------------------------------------------
def _ordered(record: TableView, keys: tuple[str, ...]) -> dict[str, Any]:
    """The record's table with its known keys in ``keys`` order, then its unknown keys."""
    table = record.table()
    out = {k: table[k] for k in keys if k in table}
    out.update((k, v) for k, v in table.items() if k not in out)
    return out


def _arranged(table: dict[str, Any], layout: Layout | None) -> dict[str, Any]:
    """``table`` with its keys in the order they were read, new keys after; bare counts kept bare."""
    if layout is None:
        return table
    keys = [k for k in layout.keys if k in table] + [k for k in table if k not in layout.keys]
    out = {}
    for k in keys:
        v = table[k]
        if k in layout.single and isinstance(v, list) and len(v) == 1:
            v = v[0]
        out[k] = v
    return out


def target_table(t: TargetRecord) -> dict[str, Any]:
    """The ``[target]`` table of a record."""
    return _ordered(t, ("value", "osmotica", "hold", "ratio"))


def cells_table(c: CellReference) -> dict[str, Any]:
    """The ``[cells]`` table of a record (a fitted reference: potential, osmolality, source, ci95)."""
    return _ordered(c, ("potential", "osmolality", "source", "ci95", "tolerance"))


def projection_table(p: ProjectionRecord) -> dict[str, Any]:
    """The ``[projection]`` table of a record."""
    return _ordered(p, ("autoclave_hydrolysis", "water_loss_per_week", "water_loss", "weeks"))


_LEVEL_KEYS = ("level", "water_potential_mpa", "osmolality_mosmol_per_kg", "molality_mol_per_kg", "grams_per_litre",
               "grams", "stock_ml", "diluent_ml", "plasmolysed", "total")


def level_table(lv: LevelRecord, layout: Layout | None = None) -> dict[str, Any]:
    """The ``[[series.levels]]`` table of one level."""
    return _arranged(_ordered(lv, _LEVEL_KEYS), layout)


def series_table(s: SeriesRecord, layout: Layout | None = None) -> dict[str, Any]:
    """The ``[series]`` table of a record (each level laid out as it was read)."""
    items = layout.items if layout is not None else ()
    levels = [level_table(lv, items[i] if i < len(items) else None) for i, lv in enumerate(s.levels or ())]
    table = _ordered(s, ("osmoticum", "spacing", "volume", "temperature", "background_potential_mpa", "stock",
                         "levels"))
    if "levels" in table:
        table["levels"] = levels
    return _arranged(table, layout)


def provenance_table(p: Provenance) -> dict[str, Any]:
    """The ``[provenance]`` table of a record."""
    return _ordered(p, ("recorded", "mediaplan", "components", "media", "embedded"))


_WRITE: dict[str, Callable[[Any], dict[str, Any]]] = {
    "target": target_table, "cells": cells_table, "projection": projection_table, "provenance": provenance_table,
}


def write_table(name: str, record, layout: Layout | None = None) -> dict[str, Any]:
    """The TOML table of one optional record, laid out as ``layout`` says (as read); ``{}`` for an empty one."""
    if name == "series":
        return series_table(record, layout)
    return _arranged(_WRITE[name](record), layout)


def write_tables(plan) -> dict[str, dict[str, Any]]:
    """The non-empty optional tables of a plan, in file order, each laid out as it was read."""
    out = {}
    for name in TABLES:
        record = getattr(plan, name)
        if record is not None:
            table = write_table(name, record, plan.layout.get(name))
            if table:
                out[name] = table
    readings = getattr(plan, READINGS, ())
    if readings:
        out[READINGS] = readings_table(readings, plan.layout.get(READINGS))
    return out


# ---- records made from results -------------------------------------------------------------------
def _sig(x: float, digits: int) -> float:
    return float(f"{x:.{digits}g}")


def series_record_of(design) -> SeriesRecord:
    """The ``[series]`` record of a designed series (a SeriesDesign): the design as saved, counts empty.

    Figures are saved rounded: potentials to 1e-6 MPa, osmolalities to 1e-3 mOsm/kg, molality and g/L to
    7 significant digits, grams to 5, volumes to 1e-3 mL.
    """
    levels = []
    for lv in design.levels:
        with_stock = lv.stock_ml is not None
        levels.append(LevelRecord(
            level=lv.level, water_potential_mpa=round(lv.water_potential_mpa, 6),
            osmolality_mosmol_per_kg=round(lv.osmolality_mosmol_per_kg, 3),
            molality_mol_per_kg=_sig(lv.molality_mol_per_kg, 7), grams_per_litre=_sig(lv.grams_per_litre, 7),
            grams=_sig(lv.grams, 5), stock_ml=round(lv.stock_ml, 3) if with_stock else None,
            diluent_ml=round(lv.diluent_ml, 3) if with_stock else None, plasmolysed=(), total=()))
    return SeriesRecord(osmoticum=design.osmoticum, spacing=design.spacing, volume=f"{design.volume_ml:g} mL",
                        temperature=f"{design.temperature_c:g} degC",
                        background_potential_mpa=round(design.background_potential_mpa, 6),
                        stock=design.stock.amount if design.stock is not None else None, levels=tuple(levels))


def target_record_of(solution) -> TargetRecord:
    """The ``[target]`` record of a solve (a Solution): its target as written, osmotica, hold and ratio."""
    return TargetRecord(value=solution.target.text, osmotica=tuple(solution.osmotica),
                        hold=tuple(solution.hold.items()) if solution.hold else None,
                        ratio=tuple(solution.ratio) if solution.ratio else None)


def cell_reference_of(fit, date: str) -> CellReference:
    """The ``[cells]`` record of a plasmolysis fit (a PlasmolysisFit) made on ``date`` (ISO day)."""
    ci = fit.ci95_mpa
    return CellReference(
        potential=f"{fit.water_potential_50_mpa:.4g} MPa", osmolality=f"{fit.osmolality_50_mosmol_per_kg:.4g} mOsm/kg",
        source=f"incipient plasmolysis fit, {date}, {fit.link}, {fit.n_levels} levels",
        ci95=f"{ci[0]:.4g} to {ci[1]:.4g} MPa ({fit.ci_method})" if ci is not None else None)


__all__ = ["READINGS", "TABLES", "Layout", "Provenance", "ReadingRecord", "TargetRecord", "cell_reference_of", "cells_table", "dotted_key",
           "dotted_key_error", "known_keys", "level_table", "line_of", "locate", "nearest", "projection_table",
           "provenance_table", "read_readings", "read_table", "read_tables", "readings_table", "series_record_of", "series_table", "target_record_of",
           "target_table", "unknown_name", "write_table", "write_tables"]
