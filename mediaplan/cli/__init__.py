"""The ``mediaplan`` command line: :mod:`.main` (entry point), :mod:`.common` (shared option handling) and
one module per command in :mod:`.commands`."""
