"""Plain-text rendering of an Evaluation (CLI output; the exports build on the same rows)."""

from __future__ import annotations

from mediaplan.medium.evaluate import Evaluation
from mediaplan.views.safe_text import terminal
from mediaplan.views.table import RIGHT, Column, pairs_table, text_table


def fmt(x: float, digits: int = 4) -> str:
    """Numbers for tables: significant digits, no exponent for everyday magnitudes."""
    if x == 0:
        return "0"
    ax = abs(x)
    if ax >= 1000:
        return f"{x:,.0f}"
    if ax >= 1:
        return f"{x:.{max(digits - len(str(int(ax))), 0)}f}"
    if ax >= 1e-3:
        return f"{x:.{digits - 1}f}" if ax >= 0.1 else f"{x:.{digits}f}"
    return f"{x:.2e}"


def component_rows(ev: Evaluation) -> list[list[str]]:
    rows = []
    for c in ev.components:
        name = c.name if not c.formula else f"{c.name} ({c.formula})"
        flag = {"override": "*", "user": "+"}.get(c.origin, "")
        rows.append([name + flag, c.amount, fmt(c.molality_mmol_per_kg), fmt(c.osmolality_mosmol_per_kg),
                     f"{100 * c.share:.1f} %"])
    return rows


#: the component table of an evaluation
COMPONENT_COLUMNS = (Column("component", max_width=48), Column("amount"), Column("mmol/kg", RIGHT),
                     Column("mOsm/kg", RIGHT), Column("share", RIGHT))


def evaluation_text(ev: Evaluation, title: str | None = None, notes: list[str] | None = None) -> str:
    head = title or "Medium"
    base = f", base {ev.base} × {ev.strength:g}" if ev.base else ""
    out = [f"{head} — {fmt(ev.volume_l)} L at {ev.temperature_c:.1f} °C{base}", ""]
    out += text_table(COMPONENT_COLUMNS, component_rows(ev), rule="─")
    out.append("")
    out.append("  * replaces the base amount   + added to the base")
    out.append("")
    out.append("Water relations")
    d = ev
    rows = [
        ("osmolality", f"{d.osmolality_mosmol_per_kg:.1f} mOsm/kg   (van't Hoff sum {d.osmolality_ideal_mosmol_per_kg:.1f};"
                       f" freezing-point osmometer would read {d.osmometer_mosmol_per_kg:.1f})"),
        ("water activity", f"{d.water_activity:.5f}"),
        ("osmotic potential", f"{d.osmotic_potential_mpa:.4f} MPa   ({d.osmotic_potential_bar:.3f} bar; "
                              f"van't Hoff i·c·R·T gives {d.vant_hoff_potential_mpa:.4f} MPa)"),
        ("osmotic pressure", f"{d.osmotic_pressure_mpa:.4f} MPa"),
        ("freezing point", f"−{d.freezing_point_depression_k:.3f} °C"),
        ("ionic strength", f"{d.ionic_strength_mol_per_kg * 1000:.1f} mmol/kg   (electrolyte φ {d.electrolyte_phi:.4f})"),
        ("water per litre", f"{d.water_kg_per_l * 1000:.1f} g   (solution density {d.density_kg_per_l:.4f} kg/L)"),
    ]
    if d.tonicity:
        t = d.tonicity
        rows.append(("tonicity", f"{t['class']} toward cells of {t['reference_mosmol_per_kg']:.0f} mOsm/kg "
                                 f"(effective {t['effective_mosmol_per_kg']:.1f}; {t['water_flow']})"))
    out += pairs_table(rows, indent="  ")
    if d.groups:
        out.append("")
        out.append("Osmolality by group")
        out += _groups_table(d.groups)
    msgs = [f"  ! {w.message}" for w in d.warnings] + [f"  - {n}" for n in (notes or [])]
    if msgs:
        out.append("")
        out.append("Warnings and notes")
        out += msgs
    if d.cautions:
        out.append("")
        out.append("Cautions: " + ", ".join(c["component"] for c in d.cautions) +
                   " carry hazard notes (mediaplan catalog show ID; the prep sheet prints them in full)")
    return terminal("\n".join(out))


def _groups_table(groups: dict[str, float]) -> list[str]:
    """Osmolality by group [mOsm/kg], largest first, with a bar of its share (30 characters = all)."""
    total = sum(groups.values()) or 1.0
    rows = [[k, f"{v:.1f} mOsm/kg", "█" * int(round(30 * v / total))]
            for k, v in sorted(groups.items(), key=lambda kv: -kv[1])]
    return text_table([Column(), Column(align=RIGHT, min_width=len("00000.0 mOsm/kg")), Column()], rows,
                      header=False, indent="  ")
