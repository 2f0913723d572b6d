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


# ---- what a command imports once the caches are warm -------------------------------------------------
_IMPORTS_AFTER = ("import sys, json\nfrom mediaplan.cli.main import main\n"
                  "try:\n    main(sys.argv[1:])\nexcept SystemExit:\n    pass\n"
                  "sys.stderr.write(json.dumps(sorted(m for m in sys.modules if m.split('.')[0] in "
                  "('pint', 'scipy', 'yaml'))))\n")


def _run_imports(argv, cache, tmp_path):
    import json
    import os

    env = dict(os.environ, MEDIAPLAN_CACHE_DIR=str(cache))
    r = subprocess.run([sys.executable, "-c", _IMPORTS_AFTER, *argv], capture_output=True, text=True,
                       timeout=120, env=env, cwd=tmp_path)
    return r.stdout, set(json.loads(r.stderr.strip().splitlines()[-1]))


def test_calc_with_warm_caches_imports_no_unit_library_and_answers_the_same(tmp_path):
    """The parsed catalog and what pint said about each unit are kept in the cache folder: the second run
    of calc imports no pint, and prints byte for byte what the first printed."""
    from pathlib import Path

    plan = Path(__file__).resolve().parents[2] / "plans" / "shoot_multiplication.toml"
    argv = ["calc", "--plan", str(plan), "--json"]
    cold_out, cold = _run_imports(argv, tmp_path / "cache", tmp_path)
    warm_out, warm = _run_imports(argv, tmp_path / "cache", tmp_path)
    assert cold_out and warm_out == cold_out
    assert "pint" in cold  # the first run asked pint, and remembered
    assert not {m for m in warm if m.split(".")[0] == "pint"}, sorted(warm)
    assert "scipy.stats" not in warm


def test_probit_link_functions_import_no_scipy_stats():
    code = ("import sys\nfrom mediaplan.tasks.plasmolysis.glm import fit_glm\n"
            "g = fit_glm([-1.0, -0.5, 0.0, 0.5], [1, 4, 7, 9], [10, 10, 10, 10], 'probit')\n"
            "sys.stderr.write(repr((bool(g.converged), 'scipy.stats' in sys.modules)))\n")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert r.stderr.strip().endswith("(True, False)"), r.stderr[-500:]


@pytest.mark.parametrize("link", ["logit", "probit"])
def test_fit_imports_no_scipy_stats(tmp_path, link):
    """``fit`` imports no more of scipy than its link and interval functions need (issue goal: no more than
    calc): its p-values and quantiles come from scipy.special, as scipy.stats computes them."""
    from pathlib import Path

    counts = Path(__file__).resolve().parents[2] / "plans" / "demo_plasmolysis_counts.csv"
    out, mods = _run_imports(["fit", str(counts), "--link", link, "--json"], tmp_path / "cache", tmp_path)
    assert '"water_potential_50_mpa"' in out
    assert "scipy.stats" not in mods, sorted(m for m in mods if m.startswith("scipy.stats"))
