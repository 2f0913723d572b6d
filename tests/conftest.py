"""Shared fixtures: every test runs isolated from the developer's own config, state and catalog."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


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
