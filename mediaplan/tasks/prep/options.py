"""Sheet options written as ``KEY=VALUE`` items (forms on the shelf, stock factors)."""

from __future__ import annotations

from mediaplan.medium.errors import AmountError


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
    """``STOCK=X`` items -> stock key -> concentration factor (``10``, ``10x`` and ``10×`` all read 10)."""
    out = {}
    for key, val in parse_pairs(items, "stock_factor").items():
        try:
            f = float(val.rstrip("xX×"))
        except ValueError:
            raise AmountError(f"stock factor {val!r} is not a number", field=f"stock_factor {key}",
                              hint="write e.g. micro=100") from None
        out[key] = f
    return out
