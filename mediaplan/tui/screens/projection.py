"""Projections: the medium as made, after autoclaving and after weeks of culture (mediaplan.tasks.projection).

The figures update as you type the fractions; Keep stores them in the plan's [projection] table.
"""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from mediaplan.medium.errors import MediaplanError
from mediaplan.tui.widgets.fields import FieldMessage, report

#: the inputs: key in ProjectionSettings, label, placeholder
FIELDS = (("autoclave_hydrolysis", "sucrose hydrolysed", "10 %"),
          ("water_loss_per_week", "water lost per week", "2 %"),
          ("weeks", "weeks of culture", "4"))


def stages_table(projection) -> Table:
    table = Table(box=None, padding=(0, 1), expand=True)
    table.add_column("stage")
    for head in ("mOsm/kg", "ψs MPa", "a_w", "tonicity"):
        table.add_column(head, justify="right")
    for st in projection.stages:
        ev = st.evaluation
        table.add_row(Text(st.label), f"{ev.osmolality_mosmol_per_kg:.1f}", f"{ev.osmotic_potential_mpa:.3f}",
                      f"{ev.water_activity:.5f}", ev.tonicity["class"] if ev.tonicity else "–")
    return table


class ProjectionScreen(ModalScreen[dict | None]):
    """Dismisses with the [projection] table to keep, or None."""

    BINDINGS = [Binding("escape", "cancel", "Close", id="projection.cancel", tooltip="Close without keeping")]

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session
        self.table: dict | None = None

    def compose(self) -> ComposeResult:
        current = self.session.plan.projection or {}
        with Vertical(classes="dialog", id="projection-dialog") as box:
            box.border_title = "as made · after autoclaving · after culture"
            with Grid(id="projection-grid"):
                for key, label, placeholder in FIELDS:
                    yield Label(label, classes="field-label")
                    value = current.get(key)
                    text = "" if value is None else (f"{100 * value:g} %" if key != "weeks" else f"{value:g}")
                    yield Input(text, id=f"proj-{key}", placeholder=placeholder)
            yield FieldMessage("fractions as 10 % or 0.1; empty hydrolysis = 10 %", id="proj-message")
            yield Static("", id="proj-stages")
            with Horizontal(classes="buttons"):
                yield Button("Keep in plan", variant="primary", id="proj-keep")
                yield Button("Close", id="proj-cancel")

    def on_mount(self) -> None:
        self.query_one(Input).focus()
        self._update()

    @on(Input.Changed)
    def _update(self) -> None:
        from mediaplan.tasks.projection import project, settings_from

        raw = {k: self.query_one(f"#proj-{k}", Input).value.strip() for k, _, _ in FIELDS}
        msg = self.query_one(FieldMessage)
        try:
            settings = settings_from({k: v for k, v in raw.items() if v})
            proj = project(self.session.recipe, self.session.catalog, settings,
                           cell_reference_mosmol=self.session.cell_reference_mosmol())
        except MediaplanError as exc:
            self.table = None
            report(msg, str(exc), "")
            self.query_one("#proj-keep", Button).disabled = True
            return
        self.table = settings.to_table()
        report(msg, None, " · ".join(proj.notes) or "fractions as 10 % or 0.1; empty hydrolysis = 10 %")
        self.query_one("#proj-keep", Button).disabled = False
        self.query_one("#proj-stages", Static).update(stages_table(proj))

    @on(Input.Submitted)
    @on(Button.Pressed, "#proj-keep")
    def _keep(self) -> None:
        if self.table is not None:
            self.dismiss(self.table)

    @on(Button.Pressed, "#proj-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
