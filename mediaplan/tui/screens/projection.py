"""Projections: the medium as made, after autoclaving and after weeks of culture (mediaplan.tasks.projection).

The figures update as you type the fractions; Keep stores them in the plan's [projection] record.
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
from mediaplan.tasks.projection import ProjectionRecord
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput, FieldMessage, report
from mediaplan.tui.words import in_app_words

#: the inputs: key in ProjectionRecord, label, placeholder (it says what an empty field means, so it is
#: never read as a value typed in)
FIELDS = (("autoclave_hydrolysis", "sucrose hydrolysed", "empty: 10 % (typical)"),
          ("water_loss_per_week", "water lost per week", "empty: none · e.g. 2 %"),
          ("weeks", "weeks of culture", "empty: 4 weeks"))


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


def field_text(key: str, value: float | str | None) -> str:
    """What an input shows for a value of the plan's record: a percentage for fractions, text as written."""
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    return f"{100 * value:g} %" if key != "weeks" else f"{value:g}"


class ProjectionScreen(StyledOnce, ModalScreen[ProjectionRecord | None]):
    """Dismisses with the [projection] record to keep, or None."""

    BINDINGS = [Binding("escape", "cancel", "Close", id="projection.cancel", tooltip="Close without keeping")]

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session
        self.record: ProjectionRecord | None = None

    def compose(self) -> ComposeResult:
        current = self.session.plan.projection or ProjectionRecord()
        with Vertical(classes="dialog", id="projection-dialog") as box:
            box.border_title = "after autoclaving and weeks of culture"
            with Grid(id="projection-grid"):
                for key, label, placeholder in FIELDS:
                    yield Label(label, classes="field-label")
                    yield FieldInput(field_text(key, getattr(current, key)), id=f"proj-{key}", placeholder=placeholder)
            yield FieldMessage("fractions as 10 % or 0.1", id="proj-message")
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

        typed = {k: self.query_one(f"#proj-{k}", Input).value.strip() for k, _, _ in FIELDS}
        msg = self.query_one(FieldMessage)
        try:
            settings = settings_from(ProjectionRecord(**{k: v for k, v in typed.items() if v}))
            proj = project(self.session.recipe, self.session.catalog, settings,
                           cell_reference_mosmol=self.session.cell_reference_mosmol())
        except MediaplanError as exc:
            self.record = None
            report(msg, in_app_words(exc), "")
            self.query_one("#proj-keep", Button).disabled = True
            return
        self.record = ProjectionRecord.of(settings)
        report(msg, None, " · ".join(proj.notes) or "fractions as 10 % or 0.1")
        self.query_one("#proj-keep", Button).disabled = False
        self.query_one("#proj-stages", Static).update(stages_table(proj))

    @on(Input.Submitted)
    @on(Button.Pressed, "#proj-keep")
    def _keep(self) -> None:
        if self.record is not None:
            self.dismiss(self.record)

    @on(Button.Pressed, "#proj-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
