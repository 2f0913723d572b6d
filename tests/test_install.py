"""A wheel built from the checkout works where a new user installs it: in a fresh virtual environment,
run from an unrelated folder, it finds its bundled catalog and the terminal app's stylesheet inside the
installed package, and gives the same numbers as the editable install these tests run in.

The environment sees the machine's packages (``--system-site-packages``), so the runtime dependencies
come from there and nothing is downloaded; the wheel is installed with ``--no-deps``. That machine also
holds the editable install of this checkout, so every check first makes sure the code and data it ran
are the venv's, not the checkout's.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

from mediaplan.cli import main as cli
from mediaplan.medium.errors import CatalogError

ROOT = Path(__file__).resolve().parents[1]

#: never copied with the checkout: build output, caches, environments, version control
_NOT_SOURCE = shutil.ignore_patterns(".git", "build", "dist", "*.egg-info", "__pycache__", ".venv", "venv",
                                     ".hypothesis", ".pytest_cache", ".ruff_cache", ".import_linter_cache")

#: the terminal app in the venv, headless: where its stylesheet came from, and that its screen came up
_TUI_PROBE = """
import asyncio, json
from pathlib import Path
from mediaplan.files.catalog import get_catalog
from mediaplan.tui.app import MediaplanApp
from mediaplan.tui.session import Session

async def main():
    app = MediaplanApp(Session.new(get_catalog()), offer_recovery=False)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        sources = [key[0] for key in app.stylesheet.source if str(key[0]).endswith(".tcss")]
        print(json.dumps({"css_path": [str(p) for p in app.css_path], "sources": sources,
                          "screen": type(app.screen).__name__}))

asyncio.run(main())
"""

#: the command line in the venv with only what the wheel installed: the machine's editable install of the
#: checkout maps the name mediaplan._catalog onto the checkout's catalog/, so its import hook is dropped first
_WHEEL_ONLY_CALC = """
import sys
sys.meta_path[:] = [f for f in sys.meta_path if not getattr(f, "__module__", "").startswith("__editable__")]
from mediaplan.cli.main import main
sys.exit(main(["calc", "sucrose=30 g/L"]))
"""


def _env(tmp: Path) -> dict[str, str]:
    """The machine's environment without anything that points into the checkout; user folders in tmp."""
    env = {k: v for k, v in os.environ.items()
           if k not in ("PYTHONPATH", "PYTHONHOME", "MEDIAPLAN_CATALOG", "VIRTUAL_ENV")}
    env.update(MEDIAPLAN_CONFIG_DIR=str(tmp / "config"), MEDIAPLAN_STATE_DIR=str(tmp / "state"),
               MEDIAPLAN_CACHE_DIR=str(tmp / "cache"), PIP_DISABLE_PIP_VERSION_CHECK="1",
               PIP_NO_INPUT="1")
    return env


def _run(cmd: list, *, cwd: Path, env: dict, timeout: float = 120) -> subprocess.CompletedProcess:
    r = subprocess.run([str(c) for c in cmd], cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert r.returncode == 0, f"{cmd}: exit {r.returncode}\n{r.stdout[-2000:]}\n{r.stderr[-2000:]}"
    return r


def _editable_json(capsys, *argv) -> dict:
    code = cli.main(list(argv))
    out = capsys.readouterr()
    assert code == 0, out.err
    return json.loads(out.out)


def _setuptools_builds_wheels() -> bool:
    """setuptools 70.1 or newer (bdist_wheel built in), as the test extras ask."""
    import importlib.metadata

    try:
        major, minor = (int(x) for x in importlib.metadata.version("setuptools").split(".")[:2])
    except (importlib.metadata.PackageNotFoundError, ValueError):
        return False
    return (major, minor) >= (70, 1)


def test_wheel_installed_in_a_fresh_environment_works_from_another_folder(tmp_path, capsys):
    assert _setuptools_builds_wheels(), "the offline wheel build needs the test extras: pip install -e '.[test]'"
    env = _env(tmp_path)
    # build from a copy of the checkout: the build writes build/ and *.egg-info beside the sources, which
    # would race with other test runs and could carry stale files from build/ into the wheel
    src = tmp_path / "src"
    shutil.copytree(ROOT, src, ignore=_NOT_SOURCE)
    dist = tmp_path / "dist"
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "--no-index", "-q",
          "-w", dist, "."], cwd=src, env=env)
    (wheel,) = dist.glob("mediaplan-*.whl")

    # the wheel carries every module of the package, the whole catalog and the stylesheet
    names = set(zipfile.ZipFile(wheel).namelist())
    modules = {p.relative_to(ROOT).as_posix() for p in (ROOT / "mediaplan").rglob("*.py")
               if "__pycache__" not in p.parts}
    assert modules - names == set(), "modules missing from the wheel (add their package to pyproject.toml)"
    data = {"mediaplan/_catalog/" + p.relative_to(ROOT / "catalog").as_posix()
            for p in (ROOT / "catalog").rglob("*") if p.suffix in (".yaml", ".py") and "__pycache__" not in p.parts}
    assert len(data) > 10 and data - names == set(), "catalog files missing from the wheel"
    assert "mediaplan/tui/mediaplan.tcss" in names

    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", "--system-site-packages", "--without-pip", venv], cwd=tmp_path, env=env)
    py, exe = venv / "bin" / "python", venv / "bin" / "mediaplan"
    # pip comes from the machine's site-packages and installs into the venv it runs in
    _run([py, "-m", "pip", "install", "--no-deps", "--no-index", "-q", wheel], cwd=tmp_path, env=env)

    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    site = Path(_run([py, "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"], cwd=elsewhere,
                     env=env).stdout.strip())
    where = json.loads(_run([py, "-c", "import json, mediaplan, mediaplan._catalog as c\n"
                                       "from mediaplan.files.catalog import bundled_folder\n"
                                       "print(json.dumps([mediaplan.__file__, c.__file__, str(bundled_folder())]))"],
                            cwd=elsewhere, env=env).stdout)
    for path in where:  # the venv's package and data, not the editable checkout
        assert Path(path).is_relative_to(site), (path, site)
        assert not Path(path).is_relative_to(ROOT)

    # the commands a new user runs first, from an unrelated folder, give the editable install's numbers
    calc = json.loads(_run([exe, "calc", "sucrose=30 g/L", "--json"], cwd=elsewhere, env=env).stdout)
    assert calc == _editable_json(capsys, "calc", "sucrose=30 g/L", "--json")
    ms = json.loads(_run([exe, "calc", "--base", "ms1962", "--json"], cwd=elsewhere, env=env).stdout)
    assert ms == _editable_json(capsys, "calc", "--base", "ms1962", "--json")
    assert len(ms["components"]) > 15  # the whole published medium came from the installed catalog
    found = _run([exe, "catalog", "search", "sucrose"], cwd=elsewhere, env=env).stdout
    assert cli.main(["catalog", "search", "sucrose"]) == 0
    assert "sucrose" in found and found == capsys.readouterr().out

    # the terminal app starts headless on the stylesheet inside the installed package
    tui = json.loads(_run([py, "-c", _TUI_PROBE], cwd=elsewhere, env=env).stdout.strip().splitlines()[-1])
    assert tui["screen"] == "MainScreen"
    assert tui["css_path"] and all(Path(p).is_relative_to(site) and Path(p).is_file() for p in tui["css_path"])
    assert tui["sources"] == tui["css_path"]
    assert Path(tui["css_path"][0]).read_bytes() == (ROOT / "mediaplan" / "tui" / "mediaplan.tcss").read_bytes()

    # an install that lost its catalog folder says so in one line, naming where the catalog belongs
    assert _run([py, "-c", _WHEEL_ONLY_CALC], cwd=elsewhere, env=env).returncode == 0
    shutil.move(site / "mediaplan" / "_catalog", tmp_path / "moved_catalog")
    r = subprocess.run([py, "-c", _WHEEL_ONLY_CALC], cwd=elsewhere, env=env, capture_output=True, text=True,
                       timeout=120)
    assert r.returncode == 2 and r.stdout == "", r.stderr
    assert r.stderr.count("\n") == 1 and "bundled catalog is missing" in r.stderr, r.stderr
    assert str(site / "mediaplan" / "_catalog") in r.stderr and "reinstall" in r.stderr


def test_a_missing_or_empty_bundled_catalog_is_one_clear_error(tmp_path, monkeypatch, capsys):
    import importlib.resources

    from mediaplan.files import catalog as catalog_files

    empty = tmp_path / "_catalog"
    (empty / "components").mkdir(parents=True)  # the folder is there, its files are not
    monkeypatch.setattr(importlib.resources, "files", lambda name: empty)
    with pytest.raises(CatalogError, match="bundled catalog is missing or empty") as info:
        catalog_files.bundled_folder()
    assert info.value.file == str(empty)
    with pytest.raises(CatalogError):  # never an empty catalog
        catalog_files.load_catalog()
    assert cli.main(["calc", "sucrose=30 g/L", "--json"]) == 2
    out = capsys.readouterr()
    assert out.out == ""
    assert out.err.count("\n") == 1 and "bundled catalog is missing" in out.err and "reinstall" in out.err
