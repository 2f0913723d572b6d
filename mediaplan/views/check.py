"""Plain-text rendering of plan checks: one line per plan."""

from __future__ import annotations

from mediaplan.views.safe_text import one_line


def check_line(r: dict) -> str:
    """``PLAN: ok`` (with catalog differences and warning codes in brackets) or ``PLAN: invalid: reason``."""
    if r["status"] != "ok":
        return one_line(f"{r['path']}: invalid: {r['reason']}")
    extra = []
    if r["differences"]:
        extra.append("catalog differs: " + "; ".join(d["message"] for d in r["differences"]))
    if r["warnings"]:
        extra.append(f"{len(r['warnings'])} warning{'s' if len(r['warnings']) != 1 else ''}: "
                     + "; ".join(w["code"] for w in r["warnings"]))
    if r.get("readings"):
        n, last = len(r["readings"]), r["readings"][-1]
        extra.append(f"{n} reading{'s' if n != 1 else ''} recorded, last "
                     + (f"{last['date']}: " if last.get("date") else "") + f"{last['value']} ({last['instrument']})")
    return one_line(f"{r['path']}: ok" + (" (" + " | ".join(extra) + ")" if extra else ""))


def check_text(results: list[dict]) -> str:
    """One :func:`check_line` per plan."""
    return "\n".join(check_line(r) for r in results)
