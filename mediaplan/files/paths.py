"""Where mediaplan keeps the user's files (one module; ``mediaplan locate`` prints them)."""

from __future__ import annotations

import os
from pathlib import Path

import platformdirs

APP = "mediaplan"


def user_config_dir() -> Path:
    return Path(os.environ.get("MEDIAPLAN_CONFIG_DIR") or platformdirs.user_config_dir(APP))


def user_catalog_dir() -> Path:
    """A per-user catalog folder merged over the bundled one (components/, media/, pitzer.yaml...)."""
    return user_config_dir() / "catalog"


def user_state_dir() -> Path:
    """Logs of unexpected errors and recovery files of unsaved work."""
    return Path(os.environ.get("MEDIAPLAN_STATE_DIR") or platformdirs.user_state_dir(APP))


def user_cache_dir() -> Path:
    """Caches that can be deleted at any time (the unit registry's parsed definitions)."""
    return Path(os.environ.get("MEDIAPLAN_CACHE_DIR") or platformdirs.user_cache_dir(APP))


def recovery_dir() -> Path:
    return user_state_dir() / "recovery"


def log_file() -> Path:
    return user_state_dir() / "errors.log"


def use_unit_cache() -> None:
    """Let the unit registry keep its parsed definitions in the user's cache folder (front ends call this
    once at start; the medium layer picks no folder of its own)."""
    from mediaplan.medium import units

    units.use_cache_folder(user_cache_dir() / "pint")
