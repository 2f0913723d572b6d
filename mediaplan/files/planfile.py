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
base = "ms1962"            # optional published formulation
strength = 1.0

[medium.components]        # id, formula or name = amount (overrides the base; "0 g/L" removes)
sucrose = "30 g/L"
"6-benzylaminopurine" = "1 mg/L"
```
Optional tables: ``[target]``, ``[cells]``, ``[projection]``, ``[series]``, ``[provenance]``, held by the
Plan as typed records (:mod:`mediaplan.files.plan_tables` reads and writes them, in the form they were read).

Saving is atomic (temp file in the same folder, flush, fsync, ``os.replace``), keeps one backup
(``NAME.toml.bak``) and refuses to overwrite a file that changed on disk since it was opened.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import re
import tempfile
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import tomli_w

try:  # advisory locks where the platform has them
    import fcntl
except ImportError:  # pragma: no cover - Windows
    fcntl = None

from mediaplan.files import plan_tables
from mediaplan.files.plan_tables import Layout, Provenance, TargetRecord
from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError, ConflictError, MediaplanError, PlanFileError
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import parse_amount
from mediaplan.tasks.cells import CellReference
from mediaplan.tasks.plasmolysis.counts import SeriesRecord
from mediaplan.tasks.projection import ProjectionRecord

FORMAT = "mediaplan-plan"
VERSION = "1.0"
_KNOWN_TOP = {"mediaplan", "plan", "medium", "target", "cells", "projection", "series", "provenance"}


@dataclass
class Plan:
    """A recipe plus what a lab records around it.

    target, cells, projection, series, provenance : the optional tables as typed records (None = absent)
    extra : unknown tables of a newer minor version, kept as they were
    path : the file the plan was opened from or last saved to
    disk_digest : hash of the file's bytes when opened or last saved
    layout : how each optional table was written (key order...), so that it is written back the same way
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
    extra: dict = field(default_factory=dict)
    path: Path | None = None
    disk_digest: str | None = None
    layout: dict[str, Layout] = field(default_factory=dict, compare=False, repr=False)

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
    """Parse plan text. Raises PlanFileError (or AmountError...) naming file, line and field."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc).split(" (at ")[0]
        raise PlanFileError(f"malformed TOML: {msg}", file=file, line=_toml_error_line(exc),
                            hint="check quotes, brackets and '=' on that line") from None
    return from_dict(data, text=text, file=file, catalog=catalog)


def from_dict(data: dict, *, text: str = "", file: str | None = None, catalog: Catalog | None = None) -> Plan:
    head = data.get("mediaplan")
    if not isinstance(head, dict) or head.get("format") != FORMAT:
        raise PlanFileError("not a mediaplan plan file (no [mediaplan] table with format = \"mediaplan-plan\")",
                            file=file, line=1, hint="start the file with [mediaplan] format/version lines")
    version = str(head.get("version", ""))
    m = re.fullmatch(r"(\d+)\.(\d+)", version)
    if not m:
        raise PlanFileError(f"unreadable format version {version!r}", file=file,
                            line=_line_of(text, "version", "mediaplan"), field="mediaplan.version",
                            hint='write version = "1.0"')
    major, _minor = int(m.group(1)), int(m.group(2))
    if major > 1:
        raise PlanFileError(f"plan format {version} is newer than this mediaplan understands (1.x)", file=file,
                            line=_line_of(text, "version", "mediaplan"), field="mediaplan.version",
                            hint="update mediaplan to open it")
    if major < 1:
        data = migrate(data, major)

    def err(msg, key, table, hint=None, cls=PlanFileError):
        return cls(msg, file=file, line=_line_of(text, key, table), field=f"{table}.{key}" if table else key, hint=hint)

    plan_t = data.get("plan", {})
    if not isinstance(plan_t, dict):
        raise err("[plan] must be a table", "plan", None)
    med = data.get("medium")
    if not isinstance(med, dict):
        raise PlanFileError("missing [medium] table", file=file, hint="add [medium] with volume and temperature")
    for key in ("volume", "temperature", "base"):
        if key in med and not isinstance(med[key], str):
            raise err(f"{key} must be text, like \"1 L\"", key, "medium")
    strength = med.get("strength", 1.0)
    if isinstance(strength, bool) or not isinstance(strength, (int, float)):
        raise err("strength must be a number (1 = full, 0.5 = half)", "strength", "medium")
    comps = med.get("components", {})
    if not isinstance(comps, dict):
        raise err("[medium.components] must be a table of id = \"amount\"", "components", "medium")
    amounts = []
    for key, val in comps.items():
        if not isinstance(val, str):
            raise err(f"amount of {key} must be text with a unit, like \"30 g/L\"", key, "medium.components")
        try:
            amt = parse_amount(val, field=f"medium.components.{key}")
        except AmountError as exc:
            raise exc.located(file=file, line=_line_of(text, key, "medium.components")) from None
        cid = key
        if catalog is not None:
            try:
                cid = catalog.resolve(key, field=f"medium.components.{key}").component.id
            except MediaplanError as exc:
                raise exc.located(file=file, line=_line_of(text, key, "medium.components")) from None
        if any(c == cid for c, _ in amounts):
            raise err(f"{key} is listed twice (as {cid})", key, "medium.components", hint="keep one line")
        amounts.append((cid, amt))
    try:
        recipe = Recipe(volume=med.get("volume", "1 L"), temperature=med.get("temperature", "25 degC"),
                        base=med.get("base") or None, strength=float(strength), amounts=tuple(amounts))
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
    tables, layout = plan_tables.read_tables(data, text=text, file=file)
    extra = {k: v for k, v in data.items() if k not in _KNOWN_TOP}
    return Plan(recipe=recipe, title=str(plan_t.get("title", "Untitled medium")), author=str(plan_t.get("author", "")),
                notes=str(plan_t.get("notes", "")), **tables, extra=extra, layout=layout)


def migrate(data: dict, major: int) -> dict:
    """Bring an older plan to the current format (no older major exists yet: 0.x is accepted as 1.0)."""
    data = dict(data)
    data["mediaplan"] = {**data["mediaplan"], "version": VERSION}
    return data


def to_dict(plan: Plan) -> dict:
    r = plan.recipe
    d: dict[str, Any] = {"mediaplan": {"format": FORMAT, "version": VERSION}}
    pt: dict[str, Any] = {"title": plan.title}
    if plan.author:
        pt["author"] = plan.author
    if plan.notes:
        pt["notes"] = plan.notes
    d["plan"] = pt
    med: dict[str, Any] = {"volume": r.volume, "temperature": r.temperature}
    if r.base:
        med["base"] = r.base
        med["strength"] = r.strength
    elif r.strength != 1.0:
        med["strength"] = r.strength
    med["components"] = {cid: a.text for cid, a in r.amounts}
    d["medium"] = med
    d.update(plan_tables.write_tables(plan))
    for k, v in plan.extra.items():
        d[k] = v
    return d


def dumps(plan: Plan) -> str:
    return tomli_w.dumps(to_dict(plan))


def read(path: str | Path, *, catalog: Catalog | None = None) -> Plan:
    """Open a plan file; remembers the content hash to detect later changes on disk."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise PlanFileError("no such plan file", file=str(p), hint="check the path") from None
    except IsADirectoryError:
        raise PlanFileError("is a folder, not a plan file", file=str(p)) from None
    except OSError as exc:
        raise PlanFileError(f"cannot read ({exc.strerror})", file=str(p)) from None
    except ValueError:  # e.g. a NUL character in the name
        raise PlanFileError("not a usable file name", file=repr(str(p)), hint="check the path") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise PlanFileError("not UTF-8 text", file=str(p), hint="is this really a plan file?") from None
    plan = loads(text, file=str(p), catalog=catalog)
    plan.path = p
    plan.disk_digest = _digest(raw)
    return plan


def atomic_write(path: Path, data: bytes, *, backup: bool = True) -> None:
    """Write ``data`` to ``path`` so that a crash leaves the old file or the new one, never a torn one.

    Temp file in the same folder, write, flush, fsync, then ``os.replace``; the folder is fsynced
    so the rename itself is durable. The previous version is kept as ``path + '.bak'`` (written the
    same way; a backup that cannot be made does not stop the save).
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")

    def before_replace() -> None:
        if backup and path.exists():
            try:
                _replace_with(path.with_name(path.name + ".bak"), path.read_bytes(), mode_from=path)
            except OSError:
                pass

    _replace_with(path, data, mode_from=path, before_replace=before_replace)
    _fsync_dir(folder)


def _replace_with(path: Path, data: bytes, *, mode_from: Path, before_replace=None) -> None:
    """Temp file beside ``path``: write, flush, fsync, then rename over ``path``; the temp file never
    outlives a failure."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        _set_mode(fd, mode_from)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if before_replace is not None:
            before_replace()
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


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


def write(plan: Plan, path: str | Path | None = None, *, force: bool = False) -> Path:
    """Save atomically. Refuses (ConflictError) when the file changed on disk since it was opened,
    or when saving over an existing file that this plan was not opened from, unless ``force``.
    """
    target = Path(path) if path is not None else plan.path
    if target is None:
        raise PlanFileError("no file name to save to", hint="use save as")
    data = dumps(plan).encode("utf-8")
    with _locked(target):
        if target.exists() and not force:
            current = _digest(target.read_bytes())
            same_file = plan.path is not None and _same(plan.path, target)
            if not same_file:
                raise ConflictError("a different file already exists there", file=str(target),
                                    hint="choose another name, or say that it may be overwritten")
            if plan.disk_digest is not None and current != plan.disk_digest:
                raise ConflictError("the file changed on disk since it was opened", file=str(target),
                                    hint="save beside it under another name, then compare (mediaplan diff)")
        try:
            atomic_write(target, data)
        except PermissionError:
            raise PlanFileError("no permission to write there", file=str(target),
                                hint="save in another folder") from None
        except OSError as exc:
            raise PlanFileError(f"could not save ({exc.strerror or exc})", file=str(target),
                                hint="the previous file is unchanged; free space or save elsewhere") from None
    plan.path = target
    plan.disk_digest = _digest(data)
    return target


@contextlib.contextmanager
def _locked(target: Path):
    """Hold an exclusive advisory lock on the existing file while checking and replacing it, so that of
    two processes saving the same plan the second sees the first one's change and is refused."""
    fd = None
    try:
        if fcntl is not None and target.exists():
            try:
                fd = os.open(target, os.O_RDONLY)
                fcntl.flock(fd, fcntl.LOCK_EX)
            except OSError:
                fd = None
        yield
    finally:
        if fd is not None:
            try:
                fcntl.flock(fd, fcntl.LOCK_UN)
            finally:
                os.close(fd)


def _same(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve()
    except OSError:
        return False
