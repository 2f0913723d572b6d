"""Where a command's rendered text goes: standard output, or a file written atomically (``-o FILE``)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

from mediaplan.files.planfile import atomic_write
from mediaplan.medium.errors import PlanFileError


def write_output(text: str, path: str | os.PathLike | None = None) -> None:
    """Print ``text`` (ending it with a newline when it has none), or write it to ``path`` atomically.

    The file is written through :func:`~mediaplan.files.planfile.atomic_write` (temp file, fsync,
    rename; no ``.bak``), as UTF-8 and byte for byte as given; "wrote PATH" goes to standard error.
    A file that cannot be written raises :class:`PlanFileError` naming it, with a hint.
    """
    if not path:
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
        return
    try:
        atomic_write(Path(path), text.encode("utf-8"), backup=False)
    except OSError as exc:
        raise PlanFileError(f"cannot write ({exc.strerror or exc})", file=str(path),
                            hint="choose another folder") from None
    print(f"wrote {path}", file=sys.stderr)
