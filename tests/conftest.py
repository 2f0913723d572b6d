"""Shared fixtures: every test runs isolated from the developer's own config, state and catalog.

Cache folders are isolated per test process at import time, before any test imports the unit library
or a reference library: each pytest-xdist worker (``PYTEST_XDIST_WORKER``: gw0, gw1...) and each run gets
fresh folders of its own for ``XDG_CACHE_HOME`` (where reference libraries keep their parsed unit
definitions) and ``MEDIAPLAN_CACHE_DIR``. Shared, two workers on a fresh machine would write the same
cache file at once and one of them read it half-written (EOFError); the child processes a test starts
inherit the folders of its worker.
"""

from __future__ import annotations

import atexit
import os
import shutil
import tempfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent

WORKER = os.environ.get("PYTEST_XDIST_WORKER", "main")
_CACHES = Path(tempfile.mkdtemp(prefix=f"mediaplan-test-caches-{WORKER}-"))
os.environ["XDG_CACHE_HOME"] = str(_CACHES / "xdg")
os.environ["MEDIAPLAN_CACHE_DIR"] = str(_CACHES / "mediaplan")
atexit.register(shutil.rmtree, _CACHES, ignore_errors=True)

# Child processes a test starts (``python -m mediaplan ...``) import this checkout, the tree under test,
# whatever an editable install elsewhere points at (the mutation script runs the suite in a copy).
os.environ["PYTHONPATH"] = os.pathsep.join([str(ROOT)] + [p for p in os.environ.get("PYTHONPATH", "").split(os.pathsep)
                                                         if p and p != str(ROOT)])

#: The reference libraries the tests compare against (and the test tools): a missing one fails the whole
#: run at its start with this message, never a silent skip of the checks that need it.
REQUIRED = {  # import name: distribution name
    "periodictable": "periodictable",
    "iapws": "iapws",
    "statsmodels": "statsmodels",
    "pyEQL": "pyEQL",
    "phreeqpython": "phreeqpython",
    "hypothesis": "hypothesis",
    "importlinter": "import-linter",
    "matplotlib": "matplotlib",
    "scipy": "scipy",
}


def missing_references() -> list[str]:
    """Distribution names of the required test libraries that cannot be found [names]."""
    import importlib.util

    return [dist for name, dist in REQUIRED.items() if importlib.util.find_spec(name) is None]


def pytest_sessionstart(session):
    missing = missing_references()
    if missing:
        pytest.exit(f"reference libraries missing: {', '.join(missing)}; the checks against them cannot run. "
                    "Install the test extras: python3 -m pip install -e '.[test]'", returncode=3)


@pytest.fixture(autouse=True)
def _isolate_user_files(tmp_path_factory, monkeypatch):
    base = tmp_path_factory.mktemp("userdirs")
    monkeypatch.setenv("MEDIAPLAN_CONFIG_DIR", str(base / "config"))
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(base / "state"))
    monkeypatch.delenv("MEDIAPLAN_CATALOG", raising=False)
    yield


@pytest.fixture(scope="session")
def catalog():
    from mediaplan.files.catalog import bundled_folder, load_catalog

    return load_catalog([bundled_folder()])


@pytest.fixture
def root() -> Path:
    return ROOT
