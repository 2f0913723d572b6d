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
    from mediaplan.files.output import write_output
    from mediaplan.views.locate import places_text

    write_output(places_text(places))
    return 0
