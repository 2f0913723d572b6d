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


def interval_text(iv, decimals: int) -> str:
    """A value with its 95 % interval at a fixed number of decimals: ``-0.4405 ± 0.0085`` when the interval is
    symmetric, ``0.0120 (0.0000 to 0.0350)`` when a bound cut it (a quantity that cannot change sign)."""
    v, lo, hi = iv.value, iv.low, iv.high
    below, above = v - lo, hi - v
    half = (hi - lo) / 2.0
    if abs(below - above) <= 0.02 * max(half, 1e-300):
        return f"{v:.{decimals}f} ± {half:.{decimals}f}"
    return f"{v:.{decimals}f} ({lo:.{decimals}f} to {hi:.{decimals}f})"


def _pm(value_text: str, iv, decimals: int) -> str:
    """``value_text`` with ``± half-width`` (or the bounds) when an interval is given."""
    return value_text if iv is None else interval_text(iv, decimals)


def budget_rows(budget) -> list[list[str]]:
    """One row per source of a :class:`~mediaplan.tasks.uncertainty.Budget`, largest first: the 95 %
    half-width it alone gives the osmolality [mOsm/kg], the potential [MPa] and the osmometer reading
    [mOsm/kg], and how it was estimated."""
    from mediaplan.tasks.uncertainty import Z95

    rows = []
    for c in budget.contributions:
        rows.append([c.source, f"{Z95 * c.sd_osmolality_mosmol_per_kg:.2f}", f"{Z95 * c.sd_potential_mpa:.4f}",
                     f"{Z95 * c.sd_osmometer_mosmol_per_kg:.2f}", c.note])
    return rows


#: the columns of the breakdown by source
BUDGET_COLUMNS = (Column("source", max_width=48), Column("± mOsm/kg", RIGHT), Column("± MPa", RIGHT),
                  Column("± osmometer", RIGHT), Column("how", max_width=90))
#: the same headers for the exports
BUDGET_HEADER = ["source", "± mOsm/kg", "± MPa", "± osmometer mOsm/kg", "how"]


def budget_text(budget) -> list[str]:
    """The breakdown of a budget by source as table lines (95 % half-widths, each source alone)."""
    out = ["Uncertainty by source (95 % half-width of each alone; combined as independent)"]
    out += text_table(BUDGET_COLUMNS, budget_rows(budget), indent="  ")
    return out


def evaluation_text(ev: Evaluation, title: str | None = None, notes: list[str] | None = None, *,
                    budget=None, breakdown: bool = False) -> str:
    """An evaluation as plain text; with a :class:`~mediaplan.tasks.uncertainty.Budget` each figure carries
    its 95 % interval (``± half-width``), and ``breakdown`` adds the table of sources."""
    head = title or "Medium"
    base = f", base {ev.base} × {ev.strength:g}" if ev.base else ""
    out = [f"{head} — {fmt(ev.volume_l)} L at {ev.temperature_c:.1f} °C{base}", ""]
    out += text_table(COMPONENT_COLUMNS, component_rows(ev), rule="─")
    out.append("")
    out.append("  * replaces the base amount   + added to the base")
    out.append("")
    out.append("Water relations")
    d = ev
    b = budget
    osm = _pm(f"{d.osmolality_mosmol_per_kg:.1f}", b and b.osmolality, 1)
    meter = _pm(f"{d.osmometer_mosmol_per_kg:.1f}", b and b.osmometer, 1)
    freezing = ("−" + _pm(f"{d.freezing_point_depression_k:.3f}", b and b.freezing_point_depression, 3)
                if b is None or b.freezing_point_depression.low > 0 else
                f"−{d.freezing_point_depression_k:.3f} (−{b.freezing_point_depression.low:.3f} to "
                f"−{b.freezing_point_depression.high:.3f})")
    rows = [
        ("osmolality", f"{osm} mOsm/kg   (van't Hoff sum {d.osmolality_ideal_mosmol_per_kg:.1f};"
                       f" freezing-point osmometer would read {meter})"),
        ("water activity", _pm(f"{d.water_activity:.5f}", b and b.water_activity, 5)),
        ("osmotic potential", f"{_pm(f'{d.osmotic_potential_mpa:.4f}', b and b.osmotic_potential, 4)} MPa   "
                              f"({d.osmotic_potential_bar:.3f} bar; "
                              f"van't Hoff i·c·R·T gives {d.vant_hoff_potential_mpa:.4f} MPa)"),
        ("osmotic pressure", f"{d.osmotic_pressure_mpa:.4f} MPa"),
        ("freezing point", f"{freezing} °C"),
        ("ionic strength", f"{d.ionic_strength_mol_per_kg * 1000:.1f} mmol/kg   (electrolyte φ {d.electrolyte_phi:.4f})"),
        ("water per litre", f"{d.water_kg_per_l * 1000:.1f} g   (solution density {d.density_kg_per_l:.4f} kg/L)"),
    ]
    if d.tonicity:
        t = d.tonicity
        rows.append(("tonicity", f"{t['class']} toward cells of {t['reference_mosmol_per_kg']:.0f} mOsm/kg "
                                 f"(effective {t['effective_mosmol_per_kg']:.1f}; {t['water_flow']})"))
    out += pairs_table(rows, indent="  ")
    if b is not None:
        out.append("  ± : 95 % interval (model, preparation and temperature combined)")
    if d.groups:
        out.append("")
        out.append("Osmolality by group")
        out += _groups_table(d.groups)
    if b is not None and breakdown:
        out.append("")
        out += budget_text(b)
    msgs = [f"  ! {w.message}" for w in d.warnings] + [f"  - {n}" for n in (notes or [])]
    if msgs:
        out.append("")
        out.append("Warnings and notes")
        out += msgs
    if d.cautions:
        out.append("")
        names = {c.id: c.name for c in d.components}
        out.append("Cautions: " + ", ".join(names.get(c["component"], c["component"]) for c in d.cautions) +
                   " carry hazard notes (mediaplan catalog show NAME; the prep sheet prints them in full)")
    return terminal("\n".join(out))


def _groups_table(groups: dict[str, float]) -> list[str]:
    """Osmolality by group [mOsm/kg], largest first, with a bar of its share (30 characters = all)."""
    total = sum(groups.values()) or 1.0
    rows = [[k, f"{v:.1f} mOsm/kg", "█" * int(round(30 * v / total))]
            for k, v in sorted(groups.items(), key=lambda kv: -kv[1])]
    return text_table([Column(), Column(align=RIGHT, min_width=len("00000.0 mOsm/kg")), Column()], rows,
                      header=False, indent="  ")
