"""Bounded reads: every file a user or a facility hands us (plans, catalog YAML, counts CSV) comes in here.

What a file must be, before a parser sees a byte of it:

* a regular file: a folder, a FIFO, a socket or a device (``/dev/zero``) is refused in one line. The kind of
  file is checked with :func:`os.stat` before opening, and the file is opened with ``O_NONBLOCK`` so that a
  FIFO swapped in between the two cannot block the open; the open file is checked again with ``fstat``.
* no larger than the limit of its kind (:data:`LIMITS`), checked on the size the file declares and again on
  the bytes actually read (a file that grows while it is read is cut at the limit plus one byte).
* UTF-8 text: an undecodable byte is named with its line.

Each kind has its own error class (PlanFileError, CatalogError, FitError), so the front ends report the
error as they report any other problem of that file: one line, file and line named, exit status 2.

The limits, and why they are where they are:

=========  ==========  ======================================================================================
kind       bytes       why
=========  ==========  ======================================================================================
plan       8 MiB       a plan with every catalog entry embedded is about 100 kB; 8 MiB still reads a plan of
                       100 000 components (about 2 MB), so that no honest plan meets the limit
catalog    4 MiB       per YAML file; the largest bundled file is 43 kB
counts     16 MiB      a counts CSV of :data:`COUNTS_MAX_ROWS` rows is about 200 kB; the limit leaves room for
                       comment lines and notes columns
=========  ==========  ======================================================================================

Counts files are read line by line (:func:`iter_lines`), never whole, each line at most
:data:`MAX_LINE_BYTES` long; :mod:`mediaplan.files.counts` stops at :data:`COUNTS_MAX_ROWS` rows.
The nesting limits of the parsed structures (TOML and YAML) are :data:`TOML_MAX_DEPTH` and
:data:`YAML_MAX_DEPTH`; YAML aliases are limited by :data:`YAML_MAX_ALIASES` and by the size the document
would have with every alias written out (:data:`YAML_MAX_NODES`): see :mod:`mediaplan.files.yamlio`.
"""

from __future__ import annotations

import os
import re
import stat
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from mediaplan.medium.errors import CatalogError, FitError, MediaplanError, PlanFileError

MiB = 1024 * 1024

#: the largest counts file read, in data rows (a plasmolysis series has tens of levels, each counted a few
#: times: 10 000 rows is far beyond any experiment, and still reads and fits in about a second)
COUNTS_MAX_ROWS = 10_000
#: the longest line of a counts file [bytes] (a row of a few numbers is tens of bytes, a header a few
#: hundred; 1 MiB bounds what one line may cost while a header of absurd unit text still reaches the unit
#: grammar, which names what it could not read)
MAX_LINE_BYTES = 1 * MiB
#: the deepest nesting of tables and arrays in a plan (the deepest a plan writes is 6:
#: provenance.embedded.components.ID.species.ION)
TOML_MAX_DEPTH = 20
#: the deepest nesting of mappings and lists in a catalog file (the bundled files nest 5 deep at most)
YAML_MAX_DEPTH = 32
#: aliases (``*name``) allowed in one catalog file (the bundled files use none)
YAML_MAX_ALIASES = 100
#: nodes a catalog file may hold with every alias written out (the bundled files hold about 9 000 together)
YAML_MAX_NODES = 200_000


@dataclass(frozen=True)
class Kind:
    """What a kind of file is called, how large it may be and how its errors are raised."""

    noun: str  # "plan file"
    limit: int  # [bytes]
    error: type[MediaplanError]
    utf8_hint: str  # the hint of a file that is not UTF-8
    missing: str  # the message of a file that is not there


LIMITS: dict[str, Kind] = {
    "plan": Kind("plan file", 8 * MiB, PlanFileError, "save it as UTF-8; is this really a plan file?",
                 "no such plan file"),
    "catalog": Kind("catalog file", 4 * MiB, CatalogError, "save it as UTF-8", "no such catalog file"),
    "counts": Kind("counts file", 16 * MiB, FitError, "save the counts as CSV (UTF-8)", "no such counts file"),
}


def size_text(n: int) -> str:
    """A size in bytes in words (``"8 MiB"``, ``"64 KiB"``, ``"43 kB"``)."""
    if n >= MiB:
        return f"{n / MiB:.3g} MiB"
    if n % 1024 == 0 and n >= 1024:
        return f"{n // 1024} KiB"
    if n >= 1000:
        return f"{n / 1000:.3g} kB"
    return f"{n} bytes"


def _what(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISSOCK(mode):
        return "a socket"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    return "not a regular file"


def _refuse(kind: Kind, file: str, mode: int) -> MediaplanError:
    what = _what(mode)
    if what == "a folder":
        return kind.error(f"is a folder, not a {kind.noun}", file=file, hint="name a file inside it")
    return kind.error(f"is {what}, not a {kind.noun}" if what != "not a regular file" else f"is {what}",
                      file=file, hint=f"mediaplan reads a {kind.noun} only from a regular file")


def _too_large(kind: Kind, file: str, size: int | None) -> MediaplanError:
    size_part = f" ({size_text(size)})" if size is not None else ""
    return kind.error(f"is too large for a {kind.noun}{size_part}: the limit is {size_text(kind.limit)}",
                      file=file, hint=f"is this really a {kind.noun}?")


def open_regular(path: str | os.PathLike, kind_name: str) -> tuple[int, int, str]:
    """Open a regular file for reading: (file descriptor, size [bytes], name for messages).

    Raises the kind's error for a missing file, a folder, a FIFO, a device, an unusable name or a file
    larger than the kind's limit. The caller closes the descriptor.
    """
    kind = LIMITS[kind_name]
    file = str(path)
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise kind.error(kind.missing, file=file, hint="check the path") from None
    except NotADirectoryError:
        raise kind.error(kind.missing, file=file, hint="a part of the path is not a folder") from None
    except ValueError:  # e.g. a NUL character in the name
        raise kind.error("not a usable file name", file=repr(file), hint="check the path") from None
    except OSError as exc:
        raise kind.error(f"cannot read ({exc.strerror or exc})", file=file) from None
    if not stat.S_ISREG(st.st_mode):
        raise _refuse(kind, file, st.st_mode)
    if st.st_size > kind.limit:
        raise _too_large(kind, file, st.st_size)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(path, flags)
    except IsADirectoryError:
        raise _refuse(kind, file, stat.S_IFDIR) from None
    except FileNotFoundError:
        raise kind.error(kind.missing, file=file, hint="check the path") from None
    except OSError as exc:
        raise kind.error(f"cannot read ({exc.strerror or exc})", file=file) from None
    try:
        st = os.fstat(fd)  # the file opened may not be the file looked at
        if not stat.S_ISREG(st.st_mode):
            raise _refuse(kind, file, st.st_mode)
        if st.st_size > kind.limit:
            raise _too_large(kind, file, st.st_size)
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
    except BaseException:
        os.close(fd)
        raise
    return fd, st.st_size, file


def read_bytes(path: str | os.PathLike, kind_name: str) -> bytes:
    """The whole content of a regular file of the given kind (``"plan"``, ``"catalog"``, ``"counts"``),
    at most the kind's limit [bytes]; see :func:`open_regular` for what is refused."""
    kind = LIMITS[kind_name]
    fd, _size, file = open_regular(path, kind_name)
    chunks, total = [], 0
    try:
        while True:
            try:
                chunk = os.read(fd, min(1 * MiB, kind.limit + 1 - total))
            except OSError as exc:
                raise kind.error(f"cannot read ({exc.strerror or exc})", file=file) from None
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
            if total > kind.limit:
                raise _too_large(kind, file, None)
    finally:
        os.close(fd)
    return b"".join(chunks)


def decode(raw: bytes, path: str | os.PathLike, kind_name: str, *, encoding: str = "utf-8") -> str:
    """``raw`` as text; bytes that are not UTF-8 raise the kind's error naming the line they are on."""
    try:
        return raw.decode(encoding)
    except UnicodeDecodeError as exc:
        kind = LIMITS[kind_name]
        line = raw.count(b"\n", 0, exc.start) + 1
        raise kind.error("not UTF-8 text", file=str(path), line=line, hint=kind.utf8_hint) from None


def read_text(path: str | os.PathLike, kind_name: str, *, encoding: str = "utf-8") -> str:
    """The whole text of a regular UTF-8 file of the given kind, at most the kind's limit [bytes]."""
    return decode(read_bytes(path, kind_name), path, kind_name, encoding=encoding)


def iter_lines(path: str | os.PathLike, kind_name: str) -> Iterator[tuple[int, str]]:
    """(line number, text without its line end) for each line of a regular UTF-8 file, read as it goes.

    A byte-order mark at the start is dropped. At most the kind's limit [bytes] is read, and each line is at
    most :data:`MAX_LINE_BYTES` long; beyond either the kind's error is raised naming the line.
    """
    kind = LIMITS[kind_name]
    fd, _size, file = open_regular(path, kind_name)
    total = 0
    try:
        with os.fdopen(fd, "rb", closefd=True) as fh:
            for lineno, raw in enumerate(iter(lambda: fh.readline(MAX_LINE_BYTES + 1), b""), start=1):
                total += len(raw)
                if total > kind.limit:
                    raise _too_large(kind, file, None)
                if len(raw) > MAX_LINE_BYTES and not raw.endswith(b"\n"):
                    raise kind.error(f"line longer than {size_text(MAX_LINE_BYTES)}", file=file, line=lineno,
                                     hint=f"is this really a {kind.noun}?")
                if lineno == 1 and raw.startswith(b"\xef\xbb\xbf"):
                    raw = raw[3:]
                try:
                    text = raw.decode("utf-8")
                except UnicodeDecodeError:
                    raise kind.error("not UTF-8 text", file=file, line=lineno, hint=kind.utf8_hint) from None
                yield lineno, text.rstrip("\r\n")
    except OSError as exc:
        raise kind.error(f"cannot read ({exc.strerror or exc})", file=file) from None


def too_deep(kind_name: str, file: str | None, limit: int, line: int | None = None) -> MediaplanError:
    """The error of a file whose tables/arrays (or mappings/lists) nest deeper than ``limit``."""
    kind = LIMITS[kind_name]
    inner = "tables and arrays" if kind_name == "plan" else "mappings and lists"
    return kind.error(f"{inner} nested more than {limit} deep", file=file, line=line,
                      hint=f"is this really a {kind.noun}?")


# ---- nesting of TOML text -----------------------------------------------------------------------------
_TOML_TOKEN = re.compile(r'''
    """(?:[^"\\]|\\.|"(?!""))*"""      # multi-line basic string
  | \'\'\'.*?\'\'\'                        # multi-line literal string
  | "(?:[^"\\\n]|\\.)*"                # basic string
  | '[^'\n]*'                          # literal string
  | \#[^\n]*                           # comment
  | [][{},=\n"']                       # structure (a lone quote: an unterminated string, left to the parser)
''', re.S | re.X)
#: a line with at least TOML_MAX_DEPTH - 1 dots: the only place a dotted key that long can be
_MANY_DOTS = re.compile(r"\.(?:[^.\n]*\.){" + str(TOML_MAX_DEPTH - 2) + "}")


def toml_nesting(text: str, limit: int = TOML_MAX_DEPTH) -> int | None:
    """The line [1-based] where TOML text first nests deeper than ``limit``, or None.

    Nesting counts brackets and braces outside strings and comments, and the parts of a dotted key or a
    table header (``a.b.c = 1`` and ``[a.b.c]`` nest 3 deep). This is a scan of the text, before any parser
    sees it: a parser would recurse once per bracket, and take time and memory growing with the square of
    the parts of a dotted key.
    """
    depth = dots = prev = 0
    line = 1
    for m in _TOML_TOKEN.finditer(text):
        start = m.start()
        if start > prev:
            dots += text.count(".", prev, start)
        prev = m.end()
        token = m.group()
        c = token[0]
        if c in "[{":
            depth += 1
            if depth > limit:
                return line
            dots = 0
        elif c in "]}":
            if dots >= limit:
                return line
            depth -= 1
            dots = 0
        elif c == "=":
            if dots >= limit:
                return line
            dots = 0
        elif c in ",\n":
            line += c == "\n"
            dots = 0
        elif len(token) > 2 and token[:3] in ('"""', "'''"):
            line += token.count("\n")
    return None


def toml_dotted_key_line(text: str, limit: int = TOML_MAX_DEPTH) -> int | None:
    """Like :func:`toml_nesting`, for dotted keys only and fast: the full scan runs only when some line holds
    ``limit - 1`` dots or more (a plan of 100 000 components is read in milliseconds)."""
    if _MANY_DOTS.search(text) is None:
        return None
    return toml_nesting(text, limit)


def nesting_depth(obj, limit: int) -> int:
    """How deep dicts and lists nest in ``obj`` (a scalar is 0), counted without recursion; stops counting
    once past ``limit`` (returns ``limit + 1``)."""
    deepest = 0
    stack = [(obj, 0)]
    while stack:
        node, d = stack.pop()
        if isinstance(node, dict):
            children = node.values()
        elif isinstance(node, list):
            children = node
        else:
            continue
        d += 1
        if d > deepest:
            deepest = d
            if deepest > limit:
                return deepest
        stack.extend((c, d) for c in children if isinstance(c, (dict, list)))
    return deepest


def is_regular(path: Path) -> bool:
    """Whether ``path`` names a regular file (following symbolic links); never opens it."""
    try:
        return stat.S_ISREG(os.stat(path).st_mode)
    except (OSError, ValueError):
        return False


__all__ = ["COUNTS_MAX_ROWS", "LIMITS", "MAX_LINE_BYTES", "TOML_MAX_DEPTH", "YAML_MAX_ALIASES", "YAML_MAX_DEPTH",
           "YAML_MAX_NODES", "Kind", "decode", "is_regular", "iter_lines", "nesting_depth", "open_regular", "read_bytes",
           "read_text", "size_text", "toml_dotted_key_line", "toml_nesting", "too_deep"]
