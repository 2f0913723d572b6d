"""Plasmolysis series: design the levels, enter the counts, fit the curve and keep the cell reference.

mediaplan.tasks.plasmolysis designs (worker) and fits (worker); mediaplan.views.plot gives the curve's points,
drawn here with textual-plotext. The screen works on the plan's series record (a SeriesRecord: the design
as saved plus the counts entered per level) from the design to the fit; Keep stores it in the plan and,
after a fit, the [cells] reference that the main screen's tonicity uses (Session.keep_series).

Counts are never lost without a question: a new design over entered counts asks first, Esc with counts
that are not kept asks first, an empty counts field leaves the level as it was, and ``u`` undoes the last
design or counts entry. Below 120 columns the plot goes under the table.
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, ScrollableContainer, Vertical
from textual.message import Message
from textual.screen import ModalScreen, Screen
from textual.widgets import DataTable, Input, Label, Static
from textual.worker import Worker, WorkerState

from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.tasks.plasmolysis.counts import LevelRecord, SeriesRecord
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import (
    FieldInput,
    FieldMessage,
    ParsedValidator,
    TargetValidator,
    report,
    validated_value,
)
from mediaplan.tui.widgets.keybar import KeyBar
from mediaplan.tui.words import SERIES_LABELS, in_app_words

LEVEL_COLUMNS = (("level", "#"), ("psi", "ψ MPa"), ("osm", "mOsm/kg"), ("g", "g/batch"),
                 ("stock", "stock mL"), ("diluent", "water mL"), ("counts", "plasmolysed/total"))


#: the plot's place before the first fit, and while the plotting library is being imported
PLOT_EMPTY = "the fitted curve is drawn here (f fits the counts)"
PLOT_PREPARING = "the plot is being prepared…"
#: seconds after the screen is mounted that the plotting library's import begins (in a worker)
PLOT_IMPORT_AFTER = 0.4


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
        t.append("\ni ", style="bold")
        t.append(w)
    return t


def round_ticks(lo: float, hi: float, most: int = 5) -> list[float]:
    """Round tick values [same unit as lo, hi] inside lo..hi, at most ``most`` of them."""
    span = abs(hi - lo) or 1.0
    lo, hi = min(lo, hi), max(lo, hi)
    for step in (0.05, 0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 5.0):
        if span / step <= most - 1:
            break
    first = -(-lo // step) * step
    ticks, v = [], first
    while v <= hi + 1e-9:
        ticks.append(round(v, 6) + 0.0)
        v += step
    return ticks


def counted(series: SeriesRecord | None) -> int:
    """Levels with counts entered."""
    return sum(1 for lv in (series.levels or ()) if lv.counts) if series else 0


def _num(value: float | None, fmt: str) -> str:
    return fmt.format(value) if isinstance(value, (int, float)) else "–"


class CountsScreen(StyledOnce, ModalScreen[list[tuple[int, int]] | None]):
    """Dismisses with the counts typed, or None (cancelled, or Enter on an empty field: nothing changes)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="counts.cancel", tooltip="Keep the counts as they were")]

    def __init__(self, title: str, text: str) -> None:
        super().__init__()
        self.title_text = title
        self.text = text

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="counts-dialog") as box:
            box.border_title = "counts"
            yield Label(self.title_text, markup=False)
            yield FieldInput(self.text, id="counts-input", validators=[ParsedValidator(parse_counts, allow_empty=True)],
                             placeholder="plasmolysed/total per sample, e.g. 12/50, 10/48")
            yield FieldMessage("one plasmolysed/total per counted sample · Enter keeps them · Esc cancels",
                               id="counts-message")

    @on(Input.Changed)
    def _typed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)

    @on(Input.Submitted)
    def _done(self, event: Input.Submitted) -> None:
        result = event.input.validate(event.value)
        if self.query_one(FieldMessage).show(result):
            counts = parse_counts(event.value)
            self.dismiss(counts or None)  # empty: the level keeps what it had (Del on a level clears it)

    def action_cancel(self) -> None:
        self.dismiss(None)


class SeriesScreen(StyledOnce, Screen):
    """Full screen: design row, levels table with counts, fitted curve."""

    BINDINGS = [
        Binding("escape", "close", "Back", id="series.close", tooltip="Back to the recipe (asks if counts are not kept)"),
        Binding("d", "design", "Design", id="series.design", tooltip="Design the levels from the fields above"),
        Binding("f", "fit", "Fit", id="series.fit", tooltip="Fit the counts: 50 % point with its interval"),
        Binding("l", "toggle_link", "Logit/probit", id="series.link", tooltip="Switch the link function"),
        Binding("k", "keep", "Keep", id="series.keep", tooltip="Keep the series, counts and cell reference in the plan"),
        Binding("u", "undo", "Undo", id="series.undo", tooltip="Undo the last design or counts entry"),
        Binding("delete", "clear_level", "Clear level", id="series.clear", show=False,
                tooltip="Clear the counts of the level under the cursor (u brings them back)"),
    ]
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]
    AUTO_FOCUS = "#series-levels"

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
        self.kept: SeriesRecord | None = session.plan.series  # what the plan holds
        self.fit = None
        self.link = "logit"
        self._history: list[SeriesRecord | None] = []  # series before each design or counts entry

    class PlotReady(Message):
        """The plotting library is imported: the plot can take its place."""

    def compose(self) -> ComposeResult:
        from mediaplan.tui.warm import module_ready

        self.preset_width_class()
        s = self.series or SeriesRecord()
        yield Static(" plasmolysis series", id="topbar")
        with Grid(id="series-controls"):
            yield Label("first ψ", classes="field-label")
            yield FieldInput("-0.4 MPa", id="series-from", validators=[TargetValidator()], compact=True)
            yield Label("last ψ", classes="field-label")
            yield FieldInput("-1.8 MPa", id="series-to", validators=[TargetValidator()], compact=True)
            yield Label("levels", classes="field-label")
            yield FieldInput(str(len(s.levels or ()) or 8), id="series-steps", type="integer", compact=True)
            yield Label("osmoticum", classes="field-label")
            yield FieldInput(s.osmoticum if s.osmoticum is not None else "mannitol", id="series-osmoticum",
                             compact=True)
            yield Label("volume each", classes="field-label")
            yield FieldInput(s.volume if s.volume is not None else "50 mL", id="series-volume", compact=True)
        yield FieldMessage("d designs the levels · Enter on a level enters its counts · f fits · k keeps",
                           id="series-message")
        with ScrollableContainer(id="series-body"):
            yield DataTable(id="series-levels", cursor_type="row", zebra_stripes=True)
            with Vertical(id="series-right"):
                yield Static("", id="series-fit")
                # an empty plot takes as long to draw as a full one: a line of text holds its place until the
                # first fit; the plotting library is imported by a worker after the screen's first paint
                ready = module_ready("textual_plotext")
                yield Static(PLOT_EMPTY if ready else PLOT_PREPARING, id="series-plot",
                             classes="plot-empty" if ready else "plot-empty plot-waiting", markup=False)
        yield KeyBar()

    #: a fit's curve that arrived before the plot was in place (drawn once it is)
    _points_waiting: object | None = None

    def on_mount(self) -> None:
        table = self.query_one(DataTable)
        for key, label in LEVEL_COLUMNS:  # as Text: no markup to read (which would import rich's emoji table)
            table.add_column(Text(label), key=key)
        self._show_levels()
        if self.query("#series-plot.plot-waiting"):  # well after this screen's first paint, not competing with
            self.set_timer(PLOT_IMPORT_AFTER, self._import_plot)  # it (a curve comes after a design and counts)

    @work(thread=True, exit_on_error=False, group="plot")
    def _import_plot(self) -> None:
        import textual_plotext  # noqa: F401 - imported here so the screen's thread never waits for it

        self.post_message(self.PlotReady())

    @on(PlotReady)
    async def _plot_ready(self) -> None:
        for waiting in self.query("#series-plot.plot-waiting").results(Static):
            waiting.remove_class("plot-waiting")
            waiting.update(PLOT_EMPTY)
        if self._points_waiting is not None:
            points, self._points_waiting = self._points_waiting, None
            await self._plot(points)

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
        if counted(self.series):
            self._ask_redesign(lo.value, hi.value, steps)
            return
        msg.update("designing…")
        self.design(lo.value, hi.value, steps, self.query_one("#series-osmoticum", Input).value.strip(),
                    self.query_one("#series-volume", Input).value.strip())

    def _ask_redesign(self, lo: float, hi: float, steps: int) -> None:
        from mediaplan.tui.dialogs.files import ChoiceScreen

        n = counted(self.series)
        osmoticum = self.query_one("#series-osmoticum", Input).value.strip()
        volume = self.query_one("#series-volume", Input).value.strip()

        def done(answer: str | None) -> None:
            if answer == "redesign":
                self.query_one(FieldMessage).update("designing… (u brings the counted levels back)")
                self.design(lo, hi, steps, osmoticum, volume)

        self.app.push_screen(ChoiceScreen(
            "design new levels?", f"{n} level{'s' if n != 1 else ''} hold counts. New levels start without counts "
            "(u brings these back).", [("cancel", "Keep these levels"), ("redesign", "Design new levels")]), done)

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
        self._change(event.series)
        self.fit = None
        self.query_one("#series-fit", Static).update("")

    def _change(self, series: SeriesRecord | None) -> None:
        """Replace the series (undoable with u) and show its levels."""
        self._history.append(self.series)
        del self._history[:-50]
        self.series = series
        self._show_levels()
        self.refresh_bindings()

    # ---- counts ---------------------------------------------------------------------------
    @on(DataTable.RowSelected)
    def _edit_counts(self, event: DataTable.RowSelected) -> None:
        i = int(event.row_key.value)
        lv = self.series.levels[i]

        def done(counts) -> None:
            if counts is not None:
                self._change(self.series.with_counts(i, counts))
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
    async def _fitted(self, event: Fitted) -> None:
        if not report(self.query_one(FieldMessage), event.error,
                      "k keeps the series and sets the cells' reference for tonicity"):
            return
        self.fit = event.fit
        self.query_one("#series-fit", Static).update(fit_summary(event.fit))
        await self._plot(event.points)
        self.query_one("#series-plot").scroll_visible(animate=False)  # narrow: the curve comes into view

    @on(DataTable.RowHighlighted)
    def _row_in_view(self, event: DataTable.RowHighlighted) -> None:
        """Narrow: the levels come back into view when the cursor moves on them."""
        event.data_table.scroll_visible(animate=False)

    async def _plot(self, cp) -> None:
        """The fitted curve with its band, the observed proportions (o) and the 50 % point; round ticks.
        The first curve puts the plot in the place of the line of text that held it."""
        if self.query("#series-plot.plot-waiting"):
            self._points_waiting = cp
            return
        from textual_plotext import PlotextPlot

        for empty in list(self.query("#series-plot.plot-empty")):
            await empty.remove()
            await self.query_one("#series-right").mount(PlotextPlot(id="series-plot"))
        widget = self.query_one(PlotextPlot)
        plt = widget.plt
        plt.clear_data()
        plt.clear_figure()
        plt.plot(list(cp.x_mpa), list(cp.band_low), marker="braille", color="gray")
        plt.plot(list(cp.x_mpa), list(cp.band_high), marker="braille", color="gray")
        plt.plot(list(cp.x_mpa), list(cp.fitted), marker="braille", color="green")
        plt.scatter(list(cp.observed_x_mpa), list(cp.observed), marker="o", color="orange")  # proportions
        plt.vline(cp.water_potential_50_mpa)
        xs = list(cp.x_mpa) + list(cp.observed_x_mpa)
        ticks = round_ticks(min(xs), max(xs))
        plt.xticks(ticks, [f"{t:g}" for t in ticks])
        plt.yticks([0, 0.5, 1], ["0", "50%", "100%"])
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
    def action_keep(self) -> bool:
        """Keep the series (and a fit's cell reference) in the plan; returns whether it was kept."""
        if not self.series:
            return False
        try:
            self.session.keep_series(self.series, self.fit)
        except MediaplanError as exc:
            self.notify(in_app_words(exc, SERIES_LABELS), title="not kept", severity="error", markup=False)
            return False
        self.kept = self.series
        self.app.schedule_autosave()
        self.notify("series kept in the plan" + (" · cell reference set" if self.fit else ""), markup=False)
        return True

    @property
    def unkept_counts(self) -> bool:
        """Counts are on screen that the plan does not hold."""
        return bool(counted(self.series)) and self.series != self.kept

    def action_undo(self) -> None:
        if not self._history:
            self.notify("nothing to undo here", markup=False, timeout=2)
            return
        self.series = self._history.pop()
        self.fit = None
        self.query_one("#series-fit", Static).update("")
        self._show_levels()
        self.refresh_bindings()
        self.query_one(FieldMessage).update("undone · d designs · Enter on a level enters its counts · f fits")

    def action_clear_level(self) -> None:
        table = self.query_one(DataTable)
        if not self.series or not self.series.levels or not table.row_count:
            return
        i = table.cursor_row
        if self.series.levels[i].counts:
            self._change(self.series.with_counts(i, []))
            self.query_one(FieldMessage).update(f"counts of level {i + 1} cleared · u brings them back")
            table.move_cursor(row=i)

    def action_close(self) -> None:
        """Back to the recipe; counts that are not kept are not dropped without a question."""
        from mediaplan.tui.dialogs.files import ChoiceScreen

        if not self.unkept_counts:
            self.dismiss()
            return

        def done(answer: str | None) -> None:
            if answer == "keep":
                if self.action_keep():
                    self.dismiss()
            elif answer == "leave":
                self.dismiss()

        n = counted(self.series)
        self.app.push_screen(ChoiceScreen(
            "counts not kept", f"{n} level{'s' if n != 1 else ''} hold counts that the plan does not keep yet.",
            [("keep", "Keep in the plan"), ("leave", "Leave without them"), ("stay", "Stay here")]), done)
