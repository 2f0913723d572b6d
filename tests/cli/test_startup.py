"""Help for the command line loads none of the engine: every command module keeps its heavy imports inside
``run`` (timings live in benchmarks/, this checks only what gets imported)."""

from __future__ import annotations

import subprocess
import sys

import pytest

from mediaplan.cli.main import COMMANDS

HEAVY = ("numpy", "scipy", "pint", "yaml", "textual", "rich", "tomli_w")


@pytest.mark.parametrize("argv", [["--help"]] + [[name, "--help"] for name in COMMANDS])
def test_help_imports_none_of_the_engine(argv):
    code = ("import sys\nfrom mediaplan.cli.main import main\n"
            "try:\n    main(sys.argv[1:])\nexcept SystemExit:\n    pass\n"
            f"heavy = sorted({{m.split('.')[0] for m in sys.modules}} & set({HEAVY!r}))\n"
            "sys.stderr.write(repr(heavy))\n")
    r = subprocess.run([sys.executable, "-c", code, *argv], capture_output=True, text=True, timeout=60)
    assert r.stderr.strip().endswith("[]"), (argv, r.stderr[-500:])
