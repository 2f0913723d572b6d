"""The terminal app's tests: the warm start (a worker importing the solver and fit after the first paint)
is off unless a test asks for it, so pilot waits do not wait for it; tests/tui/test_tui_sizes.py turns it
on to test it."""

from __future__ import annotations

import pytest

from mediaplan.tui.app import MediaplanApp


@pytest.fixture(autouse=True)
def _no_warm_start(request, monkeypatch):
    if "warm_start" not in request.keywords:
        monkeypatch.setattr(MediaplanApp, "WARM_START", False)


def pytest_configure(config):
    config.addinivalue_line("markers", "warm_start: run the app with its warm start on")
