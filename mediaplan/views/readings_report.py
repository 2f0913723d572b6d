"""A facility's record of batches: every reading recorded in many plans against its prediction.

Rows are plain dicts (one per recorded reading: ``plan``, ``title``, ``date``, ``instrument``, ``operator``,
``note``, ``reading_mosmol_per_kg``, ``predicted_mosmol_per_kg``, ``low``, ``high``, ``deviation_percent``,
``verdict``, ``slip``; or ``error`` for a reading that could not be checked). Markdown, CSV or HTML; the
HTML carries a measured-against-predicted plot (SVG, no extra library).
"""

from __future__ import annotations

import csv
import io
import math
from html import escape

from mediaplan.views.plot import nice_ticks
from mediaplan.views.safe_text import csv_cell, html_text
from mediaplan.views.table import markdown_table

_HEAD = ["plan", "date", "instrument", "operator", "reading (mOsm/kg)", "predicted (mOsm/kg)",
         "95 % interval", "deviation (%)", "verdict", "most likely slip", "note"]


def _cells(r: dict) -> list[str]:
    if r.get("error"):
        return [r["plan"], str(r.get("date") or ""), str(r.get("instrument") or ""), str(r.get("operator") or ""),
                str(r.get("value") or ""), "", "", "", "not checked", r["error"], str(r.get("note") or "")]
    return [r["plan"], str(r.get("date") or ""), r["instrument"], str(r.get("operator") or ""),
            f"{r['reading_mosmol_per_kg']:.1f}", f"{r['predicted_mosmol_per_kg']:.1f}",
            f"{r['low']:.1f}–{r['high']:.1f}",
            f"{r['deviation_percent']:+.1f}" if r["deviation_percent"] == r["deviation_percent"] else "",
            r["verdict"], r.get("slip") or "",
            str(r.get("note") or "")]


def summary(rows: list[dict]) -> list[tuple[str, str]]:
    """Per instrument: readings, how many consistent, and the mean and s.d. of the deviation [%] of the
    consistent ones (the instrument's bias and scatter against the plans; batches with a slip left out)."""
    out = []
    for inst in sorted({r["instrument"] for r in rows if not r.get("error") and r.get("instrument")}):
        mine = [r for r in rows if not r.get("error") and r["instrument"] == inst]
        devs = [r["deviation_percent"] for r in mine if r["verdict"] == "consistent"
                and r["deviation_percent"] == r["deviation_percent"]]
        text = f"{len(mine)} reading{'s' if len(mine) != 1 else ''}, {len(devs)} consistent"
        if devs:
            mean = sum(devs) / len(devs)
            sd = math.sqrt(sum((d - mean) ** 2 for d in devs) / (len(devs) - 1)) if len(devs) > 1 else math.nan
            text += f"; those read {mean:+.1f} % from the plans on average" + (
                f" (s.d. {sd:.1f} %)" if math.isfinite(sd) else "")
        out.append((inst, text))
    bad = sum(1 for r in rows if r.get("error"))
    if bad:
        out.append(("not checked", f"{bad} reading{'s' if bad != 1 else ''}"))
    return out


def svg_scatter(rows: list[dict], title: str = "Measured against predicted") -> str:
    """An SVG of each reading (y) against its prediction (x) [mOsm/kg], with its interval and the 1:1 line."""
    pts = [r for r in rows if not r.get("error")]
    W, H, ML, MR, MT, MB = 560, 420, 64, 20, 40, 52
    pw, ph = W - ML - MR, H - MT - MB
    vals = [v for r in pts for v in (r["reading_mosmol_per_kg"], r["low"], r["high"])] or [0.0, 1.0]
    lo, hi = min(vals), max(vals)
    pad = (hi - lo) * 0.08 or max(hi * 0.1, 1.0)
    lo, hi = max(lo - pad, 0.0), hi + pad

    def sx(v):
        return ML + (v - lo) / (hi - lo) * pw

    def sy(v):
        return MT + (1 - (v - lo) / (hi - lo)) * ph

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{H}" viewBox="0 0 {W} {H}" '
           'font-family="sans-serif" font-size="12">', f'<rect width="{W}" height="{H}" fill="#ffffff"/>',
           f'<text x="{W / 2:.0f}" y="22" text-anchor="middle" font-size="14">{escape(title)}</text>']
    for t in nice_ticks(lo, hi):
        out.append(f'<line x1="{sx(t):.1f}" y1="{MT}" x2="{sx(t):.1f}" y2="{MT + ph}" stroke="#e4e4e4"/>')
        out.append(f'<text x="{sx(t):.1f}" y="{MT + ph + 16}" text-anchor="middle">{t:g}</text>')
        out.append(f'<line x1="{ML}" y1="{sy(t):.1f}" x2="{ML + pw}" y2="{sy(t):.1f}" stroke="#e4e4e4"/>')
        out.append(f'<text x="{ML - 6}" y="{sy(t) + 4:.1f}" text-anchor="end">{t:g}</text>')
    out.append(f'<line x1="{sx(lo):.1f}" y1="{sy(lo):.1f}" x2="{sx(hi):.1f}" y2="{sy(hi):.1f}" stroke="#6b6b6b" '
               'stroke-dasharray="4 3"/>')
    for r in pts:
        x = sx(r["predicted_mosmol_per_kg"])
        out.append(f'<line x1="{x:.1f}" y1="{sy(r["low"]):.1f}" x2="{x:.1f}" y2="{sy(r["high"]):.1f}" '
                   'stroke="#1f6f66" stroke-width="2"/>')
        colour = "#1f6f66" if r["verdict"] == "consistent" else "#b3472d"
        out.append(f'<circle cx="{x:.1f}" cy="{sy(r["reading_mosmol_per_kg"]):.1f}" r="4" fill="{colour}">'
                   f'<title>{escape(str(r["plan"]))} {escape(str(r.get("date") or ""))}</title></circle>')
    out.append(f'<rect x="{ML}" y="{MT}" width="{pw}" height="{ph}" fill="none" stroke="#222222"/>')
    out.append(f'<text x="{ML + pw / 2:.0f}" y="{H - 12}" text-anchor="middle">predicted (mOsm/kg)</text>')
    out.append(f'<text x="16" y="{MT + ph / 2:.0f}" text-anchor="middle" transform="rotate(-90 16 '
               f'{MT + ph / 2:.0f})">measured (mOsm/kg)</text>')
    out.append("</svg>")
    return "\n".join(out) + "\n"


def facility_report(rows: list[dict], fmt: str = "md", *, title: str = "Osmometer readings of the batches") -> str:
    """The report in ``md``, ``csv`` or ``html``."""
    table = [_cells(r) for r in rows]
    summ = summary(rows)
    if fmt == "csv":
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(_HEAD)
        for row in table:
            w.writerow([csv_cell(c) for c in row])
        return buf.getvalue()
    if fmt == "html":
        out = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
               f"<title>{html_text(title)}</title></head><body>", f"<h1>{html_text(title)}</h1>", "<ul>"]
        out += [f"<li><b>{html_text(k)}</b>: {html_text(v)}</li>" for k, v in summ]
        out += ["</ul>", svg_scatter(rows), "<table>",
                "<tr>" + "".join(f"<th>{html_text(h)}</th>" for h in _HEAD) + "</tr>"]
        out += ["<tr>" + "".join(f"<td>{html_text(c)}</td>" for c in row) + "</tr>" for row in table]
        out += ["</table>", "</body></html>"]
        return "\n".join(out) + "\n"
    out = [f"# {title}", ""]
    out += [f"- **{k}**: {v}" for k, v in summ] or ["- no readings recorded"]
    out += ["", *markdown_table(_HEAD, table), ""]
    return "\n".join(out)
