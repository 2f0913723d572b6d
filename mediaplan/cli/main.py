"""The ``mediaplan`` command line.

Each subcommand lives in ``mediaplan/commands/<name>.py`` with two functions:
``add_arguments(parser)`` (cheap: no heavy imports at module level) and ``run(args) -> int``.
Errors a user can fix (MediaplanError) print one line on stderr (control characters shown as escapes) and
exit 2; anything unexpected is logged with its traceback in the user's state folder and reported in one
line naming the log. ``mediaplan`` alone opens the terminal app, or, when standard input or output is not
a terminal, says so in one line and exits 2.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from mediaplan import __version__

COMMANDS = {
    "calc": "compute a medium's osmolality, water activity and potential",
    "solve": "find the osmoticum addition that reaches a target",
    "series": "design a plasmolysis series evenly spaced in water potential",
    "fit": "fit plasmolysis counts: incipient plasmolysis point with its interval",
    "prep": "preparation sheet and stock solutions for a batch",
    "check": "validate plan files (exit 1 if any is invalid)",
    "diff": "compare two plans: components and results (exit 1 if they differ)",
    "catalog": "search, show or check the component catalog",
    "open": "open a plan in the terminal app",
    "locate": "print where mediaplan keeps the user's files",
    "reading": "check an osmometer reading of a batch against its plan (exit 1 if it disagrees)",
    "osmometer": "calibrate the lab's osmometers; report the readings recorded in plans",
}


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # one line, exit 2
        from mediaplan.views.safe_text import one_line

        line = (f"mediaplan: {message} (see mediaplan {self.prog.split()[-1] if ' ' in self.prog else ''} --help)"
                .replace("mediaplan  --help", "mediaplan --help"))
        self.exit(2, one_line(line) + "\n")


def build_parser(only: frozenset[str] | None = None) -> argparse.ArgumentParser:
    """The parser of every command; ``only``: the commands whose options are added (their modules
    imported), the others listed by name and help alone (None: all). A command is always named on the
    command line as it is spelt here, so :func:`main` adds the commands among its arguments: ``mediaplan
    --help`` imports no command module, ``mediaplan calc ...`` only calc's."""
    p = _Parser(prog="mediaplan", description="Water relations of plant culture media.")
    p.add_argument("--version", action="version", version=f"mediaplan {__version__}")
    p.add_argument("--catalog", action="append", default=[], metavar="DIR",
                   help="extra catalog folder merged over the bundled one (repeatable)")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, helptext in COMMANDS.items():
        sp = sub.add_parser(name, help=helptext, description=helptext)
        sp.add_argument("--catalog", action="append", default=argparse.SUPPRESS, metavar="DIR",
                        help="extra catalog folder merged over the bundled one (repeatable)")
        if only is not None and name not in only:
            continue
        try:
            mod = importlib.import_module(f"mediaplan.cli.commands.{name}")
        except ModuleNotFoundError:
            sp.set_defaults(_missing=name)
            continue
        mod.add_arguments(sp)
        sp.set_defaults(_module=f"mediaplan.cli.commands.{name}")
    return p


def main(argv: list[str] | None = None) -> int:
    from mediaplan.medium.errors import MediaplanError

    raw = sys.argv[1:] if argv is None else argv
    if any("\x00" in a for a in raw):
        print("mediaplan: an argument contains a NUL character (remove it)", file=sys.stderr)
        return 2
    args = build_parser(frozenset(a for a in raw if a in COMMANDS)).parse_args(argv)
    from mediaplan.files.paths import use_unit_cache

    use_unit_cache()
    try:
        if args.command is None:
            from mediaplan.cli.commands.open import NO_TERMINAL, has_terminal, run_app

            if not has_terminal():
                print(NO_TERMINAL, file=sys.stderr)
                return 2
            return run_app(None, args)
        if getattr(args, "_missing", None):
            print(f"mediaplan: the '{args._missing}' command is not available in this build", file=sys.stderr)
            return 2
        mod = importlib.import_module(args._module)
        return int(mod.run(args) or 0)
    except MediaplanError as exc:
        from mediaplan.cli.common import error_line

        print(error_line(exc), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("mediaplan: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0
    except Exception as exc:  # noqa: BLE001 - the last line of defence
        return report_crash(exc)


#: the error log is rotated once it would grow past this size [bytes]; the previous log is kept as
#: ``errors.log.1`` (one old copy), so the two never hold more than about 2 MiB
LOG_MAX_BYTES = 1024 * 1024
#: the most one entry writes [bytes]: its head and tail (the innermost frames and the error) are kept
LOG_ENTRY_MAX = 64 * 1024


def log_crash(exc: BaseException) -> str | None:
    """Append an unexpected error with its traceback to the error log (rotated: :data:`LOG_MAX_BYTES`);
    returns the log's path, or None when it could not be written. Never raises."""
    import datetime
    import os
    import stat
    import traceback

    from mediaplan.files.paths import log_file

    try:
        path = log_file()
        args = repr(sys.argv)
        if len(args) > 1000:
            args = args[:1000] + "…"
        entry = (f"\n--- {datetime.datetime.now().isoformat()} mediaplan {__version__} {args}\n"
                 + "".join(traceback.format_exception(exc)))
        data = entry.encode("utf-8", "backslashreplace")
        if len(data) > LOG_ENTRY_MAX:
            half = LOG_ENTRY_MAX // 2
            data = data[:half] + b"\n[... cut ...]\n" + data[-half:]
        path.parent.mkdir(parents=True, exist_ok=True)
        try:
            st = os.stat(path)
        except FileNotFoundError:
            st = None
        if st is not None:
            if not stat.S_ISREG(st.st_mode):
                return None  # a FIFO or a folder where the log should be: never block on it, never replace it
            if st.st_size + len(data) > LOG_MAX_BYTES:
                os.replace(path, path.with_name(path.name + ".1"))
        fd = os.open(path, os.O_WRONLY | os.O_APPEND | os.O_CREAT | getattr(os, "O_NONBLOCK", 0), 0o600)
        try:
            if not stat.S_ISREG(os.fstat(fd).st_mode):
                return None
            os.write(fd, data)
        finally:
            os.close(fd)
        return str(path)
    except Exception:  # noqa: BLE001 - the log must never add an error of its own
        return None


def report_crash(exc: BaseException) -> int:
    """Log an unexpected error with its traceback; tell the user in one line where the log is."""
    from mediaplan.views.safe_text import one_line

    where = log_crash(exc) or "(the log could not be written)"
    text = str(exc)
    if len(text) > 300:
        text = text[:300] + "…"
    print(one_line(f"mediaplan: unexpected error {type(exc).__name__}: {text}; details in {where}"), file=sys.stderr)
    return 1


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
