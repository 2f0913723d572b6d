"""The terminal app's tests: the warm start (a worker importing the solver and fit after the first paint)
is off unless a test asks for it, so pilot waits do not wait for it; tests/tui/test_tui_sizes.py turns it
on to test it."""

from __future__ import annotations

import pytest
import textual_plotext  # noqa: F401 - the tests see the app as after its warm start (see below)

import mediaplan.medium.evaluate  # noqa: F401
from mediaplan.tui.app import MediaplanApp

# The engine and the plotting library are imported before any app starts, as after the app's warm start;
# the moments before (the main screen "computing", the series screen's plot being prepared) are tested on
# their own, with the readiness checks of mediaplan.tui.warm answering no.


@pytest.fixture(autouse=True)
def _isolated(tmp_path, monkeypatch):
    """Each app test runs in its own folder, with its own config and state folders (recent plans, autosaves)."""
    monkeypatch.setenv("MEDIAPLAN_CONFIG_DIR", str(tmp_path / "config"))
    monkeypatch.setenv("MEDIAPLAN_STATE_DIR", str(tmp_path / "state"))
    monkeypatch.chdir(tmp_path)


@pytest.fixture(scope="module")
def catalog():
    """The catalog the app itself reads (bundled, then the user's and facility folders: none here)."""
    from mediaplan.files.catalog import get_catalog

    return get_catalog()


@pytest.fixture(autouse=True)
def _no_warm_start(request, monkeypatch):
    if "warm_start" not in request.keywords:
        monkeypatch.setattr(MediaplanApp, "WARM_START", False)
    if "prime_screens" not in request.keywords:  # its timers would keep the pilot's idle waits waiting
        monkeypatch.setattr(MediaplanApp, "PRIME_SCREENS", False)


@pytest.fixture(autouse=True)
def _unfreeze():
    """The warm start keeps the objects of its time out of the collector's passes (gc.freeze): in this
    process, which runs many apps, they are handed back after each test."""
    import gc

    yield
    gc.unfreeze()
    from mediaplan.tui import warm

    warm.release()


def pytest_configure(config):
    config.addinivalue_line("markers", "warm_start: run the app with its warm start on")
    config.addinivalue_line("markers", "prime_screens: run the app with its screens primed after the first paint")

