"""Water-relations panel, notes (warnings and cautions) and the contribution chart by group.

Each widget formats an Evaluation it is given; none computes anything.
"""

from __future__ import annotations

import re
from typing import TYPE_CHECKING

from rich.console import Group
from rich.text import Text
from textual.content import Content
from textual.widgets import Static

from mediaplan.tui.widgets.recipe_table import fit_left, fit_right, share_bar

if TYPE_CHECKING:  # the engine is imported after the first paint (mediaplan.tui.warm)
    from mediaplan.medium.evaluate import Evaluation

#: what the panel and the chart say while the figures of a plan just opened are being computed
COMPUTING = "computing the figures…"

#: turgor of walled cells in a few words, for a narrow panel (the full sentence is in the evaluation)
_TURGOR_SHORT = {"isotonic": "turgor stays as it is", "hypotonic": "turgor rises (water enters)",
                 "hypertonic": "turgor falls; may plasmolyse"}
_TONICITY_WORD = {"hypotonic": "hypotonic ▼", "isotonic": "isotonic ●", "hypertonic": "hypertonic ▲"}


def num(x: float, digits: int) -> str:
    """Fixed decimals without a negative zero (pure water shows 0.000, not -0.000)."""
    return f"{round(x, digits) + 0.0:.{digits}f}"


def figures(ev: Evaluation) -> dict[str, str]:
    """The panel's figures as text (keys are stable: tests and the palette refer to them)."""
    out = {
        "osmolality": num(ev.osmolality_mosmol_per_kg, 1),
        "osmolality_ideal": num(ev.osmolality_ideal_mosmol_per_kg, 1),
        "water_activity": num(ev.water_activity, 5),
        "potential_mpa": num(ev.osmotic_potential_mpa, 3),
        "potential_bar": num(ev.osmotic_potential_bar, 2),
        "vant_hoff_mpa": num(ev.vant_hoff_potential_mpa, 3),
        "vant_hoff_bar": num(ev.vant_hoff_potential_mpa * 10, 2),
        "freezing_point": num(-ev.freezing_point_depression_k, 3),
    }
    if ev.tonicity:
        out["tonicity"] = ev.tonicity["class"]
        out["tonicity_ratio"] = f"{ev.tonicity['ratio']:.2f}"
    return out


def interval_words(budget, width: int = 80) -> str:
    """The 95 % half-widths of osmolality and potential, e.g. ``95 %: ±2.1 mOsm/kg ±0.006 MPa`` (shorter
    when narrow); empty without a budget."""
    if budget is None:
        return ""
    osm = num(budget.osmolality.half_width(), 1)
    psi = num(budget.osmotic_potential.half_width(), 3)
    for text in (f"95 % interval ±{osm} mOsm/kg ±{psi} MPa", f"95 %: ±{osm} mOsm/kg ±{psi} MPa",
                 f"±{osm} mOsm/kg ±{psi} MPa"):
        if len(text) <= width:
            return text
    return f"±{psi} MPa"


def vant_hoff_disagrees(ev: Evaluation) -> bool:
    """The van't Hoff column points the other way in osmolality and in potential (its potential counts moles
    per litre of medium, its osmolality per kg of water), so the panel says so."""
    d_osm = ev.osmolality_ideal_mosmol_per_kg - ev.osmolality_mosmol_per_kg
    d_psi = ev.vant_hoff_potential_mpa - ev.osmotic_potential_mpa
    return d_osm * d_psi > 0  # more ideal osmoles yet a less negative ideal potential (or the reverse)


def comparison_text(was: Evaluation | None, now: Evaluation) -> str:
    """The plan as it stands beside the candidate: osmolality, potential and tonicity, one line each."""
    b = figures(now)
    if was is None:
        return f"with this amount: osmolality {b['osmolality']} mOsm/kg · ψs {b['potential_mpa']} MPa"
    a = figures(was)
    rows = [("osmolality", a["osmolality"], b["osmolality"], "mOsm/kg"),
            ("ψs", a["potential_mpa"], b["potential_mpa"], "MPa")]
    if was.tonicity or now.tonicity:
        def tone(f):
            return f"{f['tonicity']} {f['tonicity_ratio']}×" if "tonicity" in f else "–"

        rows.append(("tonicity", tone(a), tone(b), ""))
    width = max(len(r[1]) for r in rows if r[3])  # the figures right-aligned, the words as they are
    lines = ["now → with this amount"]
    lines += [f"{label:<10} {x:>{width if unit else 0}} → {y} {unit}".rstrip() for label, x, y, unit in rows]
    return "\n".join(lines)


class RelationsPanel(Static):
    """Osmolality (non-ideal beside van't Hoff), a_w, potential in MPa and bar, freezing point, tonicity.

    The figures are laid out as fixed-width lines of :class:`Content` (no Rich tables): an edit
    re-renders a handful of short lines.
    """

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.evaluation: Evaluation | None = None
        self.budget = None
        self.error: str | None = None
        self.preview = False
        #: the figures are being computed (the app's first seconds): say so instead of "No figures"
        self.pending = False
        self._shape: tuple = ()
        #: display names of the base formulations (id -> name), set by the screen from the catalog
        self.base_names: dict[str, str] = {}

    def show(self, ev: Evaluation | None, error: str | None = None, *, preview: bool = False,
             budget=None, pending: bool = False) -> None:
        """Show an evaluation (``budget``: its uncertainty budget, shown as the 95 % half-widths);
        ``pending``: no evaluation yet, its figures are being computed."""
        self.evaluation, self.error, self.preview, self.budget = ev, error, preview, budget
        self.pending = pending and ev is None and error is None
        if preview != self.has_class("-preview"):
            self.set_class(preview, "-preview")
        if (error is not None) != self.has_class("-error"):
            self.set_class(error is not None, "-error")
        title = "water relations" + (" · preview" if preview else "")
        if self.border_title != title:
            self.border_title = title
        self._update()

    def on_resize(self) -> None:
        self._update()

    def _update(self) -> None:
        """Re-lay out the screen only when the panel's height can have changed (a layout is costly)."""
        width = self.content_size.width
        content = self._figures_content(width or 30)
        shape = (width, content.get_height(self.styles, width)) if width else None
        self.update(content, layout=shape is None or shape != self._shape)
        self._shape = shape

    def _strength_scope(self) -> str | None:
        """The strength scope of the recipe on screen (the session's; None outside the app)."""
        try:
            return self.app.session.recipe.strength_scope
        except Exception:  # noqa: BLE001 - a panel shown outside the app says no scope
            return None

    def _figures_content(self, width: int) -> Content:
        ev = self.evaluation
        if ev is None and not self.pending:
            return Content.styled("No figures: " + (self.error or "nothing to evaluate yet"), "bold")
        label_w = max(width - 21, 1)
        if ev is None:  # the figures' lines with a dot for each value, so the screen keeps its shape
            dim = "dim"
            return Content("\n").join(
                [Content.assemble(fit_left("", label_w), (fit_right("non-ideal", 10), dim),
                                  (fit_right("van't Hoff", 11), dim))]
                + [Content.assemble(fit_left(label, label_w), (fit_right("…", 10), dim), (fit_right("…", 11), dim))
                   for label in ("mOsm/kg", "ψs MPa", "ψs bar")]
                + [Content.assemble(fit_left(label, max(width - 11, 1)), (fit_right("…", 11), dim))
                   for label in ("water activity", "freezes at °C")]
                + [Content.styled(COMPUTING, "dim italic")])
        f = figures(ev)

        def pair(label, a, b, a_style="", b_style=""):
            return Content.assemble(fit_left(label, label_w), (fit_right(a, 10), a_style),
                                    (fit_right(b, 11), b_style))

        def single(label, value):
            return Content.assemble(fit_left(label, max(width - 11, 1)), fit_right(value, 11))

        lines = [pair("", "non-ideal", "van't Hoff", "dim", "dim"),
                 pair("mOsm/kg", f["osmolality"], f["osmolality_ideal"], "bold"),
                 pair("ψs MPa", f["potential_mpa"], f["vant_hoff_mpa"], "bold"),
                 pair("ψs bar", f["potential_bar"], f["vant_hoff_bar"]),
                 single("water activity", f["water_activity"]),
                 single("freezes at °C", f["freezing_point"])]
        if vant_hoff_disagrees(ev):
            lines.insert(4, Content.styled("van't Hoff ψs is per litre of medium",
                                           "dim italic"))
        spread = interval_words(self.budget, width)
        if spread:
            lines.append(Content.styled(spread, "dim"))
        if ev.tonicity:
            t = ev.tonicity
            ratio = f"  {f['tonicity_ratio']} × cells ({t['reference_mosmol_per_kg']:.0f} mOsm/kg)"
            word = _TONICITY_WORD.get(t["class"], t["class"])
            lines.append(Content.assemble(("tonicity ", "dim"), (word, "dim bold"), (ratio, "dim")))
            later = t.get("steady_state")
            if later and t.get("permeants") and later["class"] != t["class"]:
                # the first minutes differ from the lasting state once the permeating solutes have entered
                then = _TONICITY_WORD.get(later["class"], later["class"])
                lines.append(Content.assemble(("once inside ", "dim"), (", ".join(t["permeants"]), "dim"),
                                              (": ", "dim"), (then, "dim bold"), (f"  {later['ratio']:.2f} ×", "dim")))
            # walled cells: what happens to turgor (the lasting state), not "the cells swell"; short when narrow
            lasting = later or t
            words = lasting.get("turgor") or t["water_flow"]
            if width < 48:
                words = _TURGOR_SHORT.get(lasting["class"], words)
            lines.append(Content.styled(words, "italic"))
        else:
            lines.append(Content.styled("tonicity: no cells set (c)", "dim"))
        lines.append(Content.styled(f"{ev.temperature_c:.4g} °C · {ev.volume_l:g} L batch", "dim"))
        if ev.base:
            name = self.base_names.get(ev.base, ev.base)
            scope = scope_words(ev.strength, self._strength_scope())
            lines.append(Content.styled(fit_left(f"{strength_words(ev.strength)}{scope} {name}", width), "dim"))
        if self.error:
            lines.append(Content.styled(self.error, "bold"))
        return Content("\n").join(lines)


def first_sentence(text: str) -> str:
    head, dot, _ = text.partition(". ")
    return head + ("." if dot else "")


def caution_words(text: str, detail: bool) -> str:
    """A hazard caution: its first sentence in detail, else what the hazard is (up to the first colon or
    semicolon)."""
    sentence = first_sentence(text)
    if detail:
        return sentence
    return re.split(r"[:;]", sentence, maxsplit=1)[0].strip()


def strength_words(strength: float) -> str:
    """``1`` -> "full-strength", ``0.5`` -> "half-strength", ``0.75`` -> "0.75 ×"."""
    words = {1.0: "full-strength", 0.5: "half-strength", 0.25: "quarter-strength", 2.0: "double-strength"}
    return words.get(float(strength), f"{strength:g} ×")


#: what a strength scope scales, in the panel's words
_SCOPE_WORDS = {"salts": "salts", "macro": "macro salts", "all": "every line"}


def scope_words(strength: float, scope: str | None) -> str:
    """`` (salts)``, `` (every line)``: which base lines the strength scales ("" at full strength or when the
    scope is not known)."""
    if scope is None or float(strength) == 1.0:
        return ""
    return f" ({_SCOPE_WORDS.get(scope, scope)})"


def plural(n: int, word: str, words: str | None = None) -> str:
    """``1 caution``, ``2 cautions``."""
    return f"{n} {word if n == 1 else (words or word + 's')}"


#: notes on the figures in plain words, by the engine's warning code; ``{n}`` is the count the message starts
#: with, ``{who}`` the component it names. Codes not listed are shown as the engine words them.
PLAIN_NOTES: dict[str, str] = {
    "pitzer_default": "{n} pairs of ions in this medium have no measured data; a general estimate is used for "
                      "them, so the figures are a little less certain.",
    "ideal_fallback": "Some solutes have no published model and are counted as ideal.",
    "peg_mixture": "PEG with other solutes: the true water potential lies between the figure shown and a less "
                   "negative one (the solutes' effects simply added). Measure it.",
    "validity": "{who} is beyond the range its model was measured for; its figure is an extrapolation.",
    "reflection_unknown": "Tonicity counts some solutes as staying outside the cells; any that enter the cells "
                          "make the medium less hypertonic than shown.",
    "density_estimate": "The volume taken up by some large additions is estimated.",
    "temperature": "Some salt data are 25 °C values used at this temperature.",
}
#: codes of notes a technician can act on (shown first); the model's limits follow
ACTIONABLE = ("solubility", "precipitation", "unverified", "peg_mixture", "validity")

MARK_CAUTION = "!"  # same mark as a hazardous row in the recipe table
MARK_NOTE = "i"


def with_names(text: str, names: dict[str, str]) -> str:
    """Component ids in an engine message replaced by the components' names."""
    for cid, name in names.items():
        if "_" in cid or cid.isalpha():
            text = re.sub(rf"(?<![\w-]){re.escape(cid)}(?![\w-])", name, text)
    return text


def note_text(w, names: dict[str, str], detail: bool) -> str:
    """One note on the figures: plain words, or the engine's own words (with names for ids) in detail."""
    full = with_names(w.message, names)
    plain = PLAIN_NOTES.get(w.code)
    if detail or plain is None:
        return full
    count = re.match(r"\d+", w.message)
    who = names.get(w.component or "", w.component or "A solute")
    return plain.format(n=count.group(0) if count else "Some", who=who)


class NotesPanel(Static):
    """The plan's own notes, hazard cautions (marked !) and notes on the figures (marked i), in that order.

    The notes on the figures are in plain words, the actionable ones first; ``detail`` shows the models'
    own words instead.
    """

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.count = 0
        self.detail = False
        self.plan_notes = ""
        self.plain = ""  # the notes as plain text (what the panel shows, unwrapped)
        self._shown: tuple = (None,)

    def show(self, ev: Evaluation | None, plan_notes: str | None = None) -> None:
        if plan_notes is not None:
            self.plan_notes = plan_notes
        lines: list[Text] = []
        if self.plan_notes.strip():
            lines.append(Text("plan notes", style="bold underline"))
            lines.append(Text(self.plan_notes.strip(), style="italic"))
        n_w = len(ev.warnings) if ev else 0
        n_c = len(ev.cautions) if ev else 0
        if ev is not None:
            names = {c.id: c.name for c in ev.components}
            check = [w for w in ev.warnings if w.code in ACTIONABLE]
            limits = [w for w in ev.warnings if w.code not in ACTIONABLE]
            more = "" if self.detail else " (i: details)"
            lines += self._section(f"{MARK_NOTE} to check", check, names)
            if ev.cautions:
                lines.append(Text(f"{MARK_CAUTION} handling", style="bold underline"))
            for c in ev.cautions:
                t = Text()
                t.append(MARK_CAUTION, style="bold reverse")
                t.append(" ")
                t.append(names.get(c["component"], c["component"]), style="bold")
                t.append(": " + caution_words(c["caution"], self.detail))
                lines.append(t)
            lines += self._section(f"{MARK_NOTE} how sure the figures are" + more, limits, names)
        key = tuple(t.plain for t in lines)
        if key == self._shown:
            return
        self._shown = key
        self.count = n_w + n_c
        self.plain = "\n".join(key)
        title = f"{plural(n_c, 'caution')} · {plural(n_w, 'note')}" if n_w or n_c else "notes"
        if self.border_title != title:
            self.border_title = title
        self.update(Group(*lines) if lines else Text("no cautions, nothing to note about the figures",
                                                     style="dim"))

    def _section(self, heading: str, warnings: list, names: dict[str, str]) -> list[Text]:
        if not warnings:
            return []
        out = [Text(heading, style="bold underline")]
        for w in warnings:
            t = Text()
            t.append(MARK_NOTE, style="bold")
            t.append(" " + note_text(w, names, self.detail))
            out.append(t)
        return out

    def toggle_detail(self, ev: Evaluation | None) -> bool:
        """Switch between plain words and the models' own words; returns the new state."""
        self.detail = not self.detail
        self.show(ev)
        return self.detail


#: the chart's groups, by the catalog's component group: growth regulators, vitamins and amino acids each
#: have their own row (the evaluation's own groups put them together as organics)
APP_GROUPS: dict[str, str] = {
    "macro": "macro salts", "salt": "macro salts", "micro": "micro salts", "iron": "iron chelate",
    "carbon": "carbon source", "osmoticum": "osmoticum", "cryoprotectant": "osmoticum", "organic": "other organics",
    "vitamin": "vitamins", "amino_acid": "amino acids", "growth_regulator": "growth regulators",
    "buffer": "buffer & pH", "ph": "buffer & pH", "gelling": "gelling agent",
}


def app_groups(ev: Evaluation) -> dict[str, float]:
    """Osmolality by the chart's groups [mOsm/kg]: the components' shares summed per group."""
    out: dict[str, float] = {}
    for c in ev.components:
        label = APP_GROUPS.get(c.group, c.group.replace("_", " "))
        out[label] = out.get(label, 0.0) + c.osmolality_mosmol_per_kg
    return out


def chart_rows(groups: dict[str, float], small: float = 0.01) -> list[tuple[str, float]]:
    """Groups largest first; those under ``small`` of the total are summed into one "other" row."""
    total = sum(groups.values()) or 1.0
    rows = sorted(groups.items(), key=lambda kv: -kv[1])
    big = [(k, v) for k, v in rows if v >= small * total]
    rest = [(k, v) for k, v in rows if v < small * total]
    if len(rest) > 1:
        return big + [(f"other ({len(rest)})", sum(v for _, v in rest))]
    return big + rest


class GroupChart(Static):
    """Osmolality by group (macro salts, micro salts, carbon source, osmoticum, growth regulators...)."""

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.groups: dict[str, float] = {}

    pending = False

    def show(self, ev: Evaluation | None, *, pending: bool = False) -> None:
        """Show an evaluation's groups (``pending``: none yet, its figures are being computed)."""
        self.pending = pending and ev is None
        rows_before = len(chart_rows(self.groups)) if self.groups else 0
        self.groups = app_groups(ev) if ev else {}
        rows_now = len(chart_rows(self.groups)) if self.groups else 0
        self.update(self._chart_content(), layout=rows_now != rows_before)

    def on_resize(self) -> None:
        self.update(self._chart_content())

    def _chart_content(self) -> Content:
        if not self.groups:
            return Content.styled(COMPUTING if self.pending else "no solutes yet", "dim")
        total = sum(self.groups.values()) or 1.0
        rows = chart_rows(self.groups)
        label_w = max(len(k) for k, _ in rows)
        width = max(self.content_size.width, 30)
        bar_w = max(width - label_w - 18, 4)
        lines = []
        for k, v in rows:
            frac = v / total
            lines.append(Content.assemble(f"{k:<{label_w}} ", (share_bar(frac, bar_w), "bold"),
                                          f" {v:6.1f} {100 * frac:4.0f}%"))
        return Content("\n").join(lines)
