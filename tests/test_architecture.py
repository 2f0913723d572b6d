"""The layer contracts of pyproject.toml ([tool.importlinter]) hold."""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def test_import_contracts_are_kept():
    exe = shutil.which("lint-imports")
    if exe is None:
        pytest.skip("import-linter is not installed (it is in the test extras)")
    r = subprocess.run([exe, "--no-cache"], cwd=ROOT, capture_output=True, text=True)
    assert r.returncode == 0, r.stdout[-2000:] + r.stderr[-2000:]
    assert "0 broken" in r.stdout
