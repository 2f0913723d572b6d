"""Start-up of the command line, as whole processes, against the interpreter's own start-up.

Run: ``python benchmarks/bench_startup.py [runs]``. Each command is started ``runs`` times (default 9)
in turn with its yardstick (A B A B ...), and the ratio A/B is taken pair by pair (so a drift in the
machine's speed touches both alike); prints the median CPU seconds (user + system of the finished child,
the operating system's own accounting) and the median ratio. Goals (issue 16):

- ``mediaplan --help`` <= 3x ``python -c pass``;
- ``mediaplan calc --plan PLAN`` <= 2x ``python -c "import numpy, yaml"``;
- ``mediaplan fit COUNTS --link logit`` imports no more modules than ``calc`` does.

The package is run from this checkout (``python -m mediaplan`` with the checkout on ``PYTHONPATH``), with
the caches warm: the first, unmeasured run fills the unit registry's and the catalog's cache folders and
the compiled bytecode (kept under the temporary cache folder), as an installed package has them on any
second use. ``python benchmarks/bench_startup.py RUNS --source`` times the commands with no bytecode kept
instead (every module compiled on each run, as in a shell with PYTHONDONTWRITEBYTECODE set).
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PY = sys.executable
MP = [PY, "-m", "mediaplan"]
PLAN = str(ROOT / "plans" / "shoot_multiplication.toml")
COUNTS = str(ROOT / "plans" / "demo_plasmolysis_counts.csv")

#: prints how many modules a command left imported, and whether scipy (any part) and pint are among them
_COUNT_MODULES = """
import runpy, sys
sys.argv = ["mediaplan"] + sys.argv[1:]
try:
    runpy.run_module("mediaplan", run_name="__main__")
except SystemExit:
    pass
print(len(sys.modules), int("scipy" in sys.modules), int("pint" in sys.modules), file=sys.stderr)
"""


def _env(cache: str) -> dict[str, str]:
    """The children's environment: this checkout first on the path, the caches in ``cache``, and compiled
    bytecode kept (in ``cache``, never in the checkout) as an installed package has it: pip compiles every
    module at install, so a development shell's PYTHONDONTWRITEBYTECODE would time the compiler instead."""
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    env["MEDIAPLAN_CACHE_DIR"] = cache
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPYCACHEPREFIX"] = os.path.join(cache, "pycache")
    return env


def cpu_of(cmd: list[str], env: dict[str, str]) -> float:
    """CPU seconds (user + system) of one run of ``cmd`` as a child process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def paired(a: list[str], b: list[str], env: dict[str, str], runs: int) -> tuple[float, float, float]:
    """Median CPU of A and of B [s] and the median of the ratios A/B of pairs run back to back."""
    cpu_of(a, env), cpu_of(b, env)  # warm-up (fills the caches; not counted)
    ta, tb, ratios = [], [], []
    for _ in range(runs):
        x, y = cpu_of(a, env), cpu_of(b, env)
        ta.append(x)
        tb.append(y)
        ratios.append(x / y)
    return statistics.median(ta), statistics.median(tb), statistics.median(ratios)


def modules_of(args: list[str], env: dict[str, str]) -> tuple[int, bool, bool]:
    """Modules imported by one run of ``mediaplan ARGS`` (its caches as ``env`` left them), and whether
    scipy and pint are among them."""
    out = subprocess.run([PY, "-c", _COUNT_MODULES, *args], env=env, capture_output=True, text=True,
                         check=False)
    n, scipy, pint = out.stderr.strip().splitlines()[-1].split()
    return int(n), scipy == "1", pint == "1"


def main() -> None:
    runs = int(sys.argv[1]) if len(sys.argv) > 1 and sys.argv[1].isdigit() else 9
    with tempfile.TemporaryDirectory() as cache:
        env = _env(cache)
        if "--source" in sys.argv:
            env.pop("PYTHONPYCACHEPREFIX")
            env["PYTHONDONTWRITEBYTECODE"] = "1"
        print(f"bytecode {'not kept (every module compiled each run)' if '--source' in sys.argv else 'kept'}")
        rows = [
            ("mediaplan --help", [*MP, "--help"], "python -c pass", [PY, "-c", "pass"], 3.0),
            ("mediaplan calc --plan", [*MP, "calc", "--plan", PLAN], 'python -c "import numpy, yaml"',
             [PY, "-c", "import numpy, yaml"], 2.0),
            ("mediaplan fit --link logit", [*MP, "fit", COUNTS, "--link", "logit"], 'python -c "import numpy, yaml"',
             [PY, "-c", "import numpy, yaml"], None),
        ]
        for name_a, a, name_b, b, goal in rows:
            ma, mb, r = paired(a, b, env, runs)
            print(f"{name_a:26s} {ma:6.3f} s CPU  vs {name_b:32s} {mb:6.3f} s: ratio {r:5.2f} "
                  f"({f'goal <= {goal:g}' if goal else 'no goal: for comparison'})")
        calc = modules_of(["calc", "--plan", PLAN], env)
        fit = modules_of(["fit", COUNTS, "--link", "logit"], env)
        for name, (n, scipy, pint) in (("calc --plan", calc), ("fit --link logit", fit)):
            print(f"{name:24s} imports {n:5d} modules (scipy {'yes' if scipy else 'no'}, "
                  f"pint {'yes' if pint else 'no'})")
        print(f"fit / calc modules: {fit[0] / calc[0]:.2f} (goal <= 1)")


if __name__ == "__main__":
    main()
