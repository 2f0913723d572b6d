"""Plain-text rendering of an osmometer reading checked against its plan, and of recorded readings."""

from __future__ import annotations

from mediaplan.views.safe_text import terminal
from mediaplan.views.table import RIGHT, Column, pairs_table, text_table

_VERDICT = {"consistent": "consistent with the plan", "higher": "HIGHER than the plan allows",
            "lower": "LOWER than the plan allows"}
_KIND = {"omitted": "left out", "amount": "amount", "hydrate": "hydrate form", "stock": "stock",
         "strength": "whole batch", "unlisted_solute": "unlisted solute"}


def reading_text(d: dict, *, title: str | None = None) -> str:
    """A reading check (``ReadingCheck.to_dict()``) as plain text: prediction, interval, reading, verdict,
    then the ranked slips when the reading disagrees."""
    lo, hi = d["interval_mosmol_per_kg"]
    inst = d["instrument"] + (f" osmometer, chamber {d['chamber_temperature_c']:.1f} °C"
                              if d.get("chamber_temperature_c") is not None else " osmometer")
    pairs = [("Instrument", inst),
             ("Predicted", f"{d['predicted_mosmol_per_kg']:.1f} mOsm/kg"),
             ("95 % interval", f"{lo:.1f} – {hi:.1f} mOsm/kg (model {d['interval_source']}; repeatability "
                               f"±{d['repeatability_sd_mosmol_per_kg']:.1f} mOsm/kg s.d.)"),
             ("Reading", f"{d['reading_mosmol_per_kg']:.1f} mOsm/kg"
              + (f" (displayed {d['displayed_mosmol_per_kg']:.1f}, calibrated)" if d.get("calibration") else "")),
             ("Deviation", f"{d['deviation_mosmol_per_kg']:+.1f} mOsm/kg"
              + (f" ({d['deviation_percent']:+.1f} %)" if d.get("deviation_percent") is not None else "")),
             ("Verdict", f"{d['verdict']}: {_VERDICT[d['verdict']]}")]
    out = [title] if title else []
    out += pairs_table(pairs)
    ex = d["explanations"]
    if ex:
        out.append("")
        head = ("Slips that would explain the reading, most likely first" if not d["none_explains"]
                else "No single slip explains the reading; the nearest are")
        out.append(head)
        cols = [Column("#", RIGHT), Column("kind"), Column("would read", RIGHT), Column("what happened")]
        rows = [[str(i), _KIND.get(e["kind"], e["kind"]), f"{e['predicted_mosmol_per_kg']:.1f}", e["description"]]
                for i, e in enumerate(ex, start=1)]
        out += text_table(cols, rows, indent="  ")
    for n in d.get("notes") or []:
        out.append(f"note: {n}")
    return terminal("\n".join(out))


def readings_lines(readings: list[dict], *, indent: str = "  ") -> list[str]:
    """Recorded readings of a plan (``{"date", "value", "instrument", "operator", "note"}``), one line each."""
    rows = [[str(r.get("date") or ""), str(r.get("value") or ""), str(r.get("instrument") or ""),
             str(r.get("operator") or ""), str(r.get("note") or "")] for r in readings]
    cols = [Column("date"), Column("reading", RIGHT), Column("instrument"), Column("operator"),
            Column("note", max_width=60)]
    return text_table(cols, rows, indent=indent)
