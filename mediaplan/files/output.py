"""Where a command's rendered text goes: standard output, or a file (``-o FILE``) written through the one
safe write path, :func:`mediaplan.files.planfile.atomic_write`."""

from __future__ import annotations

import os
import sys
from pathlib import Path

from mediaplan.files.planfile import WriteRefusedError, atomic_write
from mediaplan.medium.errors import MediaplanError, PlanFileError


def write_output(text: str, path: str | os.PathLike | None = None, *, force: bool = False,
                 reads: tuple[str | os.PathLike | None, ...] = ()) -> None:
    """Print ``text`` (ending it with a newline when it has none), or write it to ``path``.

    The file gets the text byte for byte as UTF-8 (:func:`write_file`); "wrote PATH" goes to standard
    error. A file that exists is replaced only with ``force``; ``reads`` are the files the command reads,
    which an output never replaces.
    """
    if not path:
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
        return
    write_file(text.encode("utf-8"), path, force=force, reads=reads)


def write_file(data: bytes, path: str | os.PathLike, *, force: bool = False,
               reads: tuple[str | os.PathLike | None, ...] = ()) -> Path:
    """Write ``data`` to ``path`` through :func:`~mediaplan.files.planfile.atomic_write` (temp file, fsync,
    rename; created exclusively when new; no backup) and say so on standard error; returns the path.

    Refused, each in one line (a :class:`~mediaplan.medium.errors.MediaplanError`): a file that exists,
    unless ``force``; one of the files the command reads (``reads``), even with ``force``; a folder,
    a special file or a read-only file. A file that cannot be written raises :class:`PlanFileError` naming
    it, with a hint.
    """
    target = Path(path)
    for source in reads:
        if source and _same_file(Path(source), target):
            raise WriteRefusedError("is a file this command reads; the output would replace it, so nothing was "
                                    "written", file=str(path), hint="write the output under another name")
    try:
        report = atomic_write(target, data, backup=False, exist_ok=force)
    except MediaplanError:
        raise
    except OSError as exc:
        raise PlanFileError(f"cannot write ({exc.strerror or exc})", file=str(path),
                            hint="choose another folder") from None
    for note in report.notes:
        print(f"note: {note}", file=sys.stderr)
    print(f"wrote {path}", file=sys.stderr)
    return target


def _same_file(a: Path, b: Path) -> bool:
    """Are ``a`` and ``b`` one file (the same name, a link to it, or another hard link of it)?"""
    try:
        return os.path.samefile(a, b)
    except (OSError, ValueError):
        try:
            return a.resolve() == b.resolve()
        except (OSError, ValueError):
            return False
