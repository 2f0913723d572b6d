"""Water-relations panel, notes (warnings and cautions) and the contribution chart by group.

Each widget formats an Evaluation it is given; none computes anything.
"""

from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.widgets import Static

from mediaplan.evaluate import Evaluation
from mediaplan.tui.widgets.recipe_table import share_bar

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
    """Osmolality (non-ideal beside van't Hoff), a_w, potential in MPa and bar, freezing point, tonicity."""

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
        # re-layout the screen only when the panel's height can have changed (a layout is costly)
        shape = (ev is None, bool(ev and ev.tonicity), error is not None, bool(ev and ev.base))
        self.update(self._figures_renderable(), layout=shape != self._shape)
        self._shape = shape

    def _figures_renderable(self):
        ev = self.evaluation
        if ev is None:
            return Text("No figures: " + (self.error or "nothing to evaluate yet"), style="bold")
        f = figures(ev)
        pair = Table.grid(padding=(0, 0), expand=True)
        pair.add_column(ratio=1, no_wrap=True)
        pair.add_column(justify="right", width=10)
        pair.add_column(justify="right", width=11)
        pair.add_row("", Text("non-ideal", style="dim"), Text("van't Hoff", style="dim"))
        pair.add_row("mOsm/kg", Text(f["osmolality"], style="bold"), f["osmolality_ideal"])
        pair.add_row("ψs MPa", Text(f["potential_mpa"], style="bold"), f["vant_hoff_mpa"])
        pair.add_row("ψs bar", f["potential_bar"], f["vant_hoff_bar"])
        single = Table.grid(padding=(0, 0), expand=True)
        single.add_column(ratio=1, no_wrap=True)
        single.add_column(justify="right", width=11)
        single.add_row("water activity", f["water_activity"])
        single.add_row("freezes at °C", f["freezing_point"])
        parts: list = [pair, single]
        if ev.tonicity:
            t = ev.tonicity
            line = Text("tonicity ", style="dim")
            line.append(_TONICITY_WORD.get(t["class"], t["class"]), style="bold")
            line.append(f"  {f['tonicity_ratio']} × cells ({t['reference_mosmol_per_kg']:.0f} mOsm/kg)")
            parts += [line, Text(t["water_flow"], style="italic")]
        else:
            parts.append(Text("tonicity: no cells set (c)", style="dim"))
        meta = Text(f"{ev.temperature_c:.1f} °C · {ev.volume_l:g} L", style="dim")
        if ev.base:
            meta.append(f" · {ev.base} × {ev.strength:g}")
        parts.append(meta)
        if self.error:
            parts.append(Text(self.error, style="bold"))
        return Group(*parts)


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
        self.update(self._chart_renderable(), layout=rows_now != rows_before)

    def on_resize(self) -> None:
        self.update(self._chart_renderable())

    def _chart_renderable(self):
        if not self.groups:
            return Text("no solutes yet", style="dim")
        total = sum(self.groups.values()) or 1.0
        label_w = max(len(k) for k, _ in chart_rows(self.groups))
        width = max(self.content_size.width, 30)
        bar_w = max(width - label_w - 18, 4)
        out = Text(no_wrap=True, overflow="ellipsis")
        for i, (k, v) in enumerate(chart_rows(self.groups)):
            if i:
                out.append("\n")
            frac = v / total
            out.append(f"{k:<{label_w}} ")
            out.append(share_bar(frac, bar_w), style="bold")
            out.append(f" {v:6.1f} {100 * frac:4.0f}%")
        return out
