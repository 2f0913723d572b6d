"""JSON text of a result's ``to_dict()``: the one place the JSON layout (indent, Unicode) is set."""

from __future__ import annotations

import json
import re

#: characters JSON may carry raw but a terminal would act on (DEL, C1 controls, bidirectional overrides);
#: C0 controls are escaped by the JSON encoder itself
_RAW_CONTROLS = re.compile("[\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def json_text(obj) -> str:
    """``obj`` as indented JSON ending in a newline; Unicode kept as is, except control characters, which
    are written as ``\\u`` escapes (the decoded text is the same); NaN and infinity refused
    (``ValueError``: a ``to_dict()`` must turn them into null first)."""
    text = json.dumps(obj, indent=2, ensure_ascii=False, allow_nan=False)
    return _RAW_CONTROLS.sub(lambda m: f"\\u{ord(m.group()):04x}", text) + "\n"
