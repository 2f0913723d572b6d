"""What ``mediaplan fit --link logit`` imports (issue 16): no scipy and no unit library, and no more modules
than ``calc --plan`` with the same warm caches. Counts of modules, never timings."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
_MODULES = ("import sys, json\nfrom mediaplan.cli.main import main\n"
            "try:\n    main(sys.argv[1:])\nexcept SystemExit:\n    pass\n"
            "sys.stderr.write(json.dumps(sorted(sys.modules)))\n")


def _modules(argv, cache, cwd):
    env = dict(os.environ, MEDIAPLAN_CACHE_DIR=str(cache))
    r = subprocess.run([sys.executable, "-c", _MODULES, *argv], capture_output=True, text=True, timeout=120,
                       env=env, cwd=cwd)
    return r.stdout, set(json.loads(r.stderr.strip().splitlines()[-1]))


def test_logit_fit_imports_no_scipy_no_pint_and_no_more_than_calc(tmp_path):
    cache = tmp_path / "cache"
    calc = ["calc", "--plan", str(ROOT / "plans" / "shoot_multiplication.toml")]
    _modules(calc, cache, tmp_path)  # fills the caches, as any earlier run on the machine has
    _, calc_mods = _modules(calc, cache, tmp_path)
    # the counts file's units are new to the cache: it must not need the unit library for them either
    out, fit_mods = _modules(["fit", str(ROOT / "plans" / "demo_plasmolysis_counts.csv"), "--link", "logit"],
                             cache, tmp_path)
    assert "50 % plasmolysed at" in out
    assert not {m for m in fit_mods if m.split(".")[0] in ("scipy", "pint")}, sorted(fit_mods)
    assert len(fit_mods) <= len(calc_mods), sorted(fit_mods - calc_mods)


def test_a_command_line_imports_only_the_commands_it_names():
    """``mediaplan --help`` lists the commands without importing them; a command imports its own module only
    (the help printed is the same: tests/cli/test_startup.py and the commands' own tests)."""
    code = ("import sys\nfrom mediaplan.cli.main import main\n"
            "try:\n    main(sys.argv[1:])\nexcept SystemExit:\n    pass\n"
            "sys.stderr.write(repr(sorted(m.rsplit('.', 1)[1] for m in sys.modules "
            "if m.startswith('mediaplan.cli.commands.'))))\n")
    for argv, expected in ((["--help"], []), (["calc", "--help"], ["calc"]), (["fit", "--help"], ["fit"]),
                           (["--catalog", "series", "fit", "--help"], ["fit", "series"])):
        r = subprocess.run([sys.executable, "-c", code, *argv], capture_output=True, text=True, timeout=60)
        assert r.stderr.strip().splitlines()[-1] == repr(expected), (argv, r.stderr[-300:])
        assert "usage: mediaplan" in r.stdout
