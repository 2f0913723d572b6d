"""JSON text of a result's ``to_dict()``: the one place the JSON layout (indent, Unicode) is set."""

from __future__ import annotations

import json


def json_text(obj) -> str:
    """``obj`` as indented JSON ending in a newline; Unicode kept as is; NaN and infinity refused
    (``ValueError``: a ``to_dict()`` must turn them into null first)."""
    return json.dumps(obj, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
