"""An osmometer reading of a batch against the open plan (mediaplan.tasks.reading).

Type what the osmometer displayed: the verdict, the predicted reading with its 95 % interval and, when the
reading disagrees, the slips that would explain it, most likely first, update as you type. Record appends
the reading to the plan's [[readings]] (saved with the plan, as any other change).
"""

from __future__ import annotations

import datetime

from rich.table import Table
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Select, Static

from mediaplan.medium.errors import MediaplanError
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput, FieldMessage, report
from mediaplan.tui.words import in_app_words

INSTRUMENTS = (("freezing point", "freezing-point"), ("vapour pressure", "vapour-pressure"))
_HINT = "what the osmometer displayed, e.g. 182 mOsm/kg"


def slips_table(result) -> Table:
    table = Table(box=None, padding=(0, 1), expand=True)
    table.add_column("#", justify="right")
    table.add_column("would read", justify="right")
    table.add_column("what happened", ratio=1)
    for i, e in enumerate(result.explanations, start=1):
        table.add_row(str(i), f"{e.predicted_mosmol_per_kg:.1f}", Text(e.description))
    return table


def verdict_text(result) -> Text:
    lo, hi = result.interval_mosmol_per_kg
    style = "bold green" if result.verdict == "consistent" else "bold red"
    out = Text()
    out.append(result.verdict.upper(), style=style)
    out.append(f"  reading {result.reading_mosmol_per_kg:.1f} mOsm/kg, predicted "
               f"{result.predicted_mosmol_per_kg:.1f} (95 % {lo:.1f}–{hi:.1f}), deviation "
               f"{result.deviation_mosmol_per_kg:+.1f} mOsm/kg"
               + (f" ({result.deviation_percent:+.1f} %)" if result.deviation_percent == result.deviation_percent
                  else ""))
    if result.verdict != "consistent":
        out.append("\nno single slip explains it" if result.none_explains else "\nslips that would explain it:")
    return out


class ReadingScreen(StyledOnce, ModalScreen[object]):
    """Dismisses with the reading record kept in the plan, or None."""

    BINDINGS = [Binding("escape", "cancel", "Close", id="reading.cancel", tooltip="Close without recording")]
    # the screen's own layout (a four-column grid keeps it within 24 lines)
    DEFAULT_CSS = """
    ReadingScreen { align: center middle; }
    #reading-dialog { width: 110; overflow-y: auto; }
    #reading-grid { grid-size: 4; grid-columns: 12 1fr 12 1fr; grid-rows: 3; height: auto; }
    #reading-slips { height: auto; max-height: 10; overflow-y: auto; }
    """

    def __init__(self, session, *, today: datetime.date | None = None) -> None:
        super().__init__()
        self.session = session
        self.today = today or datetime.date.today()
        self.result = None

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="reading-dialog") as box:
            box.border_title = "osmometer reading of a batch"
            with Grid(id="reading-grid"):
                yield Label("reading", classes="field-label")
                yield FieldInput("", id="reading-value", placeholder="e.g. 182 mOsm/kg")
                yield Label("instrument", classes="field-label")
                yield Select(INSTRUMENTS, value="freezing-point", allow_blank=False, id="reading-instrument")
                yield Label("chamber", classes="field-label")
                yield FieldInput("", id="reading-chamber", placeholder="vapour pressure: empty = the plan's temperature")
                yield Label("operator", classes="field-label")
                yield FieldInput("", id="reading-operator", placeholder="optional")
                yield Label("note", classes="field-label")
                yield FieldInput("", id="reading-note", placeholder="optional: batch, vessel…")
            yield FieldMessage(_HINT, id="reading-message")
            yield Static("", id="reading-verdict")
            yield Static("", id="reading-slips")
            with Horizontal(classes="buttons"):
                yield Button("Record in plan", variant="primary", id="reading-record", disabled=True)
                yield Button("Close", id="reading-cancel")

    def on_mount(self) -> None:
        self.query_one("#reading-value", Input).focus()

    @on(Input.Changed)
    @on(Select.Changed)
    def _update(self) -> None:
        from mediaplan.files import osmometers
        from mediaplan.tasks.reading import check_reading

        value = self.query_one("#reading-value", Input).value.strip()
        kind = str(self.query_one("#reading-instrument", Select).value)
        chamber = self.query_one("#reading-chamber", Input).value.strip()
        msg = self.query_one(FieldMessage)
        self.result = None
        self.query_one("#reading-record", Button).disabled = True
        if not value:
            report(msg, None, _HINT)
            self._show(None)
            return
        try:
            inst, cal = osmometers.reading_setup(kind, chamber=chamber)
            result = check_reading(self.session.recipe, self.session.catalog, value, instrument=inst,
                                   calibration=cal, osmotica_named=osmometers.osmotica_named(self.session.plan))
        except MediaplanError as exc:
            report(msg, in_app_words(exc), "")
            self._show(None)
            return
        self.result = result
        report(msg, None, " · ".join(result.notes) or _HINT)
        self.query_one("#reading-record", Button).disabled = False
        self._show(result)

    def _show(self, result) -> None:
        self.query_one("#reading-verdict", Static).update(verdict_text(result) if result else "")
        self.query_one("#reading-slips", Static).update(slips_table(result) if result and result.explanations
                                                         else "")

    @on(Input.Submitted)
    @on(Button.Pressed, "#reading-record")
    def _record(self) -> None:
        from dataclasses import replace

        from mediaplan.files.plan_tables import ReadingRecord

        if self.result is None:
            return
        chamber = self.query_one("#reading-chamber", Input).value.strip()
        rec = ReadingRecord(value=self.query_one("#reading-value", Input).value.strip(),
                            instrument=self.result.instrument, date=self.today,
                            operator=self.query_one("#reading-operator", Input).value.strip() or None,
                            note=self.query_one("#reading-note", Input).value.strip() or None,
                            chamber_temperature=chamber or None)
        plan = self.session.plan
        self.session.change(replace(plan, readings=(*plan.readings, rec)))
        self.dismiss(rec)

    @on(Button.Pressed, "#reading-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
