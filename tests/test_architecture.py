"""The layers hold: one import-linter layers contract over the folders (pyproject.toml), and no module
outside the terminal app loads the terminal toolkit. Both fail, never skip, when their tool is missing:
import-linter is in the test extras."""

from __future__ import annotations

import os
import pkgutil
import subprocess
import sys
from pathlib import Path

import mediaplan

ROOT = Path(__file__).resolve().parents[1]


def test_import_contracts_are_kept():
    from importlinter.cli import lint_imports  # in the test extras; a missing tool is a failure

    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        code = lint_imports(no_cache=True)
    finally:
        os.chdir(cwd)
    assert code == 0, "import-linter: a layer contract is broken (run lint-imports for the details)"


def _modules_outside_the_app() -> list[str]:
    names = []
    for info in pkgutil.walk_packages(mediaplan.__path__, "mediaplan."):
        if info.name.startswith(("mediaplan.tui", "mediaplan._catalog")) or info.name == "mediaplan.__main__":
            continue
        names.append(info.name)
    return names + ["mediaplan.tui.session"]  # the app's model of a session is plain Python too


def test_no_module_outside_the_app_loads_the_terminal_toolkit():
    modules = _modules_outside_the_app()
    assert "mediaplan.medium.evaluate" in modules and "mediaplan.cli.commands.calc" in modules
    code = ("import importlib, sys\n"
            f"for m in {modules!r}: importlib.import_module(m)\n"
            "bad = sorted(m for m in sys.modules if m.split('.')[0] in ('textual', 'rich'))\n"
            "print(bad[:5]); sys.exit(1 if bad else 0)\n")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert r.returncode == 0, r.stdout + r.stderr


def test_every_package_folder_ships_in_the_wheel():
    """pyproject.toml lists the packages explicitly (the catalog is mapped from the top-level folder), so a new
    package folder must be added there; the installed-wheel test would find it missing only later."""
    import tomllib

    listed = set(tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "mediaplan").rglob("__init__.py")
             if "__pycache__" not in p.parts}
    assert found - listed == set(), "add these to [tool.setuptools] packages in pyproject.toml"
    assert "mediaplan._catalog" in listed
