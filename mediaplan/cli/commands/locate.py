"""mediaplan locate: where mediaplan keeps the user's files."""

from __future__ import annotations


def add_arguments(p) -> None:
    p.add_argument("--json", action="store_true", help="print one JSON object")


def run(args) -> int:
    import os

    from mediaplan.cli.common import print_json
    from mediaplan.files.catalog import bundled_folder
    from mediaplan.files.paths import (
        log_file,
        recovery_dir,
        user_cache_dir,
        user_catalog_dir,
        user_config_dir,
    )

    places = {
        "bundled_catalog": str(bundled_folder()),
        "user_catalog": str(user_catalog_dir()),
        "facility_catalogs": [p for p in os.environ.get("MEDIAPLAN_CATALOG", "").split(os.pathsep) if p],
        "config": str(user_config_dir()),
        "recovery": str(recovery_dir()),
        "error_log": str(log_file()),
        "cache": str(user_cache_dir()),
    }
    if args.json:
        print_json(places)
        return 0
    width = max(len(k) for k in places)
    for k, v in places.items():
        shown = ", ".join(v) if isinstance(v, list) else v
        print(f"{k.replace('_', ' ').ljust(width)}  {shown or '(none: set MEDIAPLAN_CATALOG)'}")
    return 0
