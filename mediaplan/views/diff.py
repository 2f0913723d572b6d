"""Plain-text rendering of the differences between two plans."""

from __future__ import annotations

from mediaplan.views.safe_text import terminal
from mediaplan.views.table import pairs_table

_MARK = {"added": "+", "removed": "-", "changed": "~"}


def diff_text(d: dict) -> str:
    """A plan comparison (settings, components with their molarity [mmol/L], results) as plain text."""
    out = [f"--- {d['a']}  ({d['title_a']})", f"+++ {d['b']}  ({d['title_b']})"]
    if d["settings"]:
        out.append("")
        out.append("Settings")
        out += [f"  ~ {s['field']}: {s['a']} → {s['b']}" for s in d["settings"]]
    out.append("")
    out.append("Components" + ("" if d["components"] else ": no differences"))
    for c in d["components"]:
        if c["change"] == "changed":
            what = f"{c['a']} → {c['b']}"
        else:
            what = c["b"] if c["change"] == "added" else c["a"]
        out.append(f"  {_MARK[c['change']]} {c['name']} ({c['id']}): {what}   "
                   f"[{c['a_mmol_per_l']:.4g} → {c['b_mmol_per_l']:.4g} mmol/L]")
    out.append("")
    out.append("Results")
    out += pairs_table([(r["label"], r["text"]) for r in d["results"]], indent="  ")
    if d.get("readings"):
        from mediaplan.views.reading import readings_lines

        for side, path in (("a", d["a"]), ("b", d["b"])):
            rs = d["readings"][side]
            out.append("")
            out.append(f"Osmometer readings recorded in {path}" + ("" if rs else ": none"))
            if rs:
                out += readings_lines(rs, indent="  ")
    return terminal("\n".join(out))
