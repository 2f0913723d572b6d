"""Plan files: our own TOML format, readable by hand and friendly to diff.

```toml
[mediaplan]
format = "mediaplan-plan"
version = "1.0"            # major.minor; a newer major is refused, unknown keys of a newer minor kept

[plan]
title = "Shoot multiplication, cultivar trial"
author = "..."
notes = "..."

[medium]
volume = "1 L"
temperature = "25 degC"
storage_temperature = "4 degC"   # optional: where the medium and its stocks are kept (solubility checks)
base = "ms1962"            # optional published formulation
strength = 1.0
strength_scope = "salts"   # which base lines the strength scales: salts, macro or all (absent: all)

[medium.components]        # id, formula or name = amount (overrides the base; "0 g/L" removes)
sucrose = "30 g/L"
"6-benzylaminopurine" = "1 mg/L"
```
Optional tables: ``[target]``, ``[cells]``, ``[projection]``, ``[series]``, ``[provenance]``, held by the
Plan as typed records (:mod:`mediaplan.files.plan_tables` reads and writes them, in the form they were read).

Saving goes through :func:`atomic_write`, the one write path for a user's files (temp file in the same
folder, flush, fsync, ``os.replace``; new files created exclusively; links, modes and owners kept; numbered
backups ``NAME.toml.bak``, ``NAME.toml.2.bak`` ...), refuses to overwrite a file that changed on disk since
it was opened, and edits a plan saved over its own file in place (:mod:`mediaplan.files.edit`), keeping
what its author wrote.
"""

from __future__ import annotations

import contextlib
import errno
import hashlib
import os
import re
import stat
import tempfile
import time
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import tomli_w

try:  # advisory locks where the platform has them
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None

from mediaplan.files import plan_tables, reading
from mediaplan.files.plan_tables import Layout, Provenance, TargetRecord
from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError, ConflictError, MediaplanError, PlanFileError
from mediaplan.medium.recipe import (
    DEFAULT_STRENGTH_SCOPE,
    PLAN_FILE_STRENGTH_SCOPE,
    STRENGTH_SCOPES,
    Recipe,
)
from mediaplan.medium.units import parse_amount
from mediaplan.tasks.cells import CellReference
from mediaplan.tasks.plasmolysis.counts import SeriesRecord
from mediaplan.tasks.projection import ProjectionRecord

FORMAT = "mediaplan-plan"
VERSION = "1.0"
_KNOWN_TOP = {"mediaplan", "plan", "medium", "target", "cells", "projection", "series", "provenance",
              "readings"}
#: the keys of the plan's own tables in the format versions this release writes (1.0; the optional tables'
#: keys are in :mod:`mediaplan.files.plan_tables`)
SCHEMA: dict[str, tuple[str, ...]] = {"mediaplan": ("format", "version"), "plan": ("title", "author", "notes"),
                                      "medium": ("volume", "temperature", "storage_temperature", "base", "strength",
                                                 "strength_scope", "components")}


@dataclass
class Plan:
    """A recipe plus what a lab records around it.

    target, cells, projection, series, provenance : the optional tables as typed records (None = absent)
    readings : the osmometer readings recorded for batches of the plan (``[[readings]]``), oldest first
    extra : unknown tables of a newer minor version, kept as they were
    path : the file the plan was opened from or last saved to
    disk_digest : hash of the file's bytes when opened or last saved
    layout : how each optional table was written (key order...), so that it is written back the same way
    version : the format version the file declares (``"1.0"``; a newer minor version, ``"1.3"``, when the
        plan keeps tables or keys of that version)
    extra_keys : unknown keys of a newer minor version in [mediaplan], [plan] and [medium], kept as they were
    read_notes : what reading found worth saying (tables and keys of a newer minor version kept unread)
    """

    recipe: Recipe = field(default_factory=Recipe)
    title: str = "Untitled medium"
    author: str = ""
    notes: str = ""
    target: TargetRecord | None = None
    cells: CellReference | None = None
    projection: ProjectionRecord | None = None
    series: SeriesRecord | None = None
    provenance: Provenance | None = None
    readings: tuple[plan_tables.ReadingRecord, ...] = ()
    extra: dict = field(default_factory=dict)
    path: Path | None = None
    disk_digest: str | None = None
    layout: dict[str, Layout] = field(default_factory=dict, compare=False, repr=False)
    version: str = VERSION
    extra_keys: dict[str, dict] = field(default_factory=dict)
    read_notes: tuple[str, ...] = field(default=(), compare=False, repr=False)

    def with_recipe(self, recipe: Recipe) -> Plan:
        return replace(self, recipe=recipe)


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _line_of(text: str, key: str, table: str | None = None) -> int | None:
    """Best guess at the line where ``key`` is defined (for error messages)."""
    lines = text.splitlines()
    start = 0
    if table:
        for i, ln in enumerate(lines):
            if re.match(rf"^\s*\[{re.escape(table)}\]\s*(#.*)?$", ln):
                start = i
                break
    pat = re.compile(rf'^\s*["\']?{re.escape(key)}["\']?\s*=')
    for i in range(start, len(lines)):
        if pat.match(lines[i]):
            return i + 1
    return None


def _toml_error_line(exc: tomllib.TOMLDecodeError) -> int | None:
    lineno = getattr(exc, "lineno", None)
    if lineno:
        return int(lineno)
    m = re.search(r"line (\d+)", str(exc))
    return int(m.group(1)) if m else None


def loads(text: str, *, file: str | None = None, catalog: Catalog | None = None) -> Plan:
    """Parse plan text. Raises PlanFileError (or AmountError...) naming file, line and field.

    Tables, arrays and dotted keys nested deeper than :data:`mediaplan.files.reading.TOML_MAX_DEPTH` are
    refused before the TOML parser sees them (it would recurse once per bracket, and take time growing with
    the square of a dotted key's parts).
    """
    deep = reading.toml_dotted_key_line(text)
    if deep is not None:
        raise reading.too_deep("plan", file, reading.TOML_MAX_DEPTH, deep)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc).split(" (at ")[0]
        raise PlanFileError(f"malformed TOML: {msg}", file=file, line=_toml_error_line(exc),
                            hint="check quotes, brackets and '=' on that line") from None
    except RecursionError:
        raise reading.too_deep("plan", file, reading.TOML_MAX_DEPTH, reading.toml_nesting(text)) from None
    if reading.nesting_depth(data, reading.TOML_MAX_DEPTH) > reading.TOML_MAX_DEPTH:
        raise reading.too_deep("plan", file, reading.TOML_MAX_DEPTH, reading.toml_nesting(text))
    return from_dict(data, text=text, file=file, catalog=catalog)


def _schema(data: dict, *, newer: bool, text: str, file: str | None, kept: list[str]) -> dict[str, dict]:
    """Check the plan's tables and the keys of [mediaplan], [plan] and [medium] against :data:`SCHEMA`.

    Strict (``newer`` false): an unknown table or key is an error naming its line and the nearest known
    name. For a newer minor version they are kept: unknown tables stay in ``data`` (the Plan's ``extra``),
    unknown keys of the three tables are returned (table -> key -> value); ``kept`` gets their names.
    """
    extra_keys: dict[str, dict] = {}
    for name, value in data.items():
        if name not in _KNOWN_TOP:
            if not newer:
                raise plan_tables.unknown_name((name,), value, _KNOWN_TOP, text=text, file=file)
            kept.append(f"[{name}]" if isinstance(value, dict) else name)
    for table, known in SCHEMA.items():
        raw = data.get(table)
        if not isinstance(raw, dict):
            continue
        for key, value in raw.items():
            if key in known:
                continue
            if not newer:
                hint = None
                if table == "medium" and isinstance(value, str) and plan_tables.nearest(key, known) is None:
                    hint = f'amounts go under [medium.components]: {plan_tables._toml_key(key)} = "{value}"'
                raise plan_tables.unknown_name((table, key), value, known, text=text, file=file, hint=hint)
            extra_keys.setdefault(table, {})[key] = value
            kept.append(f"{table}.{key}")
    return extra_keys


def _text_field(plan_t: dict, key: str, default: str, text: str, file: str | None) -> str:
    value = plan_t.get(key, default)
    if not isinstance(value, str):
        raise PlanFileError(f"{key} must be text", file=file, line=plan_tables.locate(text, ("plan", key)),
                            field=f"plan.{key}", hint=f'write it in quotes, like {key} = "..."')
    return value


def from_dict(data: dict, *, text: str = "", file: str | None = None, catalog: Catalog | None = None) -> Plan:
    head = data.get("mediaplan")
    if not isinstance(head, dict) or head.get("format") != FORMAT:
        raise PlanFileError("not a mediaplan plan file (no [mediaplan] table with format = \"mediaplan-plan\")",
                            file=file, line=1, hint="start the file with [mediaplan] format/version lines")
    version = str(head.get("version", ""))
    m = re.fullmatch(r"(\d{1,9})\.(\d{1,9})", version)
    if not m:
        shown = version if len(version) <= 40 else version[:40] + "…"
        raise PlanFileError(f"unreadable format version {shown!r}", file=file,
                            line=_line_of(text, "version", "mediaplan"), field="mediaplan.version",
                            hint=f'write version = "{VERSION}"')
    major, minor = int(m.group(1)), int(m.group(2))
    if major > 1:
        raise PlanFileError(f"plan format {version} is newer than this mediaplan understands (1.x)", file=file,
                            line=_line_of(text, "version", "mediaplan"), field="mediaplan.version",
                            hint="update mediaplan to open it")
    ours = tuple(int(x) for x in VERSION.split("."))
    newer = (major, minor) > ours
    kept: list[str] = []
    extra_keys = _schema(data, newer=newer, text=text, file=file, kept=kept)
    if major < 1:
        data = migrate(data, major)

    def err(msg, key, table, hint=None, cls=PlanFileError):
        return cls(msg, file=file, line=_line_of(text, key, table), field=f"{table}.{key}" if table else key, hint=hint)

    plan_t = data.get("plan", {})
    if not isinstance(plan_t, dict):
        raise err("[plan] must be a table", "plan", None)
    title = _text_field(plan_t, "title", "Untitled medium", text, file)
    author = _text_field(plan_t, "author", "", text, file)
    notes = _text_field(plan_t, "notes", "", text, file)
    med = data.get("medium")
    if not isinstance(med, dict):
        raise PlanFileError("missing [medium] table", file=file, hint="add [medium] with volume and temperature")
    for key in ("volume", "temperature", "storage_temperature", "base"):
        if key in med and not isinstance(med[key], str):
            raise err(f"{key} must be text, like \"1 L\"", key, "medium")
    strength = med.get("strength", 1.0)
    if isinstance(strength, bool) or not isinstance(strength, (int, float)):
        raise err("strength must be a number (1 = full, 0.5 = half)", "strength", "medium")
    scope = med.get("strength_scope", file_strength_scope(med.get("base") or None))
    if not isinstance(scope, str) or scope not in STRENGTH_SCOPES:
        raise err(f"strength_scope must be one of {', '.join(f'{s!r}' for s in STRENGTH_SCOPES)}",
                  "strength_scope", "medium",
                  hint='"salts" scales the mineral salts (the usual half-strength), "all" every line')
    comps = med.get("components", {})
    if not isinstance(comps, dict):
        raise err("[medium.components] must be a table of id = \"amount\"", "components", "medium")
    amounts = []
    seen: dict[str, str] = {}  # id -> key as written (a set, so that 100 000 components take no time)
    parsed: dict[str, Any] = {}  # amount text -> Amount (the parser's own cache is keyed by field too)
    for key, val in comps.items():
        if not isinstance(val, str):
            dotted = plan_tables.dotted_key_error(key, val, "medium.components", text=text, file=file)
            if dotted is not None:
                raise dotted
            raise err(f"amount of {key} must be text with a unit, like \"30 g/L\"", key, "medium.components")
        amt = parsed.get(val)
        if amt is None:
            try:
                amt = parsed[val] = parse_amount(val, field=f"medium.components.{key}")
            except AmountError as exc:
                raise exc.located(file=file, line=_line_of(text, key, "medium.components")) from None
        cid = key
        if catalog is not None:
            try:
                cid = catalog.resolve(key, field=f"medium.components.{key}").component.id
            except MediaplanError as exc:
                raise exc.located(file=file, line=_line_of(text, key, "medium.components")) from None
        if cid in seen:
            raise err(f"{key} is listed twice (as {cid})", key, "medium.components", hint="keep one line")
        seen[cid] = key
        amounts.append((cid, amt))
    try:
        recipe = Recipe(volume=med.get("volume", "1 L"), temperature=med.get("temperature", "25 degC"),
                        base=med.get("base") or None, strength=float(strength), amounts=tuple(amounts),
                        storage_temperature=med.get("storage_temperature"), strength_scope=scope)
    except AmountError as exc:
        key = (exc.field or "").split(".")[-1] or "volume"
        raise exc.located(file=file, line=_line_of(text, key, "medium")) from None
    if catalog is not None and recipe.base:
        try:
            catalog.medium(recipe.base, field="medium.base")
        except MediaplanError as exc:
            raise exc.located(file=file, line=_line_of(text, "base", "medium")) from None
    for name in ("target", "cells", "projection", "series", "provenance"):
        if name in data and not isinstance(data[name], dict):
            raise err(f"[{name}] must be a table", name, None)
    tables, layout = plan_tables.read_tables(data, text=text, file=file, strict=not newer, kept=kept)
    extra = {k: v for k, v in data.items() if k not in _KNOWN_TOP}
    read_notes = ()
    if kept:
        read_notes = (f"plan format {version} is newer than this mediaplan writes ({VERSION}): "
                      f"{', '.join(kept)} kept as written, not used",)
    return Plan(recipe=recipe, title=title, author=author, notes=notes, **tables, extra=extra, layout=layout,
                version=version if newer else VERSION, extra_keys=extra_keys, read_notes=read_notes)


def file_strength_scope(base: str | None) -> str:
    """The strength scope of a plan file that states none: ``all`` with a base (what the releases that wrote
    such a file computed, so its numbers stay), the default of a new recipe without one (no line to scale)."""
    return PLAN_FILE_STRENGTH_SCOPE if base else DEFAULT_STRENGTH_SCOPE


def migrate(data: dict, major: int) -> dict:
    """Bring an older plan to the current format (no older major exists yet: 0.x is accepted as 1.0)."""
    data = dict(data)
    data["mediaplan"] = {**data["mediaplan"], "version": VERSION}
    return data


def to_dict(plan: Plan) -> dict:
    r = plan.recipe
    # a plan that keeps tables or keys of a newer minor version keeps declaring that version
    d: dict[str, Any] = {"mediaplan": {"format": FORMAT, "version": plan.version or VERSION}}
    pt: dict[str, Any] = {"title": plan.title}
    if plan.author:
        pt["author"] = plan.author
    if plan.notes:
        pt["notes"] = plan.notes
    d["plan"] = pt
    med: dict[str, Any] = {"volume": r.volume, "temperature": r.temperature}
    if r.storage_temperature is not None:
        med["storage_temperature"] = r.storage_temperature
    if r.base:
        med["base"] = r.base
        med["strength"] = r.strength
    elif r.strength != 1.0:
        med["strength"] = r.strength
    if r.strength_scope != file_strength_scope(r.base):
        med["strength_scope"] = r.strength_scope
    med["components"] = {cid: a.text for cid, a in r.amounts}
    d["medium"] = med
    for table, keys in plan.extra_keys.items():  # keys of a newer minor version, kept as read
        d[table].update((k, v) for k, v in keys.items() if k not in d[table])
    d.update(plan_tables.write_tables(plan))
    for k, v in plan.extra.items():
        d[k] = v
    return d


def dumps(plan: Plan) -> str:
    return tomli_w.dumps(to_dict(plan))


def read(path: str | Path, *, catalog: Catalog | None = None) -> Plan:
    """Open a plan file; remembers the content hash to detect later changes on disk.

    Only a regular UTF-8 file of at most 8 MiB is read (:mod:`mediaplan.files.reading`): a folder, a FIFO
    or a device is refused in one line, never waited on.
    """
    p = Path(path)
    raw = reading.read_bytes(p, "plan")
    text = reading.decode(raw, p, "plan")
    plan = loads(text, file=str(p), catalog=catalog)
    plan.path = p
    plan.disk_digest = _digest(raw)
    return plan


# ---- saving: the one write path for every file mediaplan writes for a user ---------------------------
class WriteRefusedError(PlanFileError, OSError):
    """A write refused before anything changed: a folder, a special file, a read-only file, a dangling
    symbolic link, a file of several hard links that could not be backed up first. Also an OSError, so
    code that treats any failed write as an OSError keeps doing so."""


class FileExistsConflictError(ConflictError, FileExistsError):
    """A file exists where a new one was to be created, or another writer created it meanwhile."""


@dataclass
class WriteReport:
    """What :func:`atomic_write` did.

    path : the file written (for a symbolic link, the file it points to)
    backup : the backup made of what was there, or None
    notes : what the user should be told (a backup that could not be made, an owner that could not be kept)
    """

    path: Path
    backup: Path | None = None
    notes: list[str] = field(default_factory=list)


#: seconds after which a temp file of a writer that no longer runs is removed by the next write beside it
STALE_TEMP_AGE = 60.0

_KINDS = ((stat.S_ISFIFO, "named pipe (FIFO)"), (stat.S_ISCHR, "character device"),
          (stat.S_ISBLK, "block device"), (stat.S_ISSOCK, "socket"))


def backup_name(path: Path, n: int = 1) -> Path:
    """The ``n``-th backup of ``path``: ``NAME.bak``, then ``NAME.2.bak``, ``NAME.3.bak`` ..."""
    return path.with_name(f"{path.name}.bak" if n == 1 else f"{path.name}.{n}.bak")


def atomic_write(path: str | os.PathLike, data: bytes, *, backup: bool = True, exist_ok: bool = True) -> WriteReport:
    """Write ``data`` to ``path`` so that a crash leaves the old file or the new one, never a torn one.

    The one way mediaplan writes a user's file (plans, reports, sheets, plots):

    - a new file is written to a temp file in the same folder (flush, fsync) and then created
      exclusively under its name (a hard link, which fails when the name exists): of two writers
      creating the same file one wins, the other gets :class:`FileExistsConflictError`;
    - an existing file is replaced only with ``exist_ok`` (else :class:`FileExistsConflictError`):
      temp file, fsync, backup, ``os.replace``, then the folder is fsynced; the new file keeps the old
      one's permissions and, where the system allows it, its owner and group (a note says when not);
    - a symbolic link is written through: the file it points to is replaced, the link stays (a link to
      nothing is refused); a folder, a named pipe, a device or a socket is refused, never replaced;
    - a read-only file, or one this user may not write, is refused;
    - a file with several hard links is written in place, after its backup, so that every link still
      shows it (without a backup it is refused; ``backup=False`` writes it in place without one);
    - data equal to what the file holds writes nothing;
    - backups are numbered and never overwritten: ``NAME.bak``, ``NAME.2.bak`` ...; a backup that cannot
      be made does not stop the save, and the report's notes say so;
    - the temp file never outlives a failure (an exception or an interrupt); temp files left by a writer
      that was killed are removed by the next write of the same file.

    Refusals raise :class:`WriteRefusedError` or :class:`FileExistsConflictError` (both MediaplanError
    and OSError); a failure of the system raises OSError. Returns a :class:`WriteReport`.
    """
    given = Path(path)
    report = WriteReport(given)
    target, st = _write_target(given)
    report.path = target
    _clean_stale_temps(target)
    if st is None:
        _replace_with(target, data, mode_from=target, exclusive=True)
    else:
        if not exist_ok:
            raise FileExistsConflictError("already exists", file=str(given), asks_for="force",
                                          hint="choose another name, or say that it may be replaced")
        if _holds(target, data):
            return report
        if st.st_nlink > 1:
            _write_in_place(target, data, st, backup=backup, report=report)
        else:
            def before_replace() -> None:
                if backup:
                    _make_backup(target, report)

            _replace_with(target, data, mode_from=target, owner_from=st, before_replace=before_replace,
                          report=report)
    _fsync_dir(target.parent if str(target.parent) else Path("."))
    return report


def _write_target(path: Path) -> tuple[Path, os.stat_result | None]:
    """The file a write of ``path`` replaces (a symbolic link's target) and its status (None: no file yet);
    refuses what must never be replaced."""
    try:
        st = os.lstat(path)
    except FileNotFoundError:
        return path, None
    target = path
    if stat.S_ISLNK(st.st_mode):
        target = Path(os.path.realpath(path))
        try:
            st = os.stat(target)
        except FileNotFoundError:
            raise WriteRefusedError(f"is a symbolic link to {target}, which does not exist", file=str(path),
                                    hint="write to a file that exists, or remove the link") from None
    if stat.S_ISDIR(st.st_mode):
        raise WriteRefusedError("is a folder, not a file", file=str(path),
                                hint=f"give a file name inside it, e.g. {path / 'NAME'}")
    if not stat.S_ISREG(st.st_mode):
        kind = next((name for test, name in _KINDS if test(st.st_mode)), "special file")
        raise WriteRefusedError(f"is a {kind}, not a regular file; it is never replaced", file=str(path),
                                hint="name a regular file")
    if not st.st_mode & 0o222:
        raise WriteRefusedError("is read-only", file=str(path),
                                hint="make it writable first if it may change, or write under another name")
    if not os.access(target, os.W_OK):
        raise WriteRefusedError("this user may not write this file", file=str(path),
                                hint="ask its owner, or write under another name")
    return target, st


def _holds(path: Path, data: bytes) -> bool:
    """Does the file hold exactly ``data`` already?"""
    try:
        return path.stat().st_size == len(data) and path.read_bytes() == data
    except OSError:
        return False


def _make_backup(path: Path, report: WriteReport) -> None:
    """Copy ``path`` to its first free backup name (atomic, same permissions); a failure becomes a note."""
    try:
        old = path.read_bytes()
        n = 1
        while os.path.lexists(backup_name(path, n)):
            n += 1
        bak = backup_name(path, n)
        _replace_with(bak, old, mode_from=path)
    except OSError as exc:
        report.notes.append(f"no backup of {path} could be made ({exc.strerror or exc}); the save went ahead")
        return
    report.backup = bak


def _write_in_place(path: Path, data: bytes, st: os.stat_result, *, backup: bool, report: WriteReport) -> None:
    """Overwrite a file of several hard links in place (so every link sees the new text), after a backup."""
    if backup:
        _make_backup(path, report)
        if report.backup is None:
            raise WriteRefusedError(f"has {st.st_nlink} hard links, so it is written in place, and no backup "
                                    "could be made first; nothing was written", file=str(path),
                                    hint="free some space, or write under another name")
    fd = os.open(path, os.O_WRONLY)
    try:
        view = memoryview(data)
        while view:
            view = view[os.write(fd, view):]
        os.ftruncate(fd, len(data))
        os.fsync(fd)
    finally:
        os.close(fd)


def _replace_with(path: Path, data: bytes, *, mode_from: Path, owner_from: os.stat_result | None = None,
                  before_replace=None, exclusive: bool = False, report: WriteReport | None = None) -> None:
    """Temp file beside ``path``: write, flush, fsync, then rename over ``path`` (or, ``exclusive``, create
    ``path`` only if it does not exist); the temp file never outlives a failure."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.{os.getpid()}.", suffix=".tmp", dir=path.parent)
    try:
        _set_mode(fd, mode_from)
        if owner_from is not None:
            _set_owner(fd, owner_from, path, report)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if before_replace is not None:
            before_replace()
        if exclusive:
            _create_from(tmp, path)
        else:
            os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def _create_from(tmp: str, path: Path) -> None:
    """Give the finished temp file ``tmp`` the name ``path`` only if no file has that name (atomic)."""
    def taken() -> FileExistsConflictError:
        return FileExistsConflictError("was created by another program meanwhile; nothing was written over it",
                                       file=str(path), asks_for="force",
                                       hint="choose another name, or say that it may be replaced")

    try:
        os.link(tmp, path)
    except FileExistsError:
        raise taken() from None
    except OSError as exc:
        if exc.errno not in (errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.ENOSYS, errno.EMLINK):
            raise
        # no hard links on this file system: reserve the name exclusively, then rename over the reservation
        try:
            os.close(os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600))
        except FileExistsError:
            raise taken() from None
        os.replace(tmp, path)
        return
    try:
        os.unlink(tmp)
    except OSError:
        pass


def _set_mode(fd: int, path: Path) -> None:
    """Give the new file the old file's permissions, or the usual ones (mkstemp makes it 0600)."""
    try:
        mode = path.stat().st_mode & 0o777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        mode = 0o666 & ~umask
    try:
        os.fchmod(fd, mode)
    except (OSError, AttributeError):  # pragma: no cover - platforms without fchmod
        pass


def _set_owner(fd: int, old: os.stat_result, path: Path, report: WriteReport | None) -> None:
    """Give the new file the old file's owner and group where the system allows it; a note says when not."""
    if not hasattr(os, "fchown"):  # pragma: no cover - Windows
        return
    now = os.fstat(fd)
    if (now.st_uid, now.st_gid) == (old.st_uid, old.st_gid):
        return
    try:
        os.fchown(fd, old.st_uid, old.st_gid)
        return
    except OSError:
        pass
    try:
        os.fchown(fd, -1, old.st_gid)
        kept_group = True
    except OSError:
        kept_group = False
    if report is not None and now.st_uid != old.st_uid:
        report.notes.append(f"{path} now belongs to this user (it belonged to {_user_name(old.st_uid)}"
                            + ("" if kept_group else f", group {_group_name(old.st_gid)}") + ")")
    elif report is not None and not kept_group:
        report.notes.append(f"{path} is now in this user's group (it was in {_group_name(old.st_gid)})")


def _user_name(uid: int) -> str:
    try:
        import pwd

        return pwd.getpwuid(uid).pw_name
    except (ImportError, KeyError):
        return f"user {uid}"


def _group_name(gid: int) -> str:
    try:
        import grp

        return grp.getgrgid(gid).gr_name
    except (ImportError, KeyError):
        return f"group {gid}"


def _clean_stale_temps(path: Path) -> None:
    """Remove temp files of ``path`` left by a writer that no longer runs (killed mid-save), once they are
    older than :data:`STALE_TEMP_AGE`; a running writer's temp file is never touched."""
    prefix = f".{path.name}."
    folder = path.parent if str(path.parent) else Path(".")
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return
    now = time.time()
    for entry in entries:
        name = entry.name
        if not (name.startswith(prefix) and name.endswith(".tmp")):
            continue
        pid, dot, rest = name[len(prefix):-4].partition(".")
        if not (pid.isdigit() and dot and rest) or _running(int(pid)):
            continue
        try:
            if now - entry.stat(follow_symlinks=False).st_mtime > STALE_TEMP_AGE and entry.is_file(
                    follow_symlinks=False):
                os.unlink(entry.path)
        except OSError:
            pass


def _running(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (OSError, OverflowError, ValueError):
        return True
    return True


def _fsync_dir(folder: Path) -> None:
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)


def write(plan: Plan, path: str | Path | None = None, *, force: bool = False, catalog: Catalog | None = None,
          notes: list[str] | None = None) -> Path:
    """Save a plan through :func:`atomic_write`; returns the path saved to.

    - Over the file it was opened from, unchanged on disk since: the file's text is edited
      (:func:`mediaplan.files.edit.updated_text`), so comments, key order, unknown keys, the spelling of
      component keys (``KNO3``) and the format version line stay as written; only what changed is
      rewritten. A numbered backup keeps what was there.
    - As a new file: written whole (tomli-w) and created exclusively (of two writers, one wins).
    - Over any other existing file: refused (ConflictError) unless ``force``; so is a file changed on
      disk since it was opened. Folders, special files, read-only files: refused always.

    catalog : resolves component keys as written to the ids the plan holds, so that edits keep the
        spelling (default: the catalog in force)
    notes : receives what the user should be told about the save (no backup made, owner not kept, the
        plan written afresh because its text could not be edited)
    """
    target = Path(path) if path is not None else plan.path
    if target is None:
        raise PlanFileError("no file name to save to", hint="use save as")
    said: list[str] = []
    try:
        _write_target(target)  # folders, special files, read-only files: refused before anything else
        with _locked(target):
            exists = os.path.lexists(target)
            same_file = plan.path is not None and _same(plan.path, target)
            old = None
            if exists:
                if not force and not same_file:
                    raise ConflictError("a different file already exists there", file=str(target),
                                        asks_for="force", hint="choose another name, or say that it may be replaced")
                old = target.read_bytes()
                if same_file and not force and plan.disk_digest is not None and _digest(old) != plan.disk_digest:
                    raise ConflictError("the file changed on disk since it was opened", file=str(target),
                                        hint="save beside it under another name, then compare (mediaplan diff)")
            data = _plan_bytes(plan, old if same_file and old is not None and plan.disk_digest == _digest(old)
                               else None, catalog, said)
            report = atomic_write(target, data, exist_ok=exists)
    except MediaplanError:
        raise
    except PermissionError:
        raise PlanFileError("no permission to write there", file=str(target),
                            hint="save in another folder") from None
    except OSError as exc:
        raise PlanFileError(f"could not save ({exc.strerror or exc})", file=str(target),
                            hint="the previous file is unchanged; free space or save elsewhere") from None
    if notes is not None:
        kept = [f"the previous version is kept as {report.backup}"] if report.backup else []
        notes += said + kept + report.notes
    plan.path = target
    plan.disk_digest = _digest(data)
    return target


def _plan_bytes(plan: Plan, old: bytes | None, catalog: Catalog | None, notes: list[str]) -> bytes:
    """The bytes a save writes: the old text edited to hold ``plan`` when there is one, else the plan
    written whole."""
    whole = dumps(plan)
    if old is None:
        return whole.encode("utf-8")
    from mediaplan.files.edit import EditError, updated_text

    try:
        text = old.decode("utf-8")
        if text == whole:
            return old
        return updated_text(text, plan, catalog=catalog).encode("utf-8")
    except (EditError, UnicodeDecodeError) as exc:
        notes.append(f"the plan was written afresh; its comments and layout could not be kept ({exc})")
        return whole.encode("utf-8")


@contextlib.contextmanager
def _locked(target: Path):
    """Hold an exclusive advisory lock on the existing file while checking and replacing it, so that of
    two processes saving the same plan the second sees the first one's change and is refused."""
    fd = None
    try:
        if fcntl is not None and _regular(target):
            try:
                fd = os.open(target, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
                fcntl.flock(fd, fcntl.LOCK_EX)
            except OSError:
                if fd is not None:
                    os.close(fd)
                fd = None
        yield
    finally:
        if fd is not None:
            try:
                fcntl.flock(fd, fcntl.LOCK_UN)
            finally:
                os.close(fd)


def _regular(path: Path) -> bool:
    try:
        return stat.S_ISREG(os.stat(path).st_mode)
    except (OSError, ValueError):
        return False


def _same(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve()
    except OSError:
        return False
