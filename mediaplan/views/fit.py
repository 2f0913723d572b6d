"""Plain-text rendering of a plasmolysis fit: the 50 % point, goodness of fit and the counts per row."""

from __future__ import annotations


def fit_text(fit) -> str:
    """A :class:`~mediaplan.tasks.plasmolysis.PlasmolysisFit` as plain text: water potential [MPa] at
    50 % plasmolysis with its 95 % interval, cell sap osmolality [mOsm/kg], the fitted curve, deviance and
    Pearson χ², then observed and fitted fractions per row. The rows have a fixed layout (ψ to three
    decimals, counts as ``plasmolysed / total``)."""
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
    lines.append(f"  curve                   {f.link}(p) = {f.intercept:.4g} + ({f.slope_per_mpa:.4g}) × ψ [MPa]")
    lines.append("")
    lines.append("Goodness of fit")
    lines.append(f"  deviance     {f.deviance:.4g} on {f.df} df (p = {f.deviance_p:.2g})")
    lines.append(f"  Pearson χ²   {f.pearson_chi2:.4g} on {f.df} df (p = {f.pearson_p:.2g}); heterogeneity "
                 f"{f.heterogeneity:.3g}{' — interval widened' if f.widened else ''}")
    lines.append("")
    lines.append("   ψ MPa  plasmolysed / total  observed  fitted")
    for r in f.rows:
        lines.append(f"  {r['water_potential_mpa']:6.3f}  {r['plasmolysed']:>11d} / {r['total']:<5d}  "
                     f"{100 * r['observed']:7.1f} %  {100 * r['fitted']:5.1f} %")
    for n in f.notes:
        lines.append(f"note: {n}")
    for w in f.warnings:
        lines.append(f"warning: {w}")
    return "\n".join(lines)
