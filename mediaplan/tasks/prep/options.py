"""Sheet options written as ``KEY=VALUE`` items (forms on the shelf, stock factors) and the target pH."""

from __future__ import annotations

import math
import re

from mediaplan.medium.errors import AmountError

#: the largest concentration factor of a stock: a growth-regulator stock of 1 mg/mL used at 0.01 mg/L is
#: 1e5 x; no stock of a medium is more concentrated than that (common practice)
MAX_STOCK_FACTOR = 1e5
#: the pH scale of dilute aqueous media (common practice: plant media are set between 4 and 7)
PH_RANGE = (0.0, 14.0)

_MINUS = str.maketrans({"\u2212": "-", "\u2013": "-"})
_PH = re.compile(r"^\s*(?P<a>[-+]?\d+(?:\.\d+)?)\s*(?:(?:-|–|—|to)\s*(?P<b>[-+]?\d+(?:\.\d+)?)\s*)?$")


def parse_pairs(items: list[str] | None, what: str) -> dict[str, str]:
    """``KEY=VALUE`` items -> dict (one clear error, naming the field ``what``, for a malformed item)."""
    out: dict[str, str] = {}
    for item in items or []:
        key, eq, val = item.partition("=")
        if not eq or not key.strip() or not val.strip():
            raise AmountError(f"'{item}' is not KEY=VALUE", field=what, hint="write e.g. macro=10")
        out[key.strip()] = val.strip()
    return out


def parse_factors(items: list[str] | None) -> dict[str, float]:
    """``STOCK=X`` items -> stock key -> concentration factor (``10``, ``10x`` and ``10×`` all read 10).

    A factor must be a finite number from 1 to :data:`MAX_STOCK_FACTOR`; a minus sign typed as U+2212 is
    read as a minus (and so refused as below 1), never dropped.
    """
    out = {}
    for key, val in parse_pairs(items, "stock_factor").items():
        try:
            f = float(val.translate(_MINUS).rstrip("xX×").strip())
        except ValueError:
            raise AmountError(f"stock factor {val!r} is not a number", field=f"stock_factor {key}",
                              hint="write e.g. micro=100") from None
        if not math.isfinite(f):
            raise AmountError(f"stock factor {val!r} is not a finite number", field=f"stock_factor {key}",
                              hint="write e.g. micro=100")
        if f < 1:
            raise AmountError(f"stock factor {val} must be 1 or more", field=f"stock_factor {key}",
                              hint="1 is the medium itself; stocks are 10 to 1000 times as strong")
        if f > MAX_STOCK_FACTOR:
            raise AmountError(f"stock factor {val} is past {MAX_STOCK_FACTOR:,.0f}, more than any stock is "
                              "concentrated", field=f"stock_factor {key}", hint="write e.g. micro=100")
        out[key] = f
    return out


def parse_ph(text: str | None) -> str | None:
    """The target pH as typed (``5.8``, ``5.7–5.8``, ``5.7-5.8``), checked; None stays None.

    Each value must lie on the pH scale, :data:`PH_RANGE`; a range must go upwards. The text is returned
    as written (the sheet prints what the user typed).
    """
    if text is None:
        return None
    m = _PH.match(text.translate(_MINUS)) if isinstance(text, str) else None
    if m is None:
        raise AmountError(f"pH {text!r} is not a number or a range", field="ph",
                          hint='write e.g. 5.8 or "5.7-5.8"')
    values = [float(v) for v in (m.group("a"), m.group("b")) if v is not None]
    low, high = PH_RANGE
    for v in values:
        if not low <= v <= high:
            raise AmountError(f"pH {text} is off the pH scale ({low:g} to {high:g})", field="ph",
                              hint="plant media are set between 4 and 7, most at 5.7-5.8")
    if len(values) == 2 and values[1] < values[0]:
        raise AmountError(f"pH range {text} goes downwards", field="ph", hint='write the lower value first, e.g. "5.7-5.8"')
    return text
