"""mediaplan open: the terminal app (``mediaplan`` with no command opens it on a new plan)."""

from __future__ import annotations


def add_arguments(p) -> None:
    p.add_argument("plan", nargs="?", metavar="PLAN", help="plan file to open (omit for a new plan)")
    p.add_argument("--no-recovery", action="store_true", help="do not offer autosaved unsaved work")


#: what ``mediaplan`` (or ``mediaplan open``) says when there is no terminal to show the app in
NO_TERMINAL = ("mediaplan: the terminal app needs a terminal (standard input and output are not one); "
               "run a command instead, e.g. mediaplan calc --plan PLAN (mediaplan --help lists them)")


def has_terminal() -> bool:
    """Are standard input and standard output both terminals (the app needs both)?"""
    import sys

    try:
        return sys.stdin is not None and sys.stdout is not None and sys.stdin.isatty() and sys.stdout.isatty()
    except (AttributeError, ValueError):
        return False


def run(args) -> int:
    if not has_terminal():
        import sys

        print(NO_TERMINAL, file=sys.stderr)
        return 2
    return run_app(args.plan, args)


def run_app(path, args) -> int:
    """Open the app on ``path`` (a plan file) or on a new plan. Bad files fail before the screen opens."""
    from mediaplan.cli.common import catalog_from
    from mediaplan.tui.app import MediaplanApp
    from mediaplan.tui.session import Session

    catalog = catalog_from(args)
    session = Session.open(path, catalog) if path else Session.new(catalog)
    app = MediaplanApp(session, offer_recovery=not getattr(args, "no_recovery", False))
    app.run()
    return int(app.return_code or 0)
