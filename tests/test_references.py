"""A run without a reference library fails at its start with one message naming the library and the
install command; it never skips the checks that need it and exits 0."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_every_required_library_is_present(request):
    # the top-level conftest as pytest loaded it (importing it again would give it new cache folders)
    top = [p for p in request.config.pluginmanager.get_plugins() if hasattr(p, "missing_references")]
    assert len(top) == 1 and "pyEQL" in top[0].REQUIRED and "importlinter" in top[0].REQUIRED
    assert top[0].missing_references() == []


def test_a_missing_reference_library_fails_the_run(tmp_path):
    # the library is hidden from the import system of a child pytest (sys.modules[name] = None)
    code = ("import sys; sys.modules['iapws'] = None\n"
            "import pytest\n"
            "sys.exit(pytest.main(['-q', '-p', 'no:randomly', '-p', 'no:cacheprovider', "
            "'tests/test_architecture.py::test_every_package_folder_ships_in_the_wheel']))\n")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120)
    out = r.stdout + r.stderr
    assert r.returncode == 3, out
    assert "reference libraries missing: iapws" in out and "pip install -e '.[test]'" in out
    assert "passed" not in out and "skipped" not in out
