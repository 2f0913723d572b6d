"""The order of addition, sterilisation and cautions of a preparation sheet (common practice).

Each step is one sentence of the sheet's content; the views print them as a numbered list in any
format.
"""

from __future__ import annotations

from mediaplan.tasks.prep.balance import format_mass, format_volume_ml
from mediaplan.tasks.prep.items import HEAT_LABILE, Weighing
from mediaplan.tasks.prep.stocks import Stock

#: fraction of the batch volume of water to start with, and to make up to before setting the pH
#: (common practice)
START_FRACTION = 0.7
#: stocks in the order they go in, with the words that say so
_STOCK_STEPS = (("macro", "Add the macro-salt stock"),
                ("calcium", "Add the calcium stock only after the macro salts are diluted and dissolved"),
                ("micro", "Add the micro-salt stock"),
                ("iron", "Add the iron-chelate stock"),
                ("vitamins", "Add the vitamin stock"))
_SALT_GROUPS = ("macro", "salt", "micro", "iron")

#: general cautions printed on every sheet (common practice)
AUTOCLAVE_CAUTION = ("Autoclave: liquids come out superheated and can boil over violently when moved or opened; "
                     "wait until pressure and temperature have fallen, never autoclave tightly sealed vessels, "
                     "and wear heat-resistant gloves and face protection.")
LOCAL_RULES = ("Always follow your institution's safety rules, the suppliers' safety data sheets and licensed "
               "practice; these notes do not replace them.")


def weigh_text(r: Weighing) -> str:
    """A row as the steps name it: ``name (formula) amount``, with its sub-stock when it has one."""
    if r.millilitres is not None:
        return f"{r.display} {format_volume_ml(r.millilitres)}"
    if r.substock is not None:
        return f"{r.display} {format_mass(r.grams)} (via stock: {r.substock.text()})"
    return f"{r.display} {format_mass(r.grams)}"


def _stock_text(s: Stock) -> str:
    return f"{s.label} stock {format_volume_ml(s.ml_per_batch)}"


def _has_calcium(r: Weighing) -> bool:
    return "Ca" in (r.formula or "")


# ---- the steps, one function per kind ----------------------------------------------------------------
def _water_first(batch_ml: float) -> str:
    return (f"Put about {format_volume_ml(batch_ml * START_FRACTION)} of purified water "
            f"(70 % of {format_volume_ml(batch_ml)}) in a vessel with a stirrer.")


def _stock_additions(stocks: list[Stock]) -> list[str]:
    by_key = {s.key: s for s in stocks}
    return [f"{text}: {format_volume_ml(by_key[key].ml_per_batch)} ({by_key[key].factor:g}×)."
            for key, text in _STOCK_STEPS if key in by_key]


def _salts(salts: list[Weighing]) -> list[str]:
    """Salts weighed directly, calcium last."""
    if not salts:
        return []
    calcium_last = (" Add calcium salts last, into the diluted solution."
                    if any(_has_calcium(r) for r in salts) and len(salts) > 1 else "")
    return ["Weigh and dissolve the salts one at a time, each fully before the next: " +
            ", ".join(weigh_text(r) for r in salts) + "." + calcium_last]


def _others(others: list[Weighing]) -> list[str]:
    return ["Add and dissolve: " + ", ".join(weigh_text(r) for r in others) + "."] if others else []


def _growth_regulators(stocks: list[Stock], direct: list[Weighing]) -> list[str]:
    pgr = [s for s in stocks if s.key.startswith("pgr:") and not s.filter_sterilise]
    pgr_direct = [r for r in direct if r.group == "growth_regulator"]
    if not (pgr or pgr_direct):
        return []
    return ["Add the growth regulators: " + ", ".join([_stock_text(s) for s in pgr] +
                                                      [weigh_text(r) for r in pgr_direct]) + "."]


def _ph_and_volume(batch_ml: float, ph: str) -> list[str]:
    vol = format_volume_ml(batch_ml)
    return [f"Make up to about 90 % of {vol} and adjust the pH to {ph} with 0.1–1 M KOH or NaOH, or HCl, "
            "stirring and adding dropwise.",
            f"Make up to {vol} with purified water."]


def _gel(rows: list[Weighing]) -> list[str]:
    gels = [r for r in rows if r.group == "gelling"]
    if not gels:
        return []
    return ["Add the gelling agent last: " + ", ".join(weigh_text(r) for r in gels) +
            "; heat while stirring until it has dissolved (the solution turns clear), then dispense."]


def _autoclave_and_late(rows: list[Weighing], stocks: list[Stock]) -> list[str]:
    out = ["Autoclave (121 °C; the time depends on the volume per vessel: follow your autoclave's validated "
           "cycle)."]
    late = [weigh_text(r) for r in rows if r.route == "late"] + [_stock_text(s) for s in stocks if s.filter_sterilise]
    if late:
        out.append("Let the medium cool to about 50 °C, then add the filter-sterilised (0.22 µm) solutions: " +
                   ", ".join(late) + "; swirl to mix before the gel sets.")
    return out


def preparation_steps(rows: list[Weighing], stocks: list[Stock], batch_l: float, ph: str) -> list[str]:
    """The order of addition for a batch of ``batch_l`` [L] set to pH ``ph`` (common practice)."""
    batch_ml = batch_l * 1000.0
    direct = [r for r in rows if r.route == "weigh" and r.group not in ("gelling", "ph")]
    salts = sorted((r for r in direct if r.group in _SALT_GROUPS),
                   key=lambda r: _has_calcium(r) and r.group in ("macro", "salt"))  # calcium last
    others = [r for r in direct if r not in salts and r.group != "growth_regulator"]
    return [_water_first(batch_ml), *_stock_additions(stocks), *_salts(salts), *_others(others),
            *_growth_regulators(stocks, direct), *_ph_and_volume(batch_ml, ph), *_gel(rows),
            *_autoclave_and_late(rows, stocks)]


def sterilisation(rows: list[Weighing], stocks: list[Stock]) -> list[str]:
    """Notes on sterilising this medium: autoclaving, heat-labile components, sucrose hydrolysis, pH."""
    out = ["Autoclave at 121 °C; the time needed grows with the volume in each vessel (common practice)."]
    for r in rows:
        if r.route == "late" or r.id in HEAT_LABILE:
            out.append(f"{r.display}: {HEAT_LABILE[r.id]}; filter-sterilise (0.22 µm) and add after autoclaving, "
                       "to medium cooled to about 50 °C.")
    if any(s.key == "vitamins" for s in stocks) or any(r.group == "vitamin" for r in rows):
        out.append("Vitamins: some protocols filter-sterilise them and add them after autoclaving.")
    if any(r.group == "carbon" for r in rows):
        out.append("Autoclaving hydrolyses part of the sucrose (about 5–20 %; more at low pH or with activated "
                   "charcoal), which raises the osmolality slightly (Hagen et al. 1991; Druart & De Wulf 1993).")
    out.append("The pH usually falls somewhat during autoclaving; set it before, and check a sample after.")
    return out


def cautions(rows: list[Weighing]) -> list[dict]:
    """The hazard note of every component that has one, then the general cautions: a list of
    ``{"component": id or None, "name": ..., "caution": ...}``."""
    out = [{"component": r.id, "name": r.display, "caution": r.hazard} for r in rows if r.hazard]
    out.append({"component": None, "name": "autoclave", "caution": AUTOCLAVE_CAUTION})
    out.append({"component": None, "name": "pH reagents",
                "caution": "KOH, NaOH and HCl solutions are corrosive: gloves and eye protection."})
    out.append({"component": None, "name": "general", "caution": LOCAL_RULES})
    return out


def ph_osmotic_note(base_mmol_per_l: float = 0.5) -> str:
    """The small osmolal effect of pH adjustment with ``base_mmol_per_l`` [mmol/L] of KOH or NaOH (at
    most 2 osmol per mol)."""
    return (f"pH adjustment adds little: a typical {base_mmol_per_l:g} mM KOH adds about "
            f"{2 * base_mmol_per_l:.1g} mOsm/kg (K⁺ and OH⁻, before the OH⁻ is neutralised; common practice).")


def gel_note() -> str:
    """Why a gelling agent changes neither the osmolality nor, noticeably, the water potential."""
    return ("Gelling agents add no osmolality; the matric potential of normal gels is about 0 (each +0.1 % "
            "agar-type gel lowers it by only about 1e-4 MPa; Spomer & Smith 1996, In Vitro Cell Dev Biol–Plant "
            "32:210).")
