"""A plasmolysis series design as plain text (with how to make each level) and as a CSV counting sheet."""

from __future__ import annotations

import csv
import io

from mediaplan.views.safe_text import csv_cell, one_line, terminal
from mediaplan.views.table import RIGHT, Column, text_table


def design_text(design, intervals=None) -> str:
    """A :class:`~mediaplan.tasks.plasmolysis.SeriesDesign` as plain text: the levels (water potential
    [MPa], osmolality [mOsm/kg], molality [mol/kg], concentration [g/L], grams per level, and stock and
    diluent volumes [mL] with a stock), then how to make them. ``intervals``: each level's water potential
    as a 95 % :class:`~mediaplan.tasks.uncertainty.Interval` (None where not known), shown as ``± MPa``."""
    d = design
    vol = f"{d.volume_ml:g} mL"
    lines = [f"Plasmolysis series — {d.osmoticum_name} in {d.background}, {len(d.levels)} levels of {vol} "
             f"at {d.temperature_c:g} °C",
             f"  {d.spacing}; background alone: {d.background_potential_mpa + 0.0:.4g} MPa", ""]
    head = ["level", "ψ MPa", "mOsm/kg", "mol/kg", "g/L", f"weigh g / {vol}"]
    if intervals is not None:
        head.insert(2, "± MPa")
    if d.stock is not None:
        head += ["stock mL", "diluent mL"]
    rows = []
    for lv in d.levels:
        r = [str(lv.level), f"{lv.water_potential_mpa:.4g}", f"{lv.osmolality_mosmol_per_kg:.1f}",
             f"{lv.molality_mol_per_kg:.4f}", f"{lv.grams_per_litre:.3f}", f"{lv.grams:.4f}"]
        if intervals is not None:
            iv = intervals[lv.level - 1]
            r.insert(2, "" if iv is None else f"{iv.half_width():.4f}")
        if d.stock is not None:
            r += [f"{lv.stock_ml:.2f}", f"{lv.diluent_ml:.2f}"]
        rows.append(r)
    lines += text_table([Column(h, RIGHT) for h in head], rows, rule="─")
    lines.append("")
    lines.append(getattr(d, "preparation_text", "") or
                 f"By weight: dissolve the grams of {d.osmoticum} in the background and make up to {vol}.")
    per_bg = [lv.grams_per_litre_of_background for lv in d.levels if getattr(lv, "grams_per_litre_of_background", None)]
    if per_bg:
        lines.append("  grams per litre of background, by level: " + ", ".join(f"{g:.3f}" for g in per_bg))
    if d.stock is not None:
        s = d.stock
        lines.append(f"By dilution: stock {s.amount} {d.osmoticum} in the background ({s.grams_per_litre:.2f} g/L, "
                     f"{s.water_potential_mpa:.4g} MPa, density {s.density_kg_per_l:.4f} kg/L); mix the volumes "
                     f"shown with the background. Needs {s.total_ml:.1f} mL stock and {s.diluent_total_ml:.1f} mL "
                     "background in all.")
        lines.append("  Volumes come from the water content of stock and diluent (not C1V1 = C2V2); the mixture "
                     f"makes {vol} after volume change on mixing.")
        sat = [f"{s.saturation_percent:.0f} % of saturation at {d.temperature_c:g} °C"
               if getattr(s, "saturation_percent", None) is not None else None,
               f"{s.storage_saturation_percent:.0f} % at {s.storage_temperature_c:g} °C (storage)"
               if getattr(s, "storage_saturation_percent", None) is not None else None]
        if any(sat):
            lines.append("  Stock: " + ", ".join(x for x in sat if x) + ".")
    if intervals is not None:
        lines.append("± MPa: 95 % interval of each level as made by weight (model, weighing for the level's volume, "
                     "making up to volume, temperature)")
    for w in d.warnings:
        lines.append(f"warning: {w}")
    return terminal("\n".join(lines))


def design_csv(design, comments: list[str] | tuple[str, ...] = ()) -> str:
    """The levels as CSV; the empty plasmolysed/total columns make it a counting sheet for ``mediaplan fit``.

    comments : ``# key: value`` lines written above the header (how the series was made, read back by
        ``mediaplan fit``; :func:`mediaplan.files.counts.header_comments`), each made one line
    """
    buf = io.StringIO()
    for c in comments:
        buf.write(one_line(str(c)) + "\n")
    w = csv.writer(buf, lineterminator="\n")
    ox = csv_cell(design.osmoticum)
    head = ["level", "water_potential_mpa", "osmolality_mosmol_per_kg", f"{ox}_mol_per_kg", f"{ox}_g_per_l",
            f"grams_per_{design.volume_ml:g}_ml"]
    if design.stock is not None:
        head += ["stock_ml", "diluent_ml"]
    w.writerow(head + ["plasmolysed", "total"])
    for lv in design.levels:
        row = [lv.level, f"{lv.water_potential_mpa:.6g}", f"{lv.osmolality_mosmol_per_kg:.5g}",
               f"{lv.molality_mol_per_kg:.6g}", f"{lv.grams_per_litre:.6g}", f"{lv.grams:.5g}"]
        if design.stock is not None:
            row += [f"{lv.stock_ml:.4g}", f"{lv.diluent_ml:.4g}"]
        w.writerow(row + ["", ""])
    return buf.getvalue()
