"""Set a target (water potential, osmolality or tonicity) and apply the solver's osmoticum addition.

mediaplan.tasks.solve does the work in a worker; this screen shows its Solution and, on Apply, hands the
new recipe and the plan's [target] record back to the main screen. Errors name this dialog's fields.
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.message import Message
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static
from textual.worker import Worker, WorkerState

from mediaplan.files.plan_tables import TargetRecord, target_record_of
from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput, FieldMessage, ParsedValidator, validated_value
from mediaplan.tui.words import in_app_words


@dataclass(frozen=True)
class Applied:
    """What the main screen applies: the new recipe and the plan's [target] record."""

    recipe: Recipe
    target: TargetRecord


def solution_text(sol) -> Text:
    """The solver's answer in words and figures (formatting only)."""
    t = Text(sol.message + "\n")
    for a in sol.additions:
        verb = "hold" if a.held else "add"
        t.append(f"{verb} {a.name}: ", style="bold")
        t.append(f"{a.added_g_per_l:.4g} g/L ({a.added_g_per_batch:.4g} g per batch) → total {a.total_amount}\n")
    ev, start = sol.evaluation, sol.start
    t.append(f"osmolality {start.osmolality_mosmol_per_kg:.1f} → {ev.osmolality_mosmol_per_kg:.1f} mOsm/kg · "
             f"ψs {start.osmotic_potential_mpa:.3f} → {ev.osmotic_potential_mpa:.3f} MPa")
    red = sol.reduction
    if red is not None:
        if red.strength is not None:
            t.append(f"\nbase at strength × {red.strength:.3g} reaches it")
        t.append(f"\nor dilute: {red.medium_l_per_batch:.3g} L medium + {red.water_l_per_batch:.3g} L water per batch")
        for n in red.notes:
            t.append("\n" + n, style="dim")
    return t


def applicable(sol):
    """The recipe Apply would set, or None (nothing to change)."""
    if sol.status == "added":
        return sol.recipe
    if sol.status == "too_concentrated" and sol.reduction is not None and sol.reduction.strength_recipe is not None:
        return sol.reduction.strength_recipe
    return None


class TargetScreen(StyledOnce, ModalScreen[Applied | None]):
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="target.cancel", tooltip="Close without changing")]
    AUTO_FOCUS = "#target-value"

    @dataclass
    class Solved(Message):
        solution: object | None
        error: str | None = None

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session
        self.solution = None

    def compose(self) -> ComposeResult:
        self.preset_width_class()
        t = self.session.plan.target or TargetRecord()
        catalog = self.session.catalog
        with Vertical(classes="dialog", id="target-dialog") as box:
            box.border_title = "target and osmoticum"
            with Grid(id="target-grid"):
                yield Label("target", classes="field-label")
                yield FieldInput(t.value if t.value is not None else "-0.8 MPa", id="target-value",
                                 validators=[ParsedValidator(check_target)],
                                 placeholder="e.g. -0.8 MPa, 450 mOsm/kg or isotonic")
                yield Label("osmotica", classes="field-label")
                yield FieldInput(", ".join(t.osmotica if t.osmotica is not None else ("mannitol",)), id="target-osmotica",
                                 validators=[ParsedValidator(lambda s: osmotica_ids(catalog, s))],
                                 placeholder="one or two, e.g. mannitol")
            yield FieldMessage("Enter solves · one or two osmotica (two: added in equal moles)", id="target-message")
            yield Static("", id="target-result")
            with Horizontal(classes="buttons"):
                yield Button("Solve", variant="primary", id="target-solve")
                yield Button("Apply", id="target-apply", disabled=True)
                yield Button("Cancel", id="target-cancel")

    @on(Input.Changed)
    def _typed(self, event: Input.Changed) -> None:
        self.query_one(FieldMessage).show(event.validation_result)
        self.query_one("#target-apply", Button).disabled = True

    @on(Input.Submitted)
    @on(Button.Pressed, "#target-solve")
    def _solve(self) -> None:
        msg = self.query_one(FieldMessage)
        target = validated_value(self.query_one("#target-value", Input), msg)
        osm = validated_value(self.query_one("#target-osmotica", Input), msg) if target else None
        if target and osm:
            msg.update("solving…")
            self.run_solver(target, osmotica_ids(self.session.catalog, osm))

    @work(thread=True, exclusive=True, exit_on_error=False)
    def run_solver(self, target: str, osmotica: list[str]) -> None:
        from mediaplan.tasks.solve import solve_target

        s = self.session
        try:
            sol = solve_target(s.recipe, s.catalog, target, osmotica, ratio=[1.0] * len(osmotica) if len(osmotica) > 1
                               else None, cell_reference_mosmol=s.cell_reference_mosmol())
        except MediaplanError as exc:
            self.post_message(self.Solved(None, in_app_words(exc)))
            return
        self.post_message(self.Solved(sol))

    @on(Solved)
    def _solved(self, event: Solved) -> None:
        msg = self.query_one(FieldMessage)
        result = self.query_one("#target-result", Static)
        self.solution = event.solution
        if event.error:
            msg.show(None)
            result.update(Text("✗ " + event.error, style="bold"))
            self.query_one("#target-apply", Button).disabled = True
            return
        msg.update("Apply writes the result into the recipe (undo with u)")
        result.update(solution_text(event.solution))
        apply = self.query_one("#target-apply", Button)
        apply.disabled = applicable(event.solution) is None
        if not apply.disabled:
            apply.focus()  # Enter applies

    @on(Worker.StateChanged)
    def _failed(self, event: Worker.StateChanged) -> None:
        if event.state == WorkerState.ERROR:
            self.query_one("#target-result", Static).update(Text(f"✗ the solver failed: {event.worker.error}"))

    @on(Button.Pressed, "#target-apply")
    def _apply(self) -> None:
        recipe = applicable(self.solution) if self.solution is not None else None
        if recipe is not None:
            self.dismiss(Applied(recipe, target_record_of(self.solution)))

    @on(Button.Pressed, "#target-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)


def check_target(text: str) -> object:
    """The target as the solver reads it; raises MediaplanError in words. Only once the solver is imported:
    this runs on the screen's thread, which must not wait for the warm start's import of it (before then
    the text is taken as it is, and the solve, in its worker, says what is wrong with it)."""
    from mediaplan.tui.warm import module_ready

    if not module_ready("mediaplan.tasks.solve"):
        return text
    from mediaplan.tasks.solve import parse_solve_target

    return parse_solve_target(text)


def osmotica_ids(catalog, text: str) -> list[str]:
    """Component ids of one or two comma-separated osmotica; raises UnknownComponentError/AmountError."""
    from mediaplan.medium.errors import AmountError

    names = [n.strip() for n in text.split(",") if n.strip()]
    if not 1 <= len(names) <= 2:
        raise AmountError("give one or two osmotica", hint="e.g. mannitol  or  mannitol, sucrose")
    return [catalog.resolve(n).component.id for n in names]
