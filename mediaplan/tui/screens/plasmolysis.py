"""Plasmolysis series: design the levels, enter the counts, fit the curve and keep the cell reference.

mediaplan.tasks.plasmolysis designs (worker) and fits (worker); mediaplan.views.plot gives the curve's points,
drawn here with textual-plotext. The screen works on the plan's series record (a SeriesRecord: the design
as saved plus the counts entered per level) from the design to the fit; Keep stores it in the plan and,
after a fit, the [cells] reference that the main screen's tonicity uses (Session.keep_series).
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.screen import ModalScreen, Screen
from textual.widgets import DataTable, Footer, Input, Label, Static
from textual.worker import Worker, WorkerState

from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.tasks.plasmolysis.counts import LevelRecord, SeriesRecord
from mediaplan.tui.widgets.fields import (
    FieldMessage,
    ParsedValidator,
    TargetValidator,
    report,
    validated_value,
)
from mediaplan.tui.words import SERIES_LABELS, in_app_words

LEVEL_COLUMNS = (("level", "#"), ("psi", "ψ MPa"), ("osm", "mOsm/kg"), ("g", "g/batch"),
                 ("stock", "stock mL"), ("diluent", "water mL"), ("counts", "plasmolysed/total"))


def parse_counts(text: str) -> list[tuple[int, int]]:
    """``"12/50, 10/48"`` -> [(12, 50), (10, 48)] (replicates); empty -> []. Raises AmountError."""
    out = []
    for part in text.replace(";", ",").split(","):
        part = part.strip()
        if not part:
            continue
        a, sep, b = part.partition("/")
        try:
            k, n = int(a), int(b)
        except ValueError:
            raise AmountError(f"cannot read {part!r}", hint="write plasmolysed/total, e.g. 12/50, 10/48") from None
        if not sep or n <= 0 or not 0 <= k <= n:
            raise AmountError(f"{part!r}: need 0 ≤ plasmolysed ≤ total and total > 0", hint="e.g. 12/50")
        out.append((k, n))
    return out


def counts_text(level: LevelRecord) -> str:
    """``"12/50, 10/48"``: the level's counts, one plasmolysed/total per sample."""
    return ", ".join(f"{k}/{n}" for k, n in level.counts)


def fit_summary(fit) -> Text:
    t = Text("incipient plasmolysis (50 %): ", style="bold")
    t.append(f"ψ {fit.water_potential_50_mpa:.3f} MPa")
    if fit.ci95_mpa:
        t.append(f"  (95 % {fit.ci95_mpa[0]:.3f} to {fit.ci95_mpa[1]:.3f}, {fit.ci_method})")
    t.append(f"\ncell sap ≈ {fit.osmolality_50_mosmol_per_kg:.0f} mOsm/kg · {fit.link} · {fit.n_levels} levels, "
             f"{fit.cells} cells")
    for w in fit.warnings:
        t.append("\n△ " + w)
    return t


def _num(value: float | None, fmt: str) -> str:
    return fmt.format(value) if isinstance(value, (int, float)) else "–"


class CountsScreen(ModalScreen[list[tuple[int, int]] | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="counts.cancel", tooltip="Keep the counts as they were")]

    def __init__(self, title: str, text: str) -> None:
        super().__init__()
        self.title_text = title
        self.text = text

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="counts-dialog") as box:
            box.border_title = "counts"
            yield Label(self.title_text, markup=False)
            yield Input(self.text, id="counts-input", validators=[ParsedValidator(parse_counts, allow_empty=True)],
                        placeholder="plasmolysed/total per sample, e.g. 12/50, 10/48")
            yield FieldMessage("one plasmolysed/total per counted sample · Enter keeps · empty clears",
                               id="counts-message")

    @on(Input.Changed)
    def _typed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)

    @on(Input.Submitted)
    def _done(self, event: Input.Submitted) -> None:
        result = event.input.validate(event.value)
        if self.query_one(FieldMessage).show(result):
            self.dismiss(parse_counts(event.value))

    def action_cancel(self) -> None:
        self.dismiss(None)


class SeriesScreen(Screen):
    """Full screen: design row, levels table with counts, fitted curve."""

    BINDINGS = [
        Binding("escape", "close", "Back", id="series.close", tooltip="Back to the recipe"),
        Binding("d", "design", "Design", id="series.design", tooltip="Design the levels from the fields above"),
        Binding("f", "fit", "Fit", id="series.fit", tooltip="Fit the counts: 50 % point with its interval"),
        Binding("l", "toggle_link", "Logit/probit", id="series.link", tooltip="Switch the link function"),
        Binding("k", "keep", "Keep", id="series.keep", tooltip="Keep the series, counts and cell reference in the plan"),
    ]

    @dataclass
    class Designed(Message):
        series: SeriesRecord | None
        error: str | None = None

    @dataclass
    class Fitted(Message):
        fit: object | None
        points: object | None = None
        error: str | None = None

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session
        self.series: SeriesRecord | None = session.plan.series
        self.fit = None
        self.link = "logit"

    def compose(self) -> ComposeResult:
        from textual_plotext import PlotextPlot

        s = self.series or SeriesRecord()
        yield Static(" plasmolysis series", id="topbar")
        with Horizontal(id="series-controls"):
            yield Label("ψ", classes="field-label")
            yield Input("-0.4 MPa", id="series-from", validators=[TargetValidator()])
            yield Label("→", classes="field-label")
            yield Input("-1.8 MPa", id="series-to", validators=[TargetValidator()])
            yield Label("n", classes="field-label")
            yield Input(str(len(s.levels or ()) or 8), id="series-steps", type="integer")
            yield Label("with", classes="field-label")
            yield Input(s.osmoticum if s.osmoticum is not None else "mannitol", id="series-osmoticum")
            yield Label("vol", classes="field-label")
            yield Input(s.volume if s.volume is not None else "50 mL", id="series-volume")
        yield FieldMessage("d designs the levels · Enter on a level enters its counts · f fits · k keeps",
                           id="series-message")
        with Horizontal(id="series-body"):
            yield DataTable(id="series-levels", cursor_type="row", zebra_stripes=True)
            with Vertical(id="series-right"):
                yield PlotextPlot(id="series-plot")
                yield Static("", id="series-fit")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        table = self.query_one(DataTable)
        for key, label in LEVEL_COLUMNS:
            table.add_column(label, key=key)
        self._show_levels()
        table.focus()

    def _show_levels(self) -> None:
        table = self.query_one(DataTable)
        table.clear()
        for i, lv in enumerate((self.series or SeriesRecord()).levels or ()):
            table.add_row(str(lv.level if lv.level is not None else i + 1), _num(lv.water_potential_mpa, "{:.3f}"),
                          _num(lv.osmolality_mosmol_per_kg, "{:.1f}"), _num(lv.grams, "{:.4g}"),
                          _num(lv.stock_ml, "{:.2f}"), _num(lv.diluent_ml, "{:.2f}"), Text(counts_text(lv)),
                          key=str(i))

    # ---- design ---------------------------------------------------------------------------
    @on(Input.Submitted, "#series-controls Input")
    def action_design(self) -> None:
        from mediaplan.medium.units import parse_target

        msg = self.query_one(FieldMessage)
        texts = {k: validated_value(self.query_one(f"#series-{k}", Input), msg) for k in ("from", "to")}
        if None in texts.values():
            return
        try:
            lo, hi = (parse_target(texts[k], field=f) for k, f in (("from", "series.first"), ("to", "series.last")))
            if lo.kind != "potential" or hi.kind != "potential":
                raise AmountError("give the levels as water potentials", hint='e.g. "-0.4 MPa" to "-1.8 MPa"')
            steps = int(self.query_one("#series-steps", Input).value or "0")
        except MediaplanError as exc:
            report(msg, in_app_words(exc, SERIES_LABELS), "")
            return
        except ValueError as exc:
            report(msg, str(exc), "")
            return
        msg.update("designing…")
        self.design(lo.value, hi.value, steps, self.query_one("#series-osmoticum", Input).value.strip(),
                    self.query_one("#series-volume", Input).value.strip())

    @work(thread=True, exclusive=True, exit_on_error=False, group="design")
    def design(self, lo: float, hi: float, steps: int, osmoticum: str, volume: str) -> None:
        from mediaplan.files.plan_tables import series_record_of
        from mediaplan.medium.recipe import Recipe
        from mediaplan.tasks.plasmolysis import design_series, potentials_between

        s = self.session
        try:
            background = Recipe(volume=volume, temperature=s.recipe.temperature)
            design = design_series(background, osmoticum, potentials_between(lo, hi, steps), catalog=s.catalog,
                                   stock="1 mol/kg",
                                   spacing=f"{steps} levels evenly spaced in water potential from "
                                           f"{lo / 1e6:g} MPa to {hi / 1e6:g} MPa")
        except MediaplanError as exc:
            self.post_message(self.Designed(None, in_app_words(exc, SERIES_LABELS)))
            return
        self.post_message(self.Designed(series_record_of(design)))

    @on(Designed)
    def _designed(self, event: Designed) -> None:
        if not report(self.query_one(FieldMessage), event.error,
                      "Enter on a level enters its counts (plasmolysed/total) · f fits · k keeps"):
            return
        self.series, self.fit = event.series, None
        self._show_levels()

    # ---- counts ---------------------------------------------------------------------------
    @on(DataTable.RowSelected)
    def _edit_counts(self, event: DataTable.RowSelected) -> None:
        i = int(event.row_key.value)
        lv = self.series.levels[i]

        def done(counts) -> None:
            if counts is not None:
                self.series = self.series.with_counts(i, counts)
                self._show_levels()
                self.query_one(DataTable).move_cursor(row=min(i + 1, len(self.series.levels) - 1))

        number = lv.level if lv.level is not None else i + 1
        self.app.push_screen(CountsScreen(f"level {number}: ψ {lv.water_potential_mpa} MPa", counts_text(lv)), done)

    # ---- fit ------------------------------------------------------------------------------
    def action_fit(self) -> None:
        if self.series:
            self.query_one(FieldMessage).update("fitting…")
            self.run_fit(self.series, self.link)

    @work(thread=True, exclusive=True, exit_on_error=False, group="fit")
    def run_fit(self, series: SeriesRecord, link: str) -> None:
        from mediaplan.tasks.plasmolysis import counts_from_series, fit_counts
        from mediaplan.views.plot import curve_points

        try:
            fit = fit_counts(counts_from_series(series, temperature_k=self.session.recipe.temperature_k), link)
            self.post_message(self.Fitted(fit, curve_points(fit)))
        except MediaplanError as exc:
            self.post_message(self.Fitted(None, error=in_app_words(exc, SERIES_LABELS)))

    @on(Fitted)
    def _fitted(self, event: Fitted) -> None:
        if not report(self.query_one(FieldMessage), event.error,
                      "k keeps the series and sets the cells' reference for tonicity"):
            return
        self.fit = event.fit
        self.query_one("#series-fit", Static).update(fit_summary(event.fit))
        self._plot(event.points)

    def _plot(self, cp) -> None:
        from textual_plotext import PlotextPlot

        widget = self.query_one(PlotextPlot)
        plt = widget.plt
        plt.clear_data()
        plt.clear_figure()
        plt.plot(list(cp.x_mpa), list(cp.band_low), marker="braille", color="gray")
        plt.plot(list(cp.x_mpa), list(cp.band_high), marker="braille", color="gray")
        plt.plot(list(cp.x_mpa), list(cp.fitted), marker="braille", color="green")
        plt.scatter(list(cp.observed_x_mpa), list(cp.observed), marker="o", color="orange")  # proportions
        plt.vline(cp.water_potential_50_mpa)
        plt.xlabel("ψ MPa")
        plt.ylabel("plasmolysed")
        plt.ylim(0, 1)
        widget.refresh()

    def action_toggle_link(self) -> None:
        self.link = "probit" if self.link == "logit" else "logit"
        self.notify(f"link: {self.link}", markup=False)
        if self.fit is not None:
            self.action_fit()

    @on(Worker.StateChanged)
    def _failed(self, event: Worker.StateChanged) -> None:
        if event.state == WorkerState.ERROR:
            self.query_one(FieldMessage).update(f"✗ failed: {event.worker.error}")

    # ---- keep and close -------------------------------------------------------------------
    def action_keep(self) -> None:
        if not self.series:
            return
        try:
            self.session.keep_series(self.series, self.fit)
        except MediaplanError as exc:
            self.notify(in_app_words(exc, SERIES_LABELS), title="not kept", severity="error", markup=False)
            return
        self.app.schedule_autosave()
        self.notify("series kept in the plan" + (" · cell reference set" if self.fit else ""), markup=False)

    def action_close(self) -> None:
        self.dismiss()
