"""Water-relations panel, notes (warnings and cautions) and the contribution chart by group.

Each widget formats an Evaluation it is given; none computes anything.
"""

from __future__ import annotations

from rich.console import Group
from rich.text import Text
from textual.content import Content
from textual.widgets import Static

from mediaplan.medium.evaluate import Evaluation
from mediaplan.tui.widgets.recipe_table import fit_left, fit_right, share_bar

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


class RelationsPanel(Static):
    """Osmolality (non-ideal beside van't Hoff), a_w, potential in MPa and bar, freezing point, tonicity.

    The figures are laid out as fixed-width lines of :class:`Content` (no Rich tables): an edit
    re-renders a handful of short lines.
    """

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.evaluation: Evaluation | None = None
        self.error: str | None = None
        self.preview = False
        self._shape: tuple = ()

    def show(self, ev: Evaluation | None, error: str | None = None, *, preview: bool = False) -> None:
        self.evaluation, self.error, self.preview = ev, error, preview
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

    def _figures_content(self, width: int) -> Content:
        ev = self.evaluation
        if ev is None:
            return Content.styled("No figures: " + (self.error or "nothing to evaluate yet"), "bold")
        f = figures(ev)
        label_w = max(width - 21, 1)

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
        if ev.tonicity:
            t = ev.tonicity
            ratio = f"  {f['tonicity_ratio']} × cells ({t['reference_mosmol_per_kg']:.0f} mOsm/kg)"
            word = _TONICITY_WORD.get(t["class"], t["class"])
            lines.append(Content.assemble(("tonicity ", "dim"), (word, "dim bold"), (ratio, "dim")))
            lines.append(Content.styled(t["water_flow"], "italic"))
        else:
            lines.append(Content.styled("tonicity: no cells set (c)", "dim"))
        meta = f"{ev.temperature_c:.1f} °C · {ev.volume_l:g} L"
        lines.append(Content.styled(meta + (f" · {ev.base} × {ev.strength:g}" if ev.base else ""), "dim"))
        if self.error:
            lines.append(Content.styled(self.error, "bold"))
        return Content("\n").join(lines)


def first_sentence(text: str) -> str:
    head, dot, _ = text.partition(". ")
    return head + ("." if dot else "")


class NotesPanel(Static):
    """Warnings from the models and cautions for hazardous components, in words."""

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.count = 0
        self._shown: tuple = (None,)

    def show(self, ev: Evaluation | None) -> None:
        lines: list[Text] = []
        if ev is not None:
            for w in ev.warnings:
                lines.append(Text("△ " + w.message))
            names = {c.id: c.name for c in ev.components}
            for c in ev.cautions:
                t = Text("⚠ ", style="bold")
                t.append(names.get(c["component"], c["component"]), style="bold")
                t.append(": " + first_sentence(c["caution"]))
                lines.append(t)
        key = tuple(t.plain for t in lines)
        if key == self._shown:
            return
        self._shown = key
        self.count = len(lines)
        n_w = len(ev.warnings) if ev else 0
        n_c = len(ev.cautions) if ev else 0
        title = f"notes · {n_w} warnings · {n_c} cautions"
        if self.border_title != title:
            self.border_title = title
        self.update(Group(*lines) if lines else Text("no warnings, no hazardous components", style="dim"))


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
    """Osmolality by group (macro salts, micro salts, carbon source, osmoticum, organics...)."""

    def __init__(self, **kw) -> None:
        super().__init__("", **kw)
        self.groups: dict[str, float] = {}

    def show(self, ev: Evaluation | None) -> None:
        rows_before = len(chart_rows(self.groups)) if self.groups else 0
        self.groups = dict(ev.groups) if ev else {}
        rows_now = len(chart_rows(self.groups)) if self.groups else 0
        self.update(self._chart_content(), layout=rows_now != rows_before)

    def on_resize(self) -> None:
        self.update(self._chart_content())

    def _chart_content(self) -> Content:
        if not self.groups:
            return Content.styled("no solutes yet", "dim")
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
