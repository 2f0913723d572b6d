"""Two plans compared: settings, components and the water relations they give.

The plans are anything with ``recipe``, ``title`` and ``path`` (a plan file read by the caller); each is
evaluated with its own catalog, so a plan that carries embedded entries is compared as it would be made.
"""

from __future__ import annotations

#: results compared: key in Evaluation, label, unit, format
RESULTS = (
    ("osmolality_mosmol_per_kg", "osmolality", "mOsm/kg", "{:.1f}"),
    ("osmolality_ideal_mosmol_per_kg", "van't Hoff sum", "mOsm/kg", "{:.1f}"),
    ("water_activity", "water activity", "", "{:.5f}"),
    ("osmotic_potential_mpa", "osmotic potential", "MPa", "{:.4f}"),
    ("freezing_point_depression_k", "freezing-point depression", "K", "{:.3f}"),
)
SETTINGS = ("volume", "temperature", "base", "strength")


def plan_diff(plan_a, cat_a, plan_b, cat_b) -> dict:
    """Differences of two plans: settings, components (added/removed/changed, with their molarity
    [mmol/L] in each) and results (each value in A and B, the change, and the change as text in its unit);
    ``same_medium`` when nothing differs. JSON-ready (the ``mediaplan diff --json`` contract)."""
    from mediaplan.medium.evaluate import evaluate

    ra, rb = plan_a.recipe, plan_b.recipe
    settings = [{"field": f, "a": getattr(ra, f), "b": getattr(rb, f)} for f in SETTINGS
                if getattr(ra, f) != getattr(rb, f)]
    ea, eb = evaluate(ra, cat_a), evaluate(rb, cat_b)
    ca = {c.id: c for c in ea.components}
    cb = {c.id: c for c in eb.components}
    comps = []
    for cid in list(ca) + [k for k in cb if k not in ca]:
        x, y = ca.get(cid), cb.get(cid)
        if x is None or y is None:
            c = x or y
            comps.append({"id": cid, "name": c.name, "change": "added" if x is None else "removed",
                          "a": x.amount if x else None, "b": y.amount if y else None,
                          "a_mmol_per_l": x.molarity_mmol_per_l if x else 0.0,
                          "b_mmol_per_l": y.molarity_mmol_per_l if y else 0.0})
        elif x.amount != y.amount or abs(x.molarity_mmol_per_l - y.molarity_mmol_per_l) > 1e-9 * max(
                abs(x.molarity_mmol_per_l), 1e-12):
            comps.append({"id": cid, "name": x.name, "change": "changed", "a": x.amount, "b": y.amount,
                          "a_mmol_per_l": x.molarity_mmol_per_l, "b_mmol_per_l": y.molarity_mmol_per_l})
    results = []
    for key, label, unit, f in RESULTS:
        va, vb = getattr(ea, key), getattr(eb, key)
        results.append({"quantity": key, "label": label, "unit": unit, "a": va, "b": vb, "change": vb - va,
                        "text": f"{f.format(va)} → {f.format(vb)}" + (f" {unit}" if unit else "") +
                                f" ({'+' if vb - va >= 0 else ''}{f.format(vb - va)})"})
    return {"a": str(plan_a.path or ""), "b": str(plan_b.path or ""), "title_a": plan_a.title,
            "title_b": plan_b.title, "settings": settings, "components": comps, "results": results,
            "same_medium": not settings and not comps and all(r["change"] == 0 for r in results)}
