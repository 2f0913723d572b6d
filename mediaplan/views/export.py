"""Preparation sheets and evaluation reports as Markdown, CSV and printable HTML.

HTML is self-contained (inline CSS only; no fonts, scripts or images from the network) and prints on
A4/Letter. Every document carries the plan title, the date, the catalog provenance (entry ids and
digests) and lines to sign (prepared by / checked by / date).

Text from files (titles, notes, catalog names) goes through :mod:`mediaplan.views.safe_text`: escaped as
HTML in Markdown and HTML, made inert as a formula in CSV, freed of control characters everywhere.
"""

from __future__ import annotations

import csv
import datetime
import io

from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.evaluate import Evaluation
from mediaplan.tasks.prep import PrepSheet, format_mass, format_volume_ml, gel_note, ph_osmotic_note
from mediaplan.views.report import BUDGET_HEADER, budget_rows, component_rows
from mediaplan.views.report import fmt as fmt_number
from mediaplan.views.safe_text import csv_cell, html_text, markdown
from mediaplan.views.table import markdown_table

FORMATS = ("md", "csv", "html")

Table = tuple[str, list[str], list[list[str]]]  # caption, header, rows


# ---- the content, independent of format -------------------------------------------------------------
def _head(plan, kind: str, date: datetime.date | None) -> tuple[str, list[tuple[str, str]]]:
    title = (plan.title if plan is not None else None) or "Medium"
    facts = [("document", kind), ("date", (date or datetime.date.today()).isoformat())]
    if plan is not None and plan.author:
        facts.append(("author", plan.author))
    if plan is not None and plan.path:
        facts.append(("plan file", str(plan.path)))
    return title, facts


def _provenance_table(prov: dict | None) -> Table:
    rows = []
    for kind, key in (("component", "components"), ("medium", "media")):
        for eid, digest in ((prov or {}).get(key) or {}).items():
            embedded = bool(((prov or {}).get("embedded") or {}).get(key, {}).get(eid))
            rows.append([kind, eid, str(digest), "yes" if embedded else ""])
    return ("Catalog provenance", ["kind", "entry", "digest", "embedded"], rows)


def _prep_tables(sheet: PrepSheet) -> list[Table]:
    stock_label = {s.key: s.label for s in sheet.stocks}
    rows = []
    for r in sheet.rows:
        if r.route.startswith("stock:"):
            how = f"stock: {stock_label[r.route[6:]]}"
        elif r.route == "late":
            how = "filter-sterilise, add after autoclaving"
        elif r.small:
            how = "weigh via stock"
        else:
            how = "weigh"
        note = "; ".join(x for x in (r.form_note, r.substock.text() if r.substock else None,
                                     f"confidence {r.confidence}" if r.confidence == "C" else None) if x)
        rows.append([r.display, r.amount, r.weigh, how, note])
    tables: list[Table] = [(f"Components for {format_volume_ml(sheet.volume_l * 1000)}",
                            ["component", "amount", "per batch", "how", "notes"], rows)]
    if sheet.stocks:
        srows = [[s.label, f"{s.factor:g}×", format_volume_ml(s.volume_ml), format_volume_ml(s.ml_per_batch),
                  f"{100 * s.max_fraction:.0f} %" if s.max_fraction is not None else "no data",
                  "filter" if s.filter_sterilise else "autoclave", s.note or ""] for s in sheet.stocks]
        tables.append(("Stock solutions", ["stock", "factor", "make", "per batch", "max. of solubility",
                                           "sterilise", "notes"], srows))
        irows = []
        for s in sheet.stocks:
            for it in s.items:
                irows.append([s.label, it.display, f"{fmt_number(it.grams_per_litre)} g/L", format_mass(it.grams_in_stock),
                              it.substock.text() if it.substock else ""])
        tables.append(("Making the stocks", ["stock", "component", "in stock", "weigh for the stock volume",
                                             "small amounts"], irows))
    return tables


def _prep_sections(sheet: PrepSheet) -> list[tuple[str, list[str]]]:
    secs = [("Order of addition", sheet.steps),
            ("pH", [f"Target pH {sheet.ph}.", ph_osmotic_note()]),
            ("Sterilisation", sheet.sterilisation)]
    if any(r.group == "gelling" for r in sheet.rows):
        secs.append(("Gelling agent", ["Add last, after the pH is set, and heat to dissolve.", gel_note()]))
    secs.append(("Cautions", [f"{c['name']}: {c['caution']}" for c in sheet.cautions]))
    if sheet.notes:
        secs.append(("Notes", sheet.notes))
    return secs


def _eval_tables(ev: Evaluation, budget=None) -> list[Table]:
    comp = ("Components", ["component", "amount", "mmol/kg", "mOsm/kg", "share"], component_rows(ev))
    rows = [
        ["osmolality (non-ideal)", f"{ev.osmolality_mosmol_per_kg:.1f}", "mOsm/kg"],
        ["osmolality (van't Hoff sum)", f"{ev.osmolality_ideal_mosmol_per_kg:.1f}", "mOsm/kg"],
        ["freezing-point osmometer reading", f"{ev.osmometer_mosmol_per_kg:.1f}", "mOsm/kg"],
        ["water activity", f"{ev.water_activity:.5f}", ""],
        ["osmotic potential", f"{ev.osmotic_potential_mpa:.4f}", "MPa"],
        ["van't Hoff potential", f"{ev.vant_hoff_potential_mpa:.4f}", "MPa"],
        ["freezing point", f"-{ev.freezing_point_depression_k:.3f}", "°C"],
        ["ionic strength", f"{ev.ionic_strength_mol_per_kg * 1000:.1f}", "mmol/kg"],
        ["temperature", f"{ev.temperature_c:.1f}", "°C"],
    ]
    if budget is None:
        return [comp, ("Water relations", ["quantity", "value", "unit"], rows)]
    # the 95 % interval beside each figure the budget covers (the same decimals as the value)
    fp = budget.freezing_point_depression
    bounds = {"osmolality (non-ideal)": (budget.osmolality, 1), "freezing-point osmometer reading": (budget.osmometer, 1),
              "water activity": (budget.water_activity, 5), "osmotic potential": (budget.osmotic_potential, 4)}
    for r in rows:
        if r[0] in bounds:
            iv, d = bounds[r[0]]
            r += [f"{iv.low:.{d}f}", f"{iv.high:.{d}f}"]
        elif r[0] == "freezing point":
            r += [f"-{fp.high:.3f}", f"-{fp.low:.3f}"]
        else:
            r += ["", ""]
    res = ("Water relations", ["quantity", "value", "unit", "95 % low", "95 % high"], rows)
    src = ("Uncertainty by source (95 % half-width of each alone; combined as independent)",
           BUDGET_HEADER, budget_rows(budget))
    return [comp, res, src]


def _eval_sections(ev: Evaluation) -> list[tuple[str, list[str]]]:
    secs = []
    if ev.tonicity:
        t = ev.tonicity
        secs.append(("Tonicity", [f"{t['class']} toward cells of {t['reference_mosmol_per_kg']:.0f} mOsm/kg: "
                                  f"{t['water_flow']}"]))
    if ev.warnings:
        secs.append(("Warnings", [w.message for w in ev.warnings]))
    if ev.cautions:
        secs.append(("Cautions", [f"{c['component']}: {c['caution']}" for c in ev.cautions]))
    return secs


# ---- renderers --------------------------------------------------------------------------------------
SIGN_LINES = ("prepared by", "checked by", "date")


def _markdown(title, facts, tables, sections, prov) -> str:
    md = markdown
    out = [f"# {md(title)}", ""]
    out += [f"- **{md(k)}:** {md(v)}" for k, v in facts]
    for cap, header, rows in tables:
        out += ["", f"## {md(cap)}", ""] + markdown_table(header, rows)
    for head, items in sections:
        out += ["", f"## {md(head)}", ""]
        numbered = head == "Order of addition"
        out += [f"{i}. {md(x)}" if numbered else f"- {md(x)}" for i, x in enumerate(items, 1)]
    cap, header, rows = prov
    out += ["", f"## {cap}", ""] + (markdown_table(header, rows) if rows else ["(not recorded)"])
    out += ["", "## Sign-off", ""] + [f"- {s}: ______________________" for s in SIGN_LINES]
    return "\n".join(out) + "\n"


def _csv(title, facts, tables, sections, prov) -> str:
    buf = io.StringIO()
    w = _SafeCsvWriter(csv.writer(buf, lineterminator="\n"))
    w.writerow(["title", title])
    for k, v in facts:
        w.writerow([k, v])
    for cap, header, rows in [*tables, prov]:
        w.writerow([])
        w.writerow([f"# {cap}"])
        w.writerow(header)
        w.writerows(rows)
    for head, items in sections:
        w.writerow([])
        w.writerow([f"# {head}"])
        for x in items:
            w.writerow([x])
    w.writerow([])
    w.writerow(["# Sign-off"])
    for s in SIGN_LINES:
        w.writerow([s, ""])
    return buf.getvalue()


class _SafeCsvWriter:
    """A csv writer whose text cells go through :func:`mediaplan.views.safe_text.csv_cell`."""

    def __init__(self, writer) -> None:
        self._w = writer

    def writerow(self, row) -> None:
        self._w.writerow([csv_cell(c) for c in row])

    def writerows(self, rows) -> None:
        for r in rows:
            self.writerow(r)


_CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;font-size:10.5pt;color:#1b1b1b;margin:1.6em auto;max-width:60em;padding:0 1em}
h1{font-size:1.5em;border-bottom:3px solid #2e6b4f;padding-bottom:.2em;margin-bottom:.3em}
h2{font-size:1.1em;color:#2e6b4f;margin:1.4em 0 .4em}
dl.facts{display:grid;grid-template-columns:max-content auto;gap:.1em 1em;margin:0}
dl.facts dt{font-weight:600}dl.facts dd{margin:0}
table{border-collapse:collapse;width:100%;margin:.3em 0}
th,td{border:1px solid #b9c7bf;padding:.25em .5em;text-align:left;vertical-align:top}
th{background:#e7efe9}
tbody tr:nth-child(even){background:#f6f9f7}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
ol li,ul li{margin:.15em 0}
.sign{display:grid;grid-template-columns:repeat(3,1fr);gap:2em;margin-top:2.5em}
.sign div{border-top:1px solid #333;padding-top:.2em;font-size:.9em;color:#444}
.digest{font-family:ui-monospace,monospace;font-size:.9em}
@media print{body{margin:0;max-width:none}h2{break-after:avoid}tr{break-inside:avoid}}
"""


def _looks_numeric(text: str) -> bool:
    t = text.replace(",", "").replace("−", "-").split(" ")[0].rstrip("×%")
    try:
        float(t)
        return True
    except ValueError:
        return False


def _html_table(cap: str, header: list[str], rows: list[list[str]], digest_col: int | None = None) -> list[str]:
    e = html_text
    out = [f"<h2>{e(cap)}</h2>", "<table>", "<thead><tr>" + "".join(f"<th>{e(h)}</th>" for h in header) +
           "</tr></thead>", "<tbody>"]
    for r in rows:
        cells = []
        for i, c in enumerate(r):
            cls = ' class="digest"' if i == digest_col else (' class="num"' if i and _looks_numeric(str(c)) else "")
            cells.append(f"<td{cls}>{e(str(c))}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out += ["</tbody>", "</table>"]
    return out


def _html(title, facts, tables, sections, prov) -> str:
    e = html_text
    out = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
           '<meta name="viewport" content="width=device-width, initial-scale=1">',
           f"<title>{e(title)}</title>", f"<style>{_CSS}</style>", "</head>", "<body>", f"<h1>{e(title)}</h1>",
           '<dl class="facts">'] + [f"<dt>{e(k)}</dt><dd>{e(str(v))}</dd>" for k, v in facts] + ["</dl>"]
    for cap, header, rows in tables:
        out += _html_table(cap, header, rows)
    for head, items in sections:
        tag = "ol" if head == "Order of addition" else "ul"
        out += [f"<h2>{e(head)}</h2>", f"<{tag}>"] + [f"<li>{e(x)}</li>" for x in items] + [f"</{tag}>"]
    cap, header, rows = prov
    out += _html_table(cap, header, rows, digest_col=2) if rows else [f"<h2>{e(cap)}</h2>", "<p>(not recorded)</p>"]
    out += ['<div class="sign">'] + [f"<div>{e(s)}</div>" for s in SIGN_LINES] + ["</div>", "</body>", "</html>"]
    return "\n".join(out) + "\n"


_RENDER = {"md": _markdown, "csv": _csv, "html": _html}


def _render(fmt_name: str, *parts) -> str:
    if fmt_name not in _RENDER:
        raise MediaplanError(f"unknown format {fmt_name!r}", field="format", hint="use md, csv or html")
    return _RENDER[fmt_name](*parts)


def _provenance(plan, given: dict | None) -> dict | None:
    if given is not None:
        return given
    return plan.provenance if plan is not None else None


def prep_sheet(sheet: PrepSheet, plan, fmt: str = "md", *, provenance: dict | None = None,
               date: datetime.date | None = None) -> str:
    """A preparation sheet as Markdown, CSV or HTML text.

    provenance : the ``[provenance]`` table to print (default: the sheet's, else the plan's)
    """
    title, facts = _head(plan, "preparation sheet", date)
    if plan is None:
        title = sheet.title
    facts.insert(1, ("batch", f"{format_volume_ml(sheet.volume_l * 1000)} at {sheet.temperature_c:.0f} °C"))
    if sheet.base:
        facts.insert(2, ("base", f"{sheet.base} × {sheet.strength:g}"))
    prov = _provenance_table(provenance if provenance is not None else (sheet.provenance or _provenance(plan, None)))
    return _render(fmt, title, facts, _prep_tables(sheet), _prep_sections(sheet), prov)


def evaluation_report(ev: Evaluation, plan, fmt: str = "md", *, provenance: dict | None = None,
                      date: datetime.date | None = None, budget=None) -> str:
    """An evaluation report (components, water relations, warnings) as Markdown, CSV or HTML text; with a
    :class:`~mediaplan.tasks.uncertainty.Budget`, the 95 % interval beside each figure it covers and the
    sources of the budget."""
    title, facts = _head(plan, "water-relations report", date)
    facts.insert(1, ("medium", f"{fmt_number(ev.volume_l)} L at {ev.temperature_c:.1f} °C" +
                     (f", base {ev.base} × {ev.strength:g}" if ev.base else "")))
    prov = _provenance_table(_provenance(plan, provenance))
    return _render(fmt, title, facts, _eval_tables(ev, budget), _eval_sections(ev), prov)
