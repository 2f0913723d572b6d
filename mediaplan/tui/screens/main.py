"""The main screen: recipe table, water-relations panel, notes and the contribution chart."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.content import Content
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Static

from mediaplan.medium.errors import MediaplanError
from mediaplan.tui.actions import bindings
from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.session import Outcome
from mediaplan.tui.widgets.keybar import KeyBar
from mediaplan.tui.widgets.recipe_table import RecipeTable, fit_left
from mediaplan.tui.widgets.relations import GroupChart, NotesPanel, RelationsPanel, comparison_text
from mediaplan.tui.words import in_app_words

if TYPE_CHECKING:  # the engine is imported after the first paint (mediaplan.tui.warm)
    from mediaplan.medium.evaluate import Evaluation


class MainScreen(StyledOnce, Screen):
    BINDINGS = bindings("screen")
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (110, "-wide")]

    @dataclass
    class Evaluated(Message):
        """Posted after every (re-)evaluation: what the panel now shows."""

        outcome: Outcome
        preview: bool = False

    def compose(self) -> ComposeResult:
        self.preset_width_class()
        yield Static("", id="topbar", markup=False)
        with Horizontal(id="body"):
            with Vertical(id="left"):
                yield RecipeTable(id="recipe")
                yield Static("", id="detail", markup=False)
                yield GroupChart(id="groups")
            with Vertical(id="right"):
                yield RelationsPanel(id="relations")
                with VerticalScroll(id="notes-scroll"):
                    yield NotesPanel(id="notes")
        yield KeyBar()

    _binding_state: tuple = ()
    #: the evaluation of the plan as it stands (a preview never replaces it)
    committed: Evaluation | None = None

    @property
    def session(self):
        return self.app.session

    def on_mount(self) -> None:
        self.query_one("#groups").border_title = "osmolality by group · mOsm/kg"
        self.query_one(RelationsPanel).base_names = {m.id: m.name for m in self.session.catalog.media.values()}
        self.query_one(RecipeTable).focus()
        self.refresh_all()

    def on_resize(self) -> None:
        self._topbar()

    # ---- showing the plan -----------------------------------------------------------------
    def engine_ready(self) -> bool:
        """Can this screen evaluate now without importing the engine? While the app's warm start is
        importing it (the first moments after the first paint), the screen shows the recipe and a
        "computing" state instead, and the app calls :meth:`refresh_all` again once the engine is in."""
        from mediaplan.tui.warm import engine_ready

        return engine_ready() or not getattr(self.app, "warming_engine", False)

    @property
    def pending(self) -> bool:
        """The figures of the plan on screen are still being computed (the engine is being imported)."""
        return self._pending

    _pending = False

    def refresh_all(self, outcome: Outcome | None = None) -> Outcome:
        """Evaluate the plan and re-render every figure; returns what was shown."""
        if outcome is None and not self.engine_ready():
            return self._show_pending()
        self._pending = False
        outcome = outcome or self.session.evaluate()
        ev = self.committed = outcome.evaluation
        self.query_one(RecipeTable).show(ev, self.session.removed_base_lines())
        self.query_one(RelationsPanel).show(ev, outcome.error, budget=outcome.budget)
        self.query_one(NotesPanel).show(ev, self.session.plan.notes)
        self.query_one(GroupChart).show(ev)
        self._after_show()
        self.post_message(self.Evaluated(outcome))
        return outcome

    def _show_pending(self) -> Outcome:
        """The recipe's lines with their amounts, and "computing" where the figures go (no engine yet)."""
        self._pending = True
        self.committed = None
        try:
            lines = self.session.recipe.lines(self.session.catalog)
        except MediaplanError:
            lines = []
        self.query_one(RecipeTable).show(None, self.session.removed_base_lines(), pending=lines)
        self.query_one(RelationsPanel).show(None, pending=True)
        self.query_one(NotesPanel).show(None, self.session.plan.notes)
        self.query_one(GroupChart).show(None, pending=True)
        self._after_show()
        return Outcome(None)

    def _after_show(self) -> None:
        self._topbar()
        self._detail()
        self._refresh_bindings_if_changed()
        self._relayout_if_reshaped()

    _shape: tuple | None = None

    def _relayout_if_reshaped(self) -> None:
        """When the medium gains or loses components (a base applied, a plan opened), lay the whole screen
        out once more after this refresh, so no panel keeps the size of the previous plan."""
        ev = self.committed
        shape = (tuple(c.id for c in ev.components) if ev else (), self.query_one(NotesPanel).plain.count("\n"))
        if shape != self._shape:
            first = self._shape is None  # the screen's first layout is still to come
            self._shape = shape
            if not first:
                self.call_after_refresh(self.refresh, layout=True)

    def _topbar(self) -> None:
        """Name, file and title; the unsaved mark comes before the title so a narrow screen never cuts it."""
        s = self.session
        mark = " ● unsaved " if s.dirty else ""
        room = max((self.size.width or 80) - 11 - len(mark) - 1, 8)
        content = Content.assemble((" mediaplan ", "reverse"), (mark, "reverse $warning" if mark else ""),
                                   fit_left(f" {s.label} · {s.plan.title}", room).rstrip()
                                   ).stylize_before("bold")
        if content.plain != self._topbar_shown:
            self._topbar_shown = content.plain
            self.query_one("#topbar", Static).update(content, layout=False)  # one line, fixed size

    _topbar_shown: str | None = None

    def _detail(self) -> None:
        """Re-lay out the screen only when the detail line's wrapped height changes."""
        detail = self.query_one("#detail", Static)
        content = self._detail_content()
        width = detail.content_size.width
        shown = (content.plain, width)
        if shown == self._detail_shown:
            return
        height = content.get_height(detail.styles, width) if width else None
        detail.update(content, layout=height is None or (width, height) != self._detail_shape)
        self._detail_shown, self._detail_shape = shown, (width, height)

    _detail_shown: tuple | None = None
    _detail_shape: tuple | None = None

    def _detail_content(self) -> Content:
        table = self.query_one(RecipeTable)
        cid = table.selected_id
        ev = self.committed
        if table.selected_is_removed:
            line = next(ln for ln in self.session.removed_base_lines() if ln.id == cid)
            return Content.assemble((line.name, "bold"), f" · removed from the base ({line.amount} there)",
                                    " · x restores it")
        c = ev.component(cid) if ev and cid else None
        if c is None and self._pending:
            return Content.styled("computing the figures…", "dim italic")
        if c is None:
            if ev and ev.components:
                return Content("")
            return Content.styled("Empty recipe: press a to add a component, "
                                  "b to start from a base formulation.", "dim")
        return Content.assemble(
            c.name, f" {c.formula}" if c.formula else "", f" · {amount_words(c)}",
            f" · {ORIGIN_WORDS[c.origin]}", f" (confidence {c.confidence})" if c.confidence else "",
            f" · {c.osmolality_mosmol_per_kg:.1f} mOsm/kg",
            " · caution: see notes" if c.hazard else "").stylize_before("bold")

    def preview(self, component_id: str, text: str | None) -> str:
        """Show the figures the recipe would have with this amount (None restores). Returns a summary."""
        if text is None:
            self.refresh_all()
            return ""
        if not self.engine_ready():
            return "computing the figures…"
        try:
            recipe = self.session.recipe.with_amount(component_id, text)
        except MediaplanError as exc:
            return in_app_words(exc)
        outcome = self.session.evaluate(recipe)
        ev = outcome.evaluation
        self.query_one(RelationsPanel).show(ev, outcome.error, preview=True, budget=outcome.budget)
        self.query_one(GroupChart).show(ev)
        self.post_message(self.Evaluated(outcome, preview=True))
        if ev is None:
            return outcome.error or ""
        return comparison_text(self.committed, ev)

    # ---- table events -------------------------------------------------------------------
    def _refresh_bindings_if_changed(self) -> None:
        """The footer is rebuilt only when what can be done has changed (it is costly to redraw)."""
        state = tuple(self.check_action(a, ()) for a in _STATEFUL)
        if state != self._binding_state:
            self._binding_state = state
            self.refresh_bindings()

    @on(RecipeTable.RowHighlighted)
    def _highlighted(self) -> None:
        self._detail()
        self._refresh_bindings_if_changed()

    @on(RecipeTable.RowSelected)
    def _row_selected(self) -> None:
        self.action_edit_amount()

    # ---- actions ------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action in ("prep_sheet", "projection"):
            ev = self.committed
            return True if ev and ev.components else None
        if action == "toggle_details":
            return True if self.committed and self.committed.warnings else None
        if action in ("edit_amount", "remove_component"):
            return True if self.query_one(RecipeTable).selected_id else None
        if action == "undo":
            return True if self.session.can_undo else None
        if action == "redo":
            return True if self.session.can_redo else None
        return True

    def _apply(self, change, *args) -> None:
        """Run one Session edit; a MediaplanError is shown in words, the recipe stays as it was."""
        try:
            change(*args)
        except MediaplanError as exc:
            self.notify(in_app_words(exc), title="not changed", severity="error", markup=False)
            return
        self.refresh_all()
        self.app.schedule_autosave()

    def action_add_component(self, query: str = "") -> None:
        from mediaplan.tui.dialogs.picker import PickerScreen

        present = {c.id for c in (self.committed or _NoEv).components}
        self.app.push_screen(PickerScreen(self.session.catalog, present, query), self._picked)

    def _picked(self, component_id: str | None) -> None:
        if component_id is None:
            return
        self.query_one(RecipeTable).select_id(component_id)
        amount = self.session.recipe.amount_of(component_id)
        ev = self.committed
        current = ev.component(component_id) if ev else None
        text = amount.text if amount and not amount.is_zero else (current.amount if current else "")
        self.edit(component_id, text)

    def action_edit_amount(self) -> None:
        table = self.query_one(RecipeTable)
        cid = table.selected_id
        if table.selected_is_removed:
            line = next(ln for ln in self.session.removed_base_lines() if ln.id == cid)
            self.edit(cid, line.amount)
            return
        ev = self.committed
        c = ev.component(cid) if ev and cid else None
        if c is not None:
            self.edit(cid, c.amount)

    def edit(self, component_id: str, text: str) -> None:
        from mediaplan.tui.dialogs.amount import AmountScreen

        comp = self.session.catalog.components[component_id]
        name = comp.name + (f"  {comp.formula}" if comp.formula else "")

        def done(value: str | None) -> None:
            if value is not None:
                self._apply(self.session.set_amount, component_id, value)
                self.query_one(RecipeTable).select_id(component_id)
            else:
                self.refresh_all()

        self.app.push_screen(AmountScreen(name, text, lambda t: self.preview(component_id, t)), done)

    def action_remove_component(self) -> None:
        """Remove the selected component; on a removed base line, restore it."""
        table = self.query_one(RecipeTable)
        cid = table.selected_id
        if not cid:
            return
        if table.selected_is_removed:
            self._apply(self.session.restore, cid)
            self.notify(f"{self.session.catalog.components[cid].name} restored from the base", markup=False)
        else:
            self._apply(self.session.remove, cid)
        table.select_id(cid)

    def action_toggle_details(self) -> None:
        """Notes on the figures: plain words, or the models' own words."""
        detail = self.query_one(NotesPanel).toggle_detail(self.committed)
        self.notify("notes on the figures: " + ("the models' own words" if detail else "plain words"),
                    markup=False, timeout=2)

    def action_choose_base(self) -> None:
        from mediaplan.tui.dialogs.base import BaseScreen

        r = self.session.recipe

        def done(result) -> None:
            if result is not None:
                base, strength, scope = result
                self._apply(lambda: self.session.set_recipe(r.with_settings(base=base, strength=strength,
                                                                            strength_scope=scope)))

        self.app.push_screen(BaseScreen(self.session.catalog, r.base, r.strength, r.strength_scope), done)

    def action_conditions(self) -> None:
        from mediaplan.tui.dialogs.conditions import Conditions, ConditionsScreen

        plan = self.session.plan
        reference = plan.cells.reference if plan.cells is not None else None
        current = Conditions(plan.title, plan.recipe.volume, plan.recipe.temperature,
                             reference[1] if reference else "", plan.notes, plan.recipe.storage_temperature or "")

        def done(c: Conditions | None) -> None:
            if c is not None:
                self._apply(lambda: self.session.set_conditions(c.title, c.volume, c.temperature, c.cells,
                                                                notes=c.notes, storage=c.storage))

        self.app.push_screen(ConditionsScreen(current), done)

    def action_set_target(self) -> None:
        from mediaplan.tui.screens.target import TargetScreen

        def done(applied) -> None:
            if applied is not None:
                self._apply(self.session.apply_target, applied.recipe, applied.target)

        self.app.push_screen(TargetScreen(self.session), done)

    def action_projection(self) -> None:
        from mediaplan.tui.screens.projection import ProjectionScreen

        def done(record) -> None:
            if record is not None:
                self._apply(self.session.set_projection, record)

        self.app.push_screen(ProjectionScreen(self.session), done)

    def action_compare_plans(self) -> None:
        from mediaplan.files.recent import recent_plans
        from mediaplan.tui.dialogs.files import PathScreen

        current = self.session.plan.path
        folder = current.parent if current else self.app.start_dir
        recent = [p for p in recent_plans() if current is None or p != current.resolve()]
        self.app.push_screen(PathScreen("compare with a plan", folder, must_exist=True, recent=recent),
                             self._compare_with)

    def _compare_with(self, path) -> None:
        from mediaplan.tui.screens.compare import CompareScreen, compare_with

        if path is None:
            return
        try:
            diff, notes = compare_with(self.session, path)
        except MediaplanError as exc:
            self.app.notify(in_app_words(exc), title="not compared", severity="error", markup=False, timeout=10)
            return
        for n in notes:
            self.app.notify(n, markup=False, timeout=8)
        self.app.push_screen(CompareScreen(diff, path.name))

    def action_plasmolysis(self) -> None:
        from mediaplan.tui.screens.plasmolysis import SeriesScreen

        self.app.push_screen(SeriesScreen(self.session), lambda _: self.refresh_all())

    def action_prep_sheet(self) -> None:
        from mediaplan.tui.screens.prep import PrepScreen

        self.app.push_screen(PrepScreen())

    def action_undo(self) -> None:
        if self.session.undo():
            self.refresh_all()
            self.app.schedule_autosave()

    def action_redo(self) -> None:
        if self.session.redo():
            self.refresh_all()
            self.app.schedule_autosave()


#: actions whose availability depends on the state of the plan
_STATEFUL = ("edit_amount", "remove_component", "undo", "redo", "prep_sheet", "projection", "toggle_details")

ORIGIN_WORDS = {"base": "from the base", "user": "added", "override": "replaces the base amount"}


def amount_words(c) -> str:
    """The row's amount as written, with its mass per litre when the amount is not one already."""
    if c.amount.endswith("g/L") or c.grams_per_litre <= 0:
        return c.amount
    return f"{c.amount} = {c.grams_per_litre:.4g} g/L"


class _NoEv:
    components: list = []
