"""Plain-text rendering of an Evaluation (CLI output; the exports build on the same rows)."""

from __future__ import annotations

from mediaplan.medium.evaluate import Evaluation


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


def _table(header: list[str], rows: list[list[str]], right: set[int]) -> list[str]:
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(header)]
    widths[0] = min(widths[0], 48)

    def line(cells):
        out = []
        for i, (cell, w) in enumerate(zip(cells, widths, strict=True)):
            cell = cell if len(cell) <= w else cell[: w - 1] + "…"
            out.append(cell.rjust(w) if i in right else cell.ljust(w))
        return "  ".join(out).rstrip()

    return [line(header), line(["─" * w for w in widths])] + [line(r) for r in rows]


def evaluation_text(ev: Evaluation, title: str | None = None, notes: list[str] | None = None) -> str:
    head = title or "Medium"
    base = f", base {ev.base} × {ev.strength:g}" if ev.base else ""
    out = [f"{head} — {fmt(ev.volume_l)} L at {ev.temperature_c:.1f} °C{base}", ""]
    out += _table(["component", "amount", "mmol/kg", "mOsm/kg", "share"], component_rows(ev), {2, 3, 4})
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
    w = max(len(r[0]) for r in rows)
    out += [f"  {k.ljust(w)}  {v}" for k, v in rows]
    if d.groups:
        out.append("")
        out.append("Osmolality by group")
        total = sum(d.groups.values()) or 1.0
        gw = max(len(k) for k in d.groups)
        for k, v in sorted(d.groups.items(), key=lambda kv: -kv[1]):
            bar = "█" * int(round(30 * v / total))
            out.append(f"  {k.ljust(gw)}  {v:7.1f} mOsm/kg  {bar}")
    msgs = [f"  ! {w.message}" for w in d.warnings] + [f"  - {n}" for n in (notes or [])]
    if msgs:
        out.append("")
        out.append("Warnings and notes")
        out += msgs
    if d.cautions:
        out.append("")
        out.append("Cautions: " + ", ".join(c["component"] for c in d.cautions) +
                   " carry hazard notes (mediaplan catalog show ID; the prep sheet prints them in full)")
    return "\n".join(out)
