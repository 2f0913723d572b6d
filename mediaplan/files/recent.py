"""The plans a user opened or saved last (the terminal app's open dialog lists them).

The list is mediaplan's own state, not a user's file: it lives in the user's state folder as a small
JSON list of absolute paths, newest first. A list that cannot be read (damaged, too large, written by
something else) is treated as empty and replaced on the next save; plans that no longer exist are left
out when the list is read, never deleted from disk.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

from mediaplan.files.paths import user_state_dir

#: how many plans the list keeps
RECENT_LIMIT = 10
#: the list file is refused past this size [bytes] (ten paths need a few kB)
RECENT_MAX_BYTES = 64 * 1024


def recent_file() -> Path:
    return user_state_dir() / "recent-plans.json"


def _stored() -> list[str]:
    file = recent_file()
    try:
        if not file.is_file() or file.stat().st_size > RECENT_MAX_BYTES:
            return []
        data = json.loads(file.read_bytes().decode("utf-8"))
    except (OSError, ValueError):
        return []
    if not isinstance(data, list):
        return []
    return [p for p in data if isinstance(p, str) and "\x00" not in p and Path(p).is_absolute()][: RECENT_LIMIT * 2]


def recent_plans(limit: int = RECENT_LIMIT) -> list[Path]:
    """The plans opened or saved last, newest first; only regular files that still exist."""
    out: list[Path] = []
    for text in _stored():
        p = Path(text)
        try:
            if p.is_file() and p not in out:
                out.append(p)
        except OSError:
            continue
        if len(out) >= limit:
            break
    return out


def remember_plan(path: str | os.PathLike) -> None:
    """Put ``path`` first in the list of recent plans (atomically; OSError when the state folder cannot
    be written: callers that only want a convenience may ignore it)."""
    from mediaplan.files.planfile import atomic_write

    p = str(Path(path).expanduser().resolve())
    entries = [p] + [q for q in _stored() if q != p]
    file = recent_file()
    file.parent.mkdir(parents=True, exist_ok=True)
    atomic_write(file, (json.dumps(entries[:RECENT_LIMIT], indent=1) + "\n").encode("utf-8"), backup=False)
