"""Plain-text rendering of a solved target: the additions and the re-evaluated medium."""

from __future__ import annotations

from mediaplan.views.report import fmt, interval_text
from mediaplan.views.safe_text import terminal
from mediaplan.views.table import RIGHT, Column, pairs_table, text_table


def solution_text(sol, *, budget=None, ranges=None) -> str:
    """A :class:`~mediaplan.tasks.solve.Solution` as plain text: target, start, additions (or the strength
    or dilution that reaches a target below the medium), and the result evaluated from scratch. With the
    result's :class:`~mediaplan.tasks.uncertainty.Budget` its figures carry 95 % intervals, and with the
    :func:`~mediaplan.tasks.uncertainty.solve_ranges` each addition its range."""
    ev = sol.evaluation
    out = [f"Target {sol.target.text}: {sol.target_osmolality_mosmol_per_kg:.1f} mOsm/kg"
           + (" effective toward the cells" if sol.matched == "effective_osmolality" else "")
           + f", {sol.target_potential_mpa:.4f} MPa at {ev.temperature_c:.1f} °C"]
    start = sol.start
    out.append(f"Start: {start.osmolality_mosmol_per_kg:.1f} mOsm/kg, {start.osmotic_potential_mpa:.4f} MPa")
    out.append("")
    if sol.status == "too_concentrated":
        return terminal("\n".join(out + _reduction_lines(sol)))
    if sol.status == "on_target":
        out.append("Already on target: nothing to add.")
    else:
        out += _additions_table(sol, ranges)
        if getattr(sol, "lowered", None):
            out.append(f"  lowered: {', '.join(sol.lowered)} was already in the medium; the amounts above are "
                       "taken out (negative), no dilution needed")
    out.append("")
    out.append("Result (re-evaluated from scratch)")
    out += _result_lines(sol, budget)
    if budget is not None:
        out.append("  ± : 95 % interval (model, preparation and temperature combined)")
        if ranges:
            out.append("  95 % range: the addition that reaches the target if the medium lies at either end of "
                       "the interval")
    if ev.warnings:
        out.append("")
        out += [f"  ! {w.message}" for w in ev.warnings]
    return terminal("\n".join(out))


def _reduction_lines(sol) -> list[str]:
    """What reaches a target less negative than the medium: a lower strength, or dilution."""
    red = sol.reduction
    out = ["The medium is already more concentrated than the target: no addition helps."]
    if red.strength is not None:
        out.append(f"  base {sol.recipe.base} at strength {red.strength:.4g} (other amounts unchanged): "
                   f"{red.strength_evaluation.osmotic_potential_mpa:.4f} MPa")
    out.append(f"  or dilute: {red.medium_l_per_batch:.4g} L medium + {red.water_l_per_batch:.4g} L water "
               f"({100 * red.dilution:.2f} % medium): {red.dilution_evaluation.osmotic_potential_mpa:.4f} MPa")
    out += [f"  - {n}" for n in red.notes]
    return out


def _range_text(r) -> str:
    lo = "?" if r.low_g_per_l is None else fmt(r.low_g_per_l)
    hi = "beyond reach" if r.high_g_per_l is None else fmt(r.high_g_per_l)
    return f"{lo} to {hi}"


def _additions_table(sol, ranges=None) -> list[str]:
    columns = [Column("osmoticum"), Column("add g/L", RIGHT), Column("add mol/L", RIGHT),
               Column(f"g per {fmt(sol.evaluation.volume_l)} L", RIGHT), Column("new amount", RIGHT)]
    by_id = {r.component: r for r in ranges or ()}
    if by_id:
        columns.append(Column("95 % range g/L", RIGHT))
    rows = []
    for a in sol.additions:
        row = [a.component + (" (held)" if a.held else ""), fmt(a.added_g_per_l), fmt(a.added_mol_per_l),
               fmt(a.added_g_per_batch), a.total_amount]
        if by_id:
            row.append(_range_text(by_id[a.component]) if a.component in by_id else "")
        rows.append(row)
    return text_table(columns, rows, indent="  ")


def _result_lines(sol, b=None) -> list[str]:
    ev = sol.evaluation

    def pm(text: str, iv, d: int) -> str:
        return text if b is None else interval_text(iv, d)

    rows = [("osmolality", f"{pm(f'{ev.osmolality_mosmol_per_kg:.1f}', b and b.osmolality, 1)} mOsm/kg "
                           f"(van't Hoff sum {ev.osmolality_ideal_mosmol_per_kg:.1f})")]
    if sol.matched == "effective_osmolality":
        rows.append(("effective", f"{ev.effective_osmolality_mosmol_per_kg:.1f} mOsm/kg toward the cells"))
    rows += [("water activity", pm(f"{ev.water_activity:.5f}", b and b.water_activity, 5)),
             ("osmotic potential", f"{pm(f'{ev.osmotic_potential_mpa:.4f}', b and b.osmotic_potential, 4)} MPa "
                                   f"(van't Hoff {ev.vant_hoff_potential_mpa:.4f})"),
             ("freezing point", f"−{pm(f'{ev.freezing_point_depression_k:.3f}', b and b.freezing_point_depression, 3)}"
                                " °C")]
    if ev.tonicity:
        t = ev.tonicity
        rows.append(("tonicity", f"{t['class']} toward cells of {t['reference_mosmol_per_kg']:.0f} mOsm/kg "
                                 f"({t['water_flow']})"))
    return pairs_table(rows, indent="  ")
