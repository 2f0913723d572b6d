"""Plain-text rendering of where mediaplan keeps its files."""

from __future__ import annotations

from mediaplan.views.safe_text import terminal
from mediaplan.views.table import pairs_table


def places_text(places: dict[str, str | list[str]]) -> str:
    """One line per place, ``name  folder`` (a list of folders joined by commas; no facility folder
    says how to set one)."""
    rows = [(k.replace("_", " "), (", ".join(v) if isinstance(v, list) else v) or "(none: set MEDIAPLAN_CATALOG)")
            for k, v in places.items()]
    return terminal("\n".join(pairs_table(rows)))
