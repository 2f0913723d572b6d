"""Plain-text rendering of a plasmolysis fit: the 50 % point, goodness of fit and the counts per row."""

from __future__ import annotations

from mediaplan.views.safe_text import terminal
from mediaplan.views.table import RIGHT, Column, text_table

#: the counts per row: ψ [MPa], plasmolysed / total, observed and fitted fractions [%]; each column at least
#: as wide as the header words above it
ROW_COLUMNS = (Column(align=RIGHT, min_width=6), Column(align=RIGHT, min_width=11), Column(sep=" "),
               Column(min_width=5, sep=" "), Column(align=RIGHT, min_width=9), Column(align=RIGHT, min_width=7))
#: the header of those rows, one line as it has always been printed (its words sit over the numbers)
ROWS_HEADER = "   ψ MPa  plasmolysed / total  observed  fitted"


def fit_text(fit) -> str:
    """A :class:`~mediaplan.tasks.plasmolysis.PlasmolysisFit` as plain text: water potential [MPa] at
    50 % plasmolysis with its 95 % interval, cell sap osmolality [mOsm/kg], the fitted curve, deviance and
    Pearson χ², then observed and fitted fractions per row (ψ to three decimals, counts as
    ``plasmolysed / total``)."""
    f = fit
    lines = [f"Incipient plasmolysis — {f.link} fit of {f.n_levels} levels ({f.n_rows} rows, {f.cells} cells), "
             f"{f.source}"]
    ci = (f"95 % CI {f.ci95_mpa[0]:.4g} to {f.ci95_mpa[1]:.4g} MPa ({f.ci_method})" if f.ci95_mpa
          else "95 % CI unbounded")
    lines.append(f"  50 % plasmolysed at     {f.water_potential_50_mpa:.4g} MPa   {ci}")
    osm_ci = (f"   (CI {f.osmolality_ci95_mosmol_per_kg[0]:.4g} to {f.osmolality_ci95_mosmol_per_kg[1]:.4g})"
              if f.osmolality_ci95_mosmol_per_kg else "")
    lines.append(f"  cell sap                {f.osmotic_potential_mpa:.4g} MPa osmotic potential = "
                 f"{f.osmolality_50_mosmol_per_kg:.4g} mOsm/kg{osm_ci} at {f.temperature_c:g} °C")
    if f.ci95_with_levels_mpa:
        from mediaplan.tasks.uncertainty import Z95

        lo, hi = f.ci95_with_levels_mpa
        lines.append(f"  with the levels' error  95 % CI {lo:.4g} to {hi:.4g} MPa (levels ± {Z95 * f.level_sd_mpa:.2g} MPa "
                     "at the 50 % point, combined in quadrature)")
    lines.append(f"  curve                   {f.link}(p) = {f.intercept:.4g} + ({f.slope_per_mpa:.4g}) × ψ [MPa]")
    lines.append("")
    lines.append("Goodness of fit")
    lines.append(f"  deviance     {f.deviance:.4g} on {f.df} df (p = {f.deviance_p:.2g})")
    lines.append(f"  Pearson χ²   {f.pearson_chi2:.4g} on {f.df} df (p = {f.pearson_p:.2g}); heterogeneity "
                 f"{f.heterogeneity:.3g}{' — interval widened' if f.widened else ''}")
    lines.append("")
    lines.append(ROWS_HEADER)
    lines += text_table(ROW_COLUMNS, [[f"{r['water_potential_mpa']:.3f}", str(r["plasmolysed"]), "/",
                                       str(r["total"]), f"{100 * r['observed']:.1f} %", f"{100 * r['fitted']:.1f} %"]
                                      for r in f.rows], header=False, indent="  ")
    for n in f.notes:
        lines.append(f"note: {n}")
    for w in f.warnings:
        lines.append(f"warning: {w}")
    return terminal("\n".join(lines))
