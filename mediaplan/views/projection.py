"""Plain-text rendering of a projection: the medium as made, after autoclaving and after N weeks."""

from __future__ import annotations

from mediaplan.views.safe_text import terminal
from mediaplan.views.table import RIGHT, Column, text_table


def projection_text(proj) -> str:
    """The stages of a :class:`~mediaplan.tasks.projection.Projection` side by side, as plain text."""
    from mediaplan.tasks.projection import GUIDANCE

    s = proj.settings
    loss = (f"water loss {100 * s.total_water_loss:.3g} % by week {s.weeks:g}" +
            (f" ({100 * s.water_loss_per_week:.3g} % per week)" if s.water_loss is None and s.water_loss_per_week
             else ""))
    evs = [st.evaluation for st in proj.stages]

    def sugar(ev, cid):
        c = ev.component(cid)
        return f"{c.molality_mmol_per_kg:.2f}" if c else "0"

    rows = [["osmolality, mOsm/kg"] + [f"{e.osmolality_mosmol_per_kg:.1f}" for e in evs],
            ["van't Hoff sum, mOsm/kg"] + [f"{e.osmolality_ideal_mosmol_per_kg:.1f}" for e in evs],
            ["water activity"] + [f"{e.water_activity:.5f}" for e in evs],
            ["osmotic potential, MPa"] + [f"{e.osmotic_potential_mpa:.4f}" for e in evs],
            ["freezing point, °C"] + [f"−{e.freezing_point_depression_k:.3f}" for e in evs]]
    rows += [[f"{cid}, mmol/kg"] + [sugar(e, cid) for e in evs] for cid in ("sucrose", "glucose", "fructose")]
    if evs[0].tonicity:
        rows.append(["tonicity"] + [e.tonicity["class"] for e in evs])
    columns = [Column()] + [Column(st.label, RIGHT) for st in proj.stages]
    out = [f"Projection: sucrose hydrolysed on autoclaving {100 * s.autoclave_hydrolysis:.3g} %; {loss}", ""]
    out += text_table(columns, rows)
    out += [f"  - {n}" for n in proj.notes]
    out.append(f"  guidance: {GUIDANCE}")
    return terminal("\n".join(out))
