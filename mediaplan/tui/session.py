"""The terminal app's session: the open plan, its history and its recovery file.

Plain Python (no Textual): the screens read and change the plan only through :class:`Session`,
which keeps the Plan the single source of truth and asks the domain layer for every figure. The plan's
optional tables are typed records (:mod:`mediaplan.files.plan_tables`); the edits below replace them.
"""

from __future__ import annotations

import datetime
import hashlib
import json
import os
from dataclasses import dataclass, replace
from pathlib import Path
from typing import TYPE_CHECKING

from mediaplan.files import planfile
from mediaplan.files.planfile import Plan
from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import MediaplanError
from mediaplan.medium.recipe import Recipe
from mediaplan.tui.words import in_app_words

if TYPE_CHECKING:  # the engine is imported on first use, after the first paint (mediaplan.tui.warm)
    from mediaplan.files.plan_tables import TargetRecord
    from mediaplan.medium.evaluate import Evaluation
    from mediaplan.tasks.plasmolysis.counts import SeriesRecord
    from mediaplan.tasks.projection import ProjectionRecord

#: plan-file table that marked a recovery file in earlier versions (stripped again when it is restored)
RECOVERY_TABLE = "recovery"
#: the first line of a recovery file: this prefix, then where the plan came from as one line of JSON. A
#: comment, so the rest of the file is exactly the plan as the plan writer writes it (a strict reader takes it)
RECOVERY_HEADER = "# mediaplan recovery: "
#: recovery files larger than this are not read [bytes]
RECOVERY_MAX_BYTES = 8_000_000


@dataclass(frozen=True)
class RemovedLine:
    """A line of the base formulation that the plan removed (its amount set to zero); restorable."""

    id: str
    name: str
    amount: str  # what the base gives at the plan's strength
    after: str | None  # the base line it follows in the table (None: it comes first)


@dataclass(frozen=True)
class Outcome:
    """The result of evaluating the current recipe: an Evaluation, or the reason there is none."""

    evaluation: Evaluation | None
    error: str | None = None
    #: the 95 % uncertainty budget of the figures (None when it could not be made)
    budget: object | None = None


def _budget_of(recipe: Recipe, catalog: Catalog, ev: Evaluation):
    """The uncertainty budget of an evaluation (a few ms), or None: the figures never wait on it."""
    from mediaplan.tasks.uncertainty import budget

    try:
        return budget(recipe, catalog, evaluation=ev)
    except (MediaplanError, ValueError, ArithmeticError):
        return None


class Session:
    """One plan being edited: undo/redo of immutable recipes, dirty flag, evaluation, recovery."""

    def __init__(self, plan: Plan, catalog: Catalog, *, dirty: bool = False, recovery: Path | None = None) -> None:
        self.plan = plan
        self.catalog = catalog
        self.dirty = dirty
        self._undo: list[Plan] = []
        self._redo: list[Plan] = []
        stamp = datetime.datetime.now().strftime("%Y%m%d-%H%M%S")
        self.recovery_path = recovery or _recovery_name(plan.path, stamp)

    # ---- constructors ---------------------------------------------------------------------
    @classmethod
    def new(cls, catalog: Catalog) -> Session:
        return cls(Plan(), catalog)

    @classmethod
    def open(cls, path: str | Path, catalog: Catalog) -> Session:
        return cls(planfile.read(path, catalog=catalog), catalog)

    # ---- what the screens show ------------------------------------------------------------
    @property
    def recipe(self) -> Recipe:
        return self.plan.recipe

    @property
    def label(self) -> str:
        return self.plan.path.name if self.plan.path else "new plan"

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    def cell_reference_mosmol(self, recipe: Recipe | None = None) -> float | None:
        """The plan's cell reference [mOsm/kg] (from [cells] osmolality or potential), or None."""
        from mediaplan.tasks.cells import cell_reference

        return cell_reference(None, self.plan.cells, (recipe or self.recipe).temperature_k)

    def evaluate(self, recipe: Recipe | None = None) -> Outcome:
        """Evaluate the plan's recipe (or a tentative one); never raises."""
        from mediaplan.medium.evaluate import evaluate
        from mediaplan.tasks.cells import cell_tolerance

        recipe = recipe or self.recipe
        try:
            tol = cell_tolerance(None, self.plan.cells)
            ev = evaluate(recipe, self.catalog, cell_reference_mosmol=self.cell_reference_mosmol(recipe),
                          isotonic_tolerance=tol)
        except MediaplanError as exc:
            return Outcome(None, in_app_words(exc))
        except (ValueError, ArithmeticError) as exc:  # a model failing on odd input must not end the session
            return Outcome(None, f"the models could not evaluate this medium ({exc})")
        return Outcome(ev, budget=_budget_of(recipe, self.catalog, ev))

    # ---- edits --------------------------------------------------------------------------
    def change(self, plan: Plan) -> None:
        """Replace the plan by an edited copy (undoable)."""
        if plan == self.plan:
            return
        self._undo.append(self.plan)
        del self._undo[:-200]
        self._redo.clear()
        self.plan = plan
        self.dirty = True

    def set_recipe(self, recipe: Recipe) -> None:
        self.change(self.plan.with_recipe(recipe))

    def set_amount(self, component_id: str, text: str) -> None:
        """Set one component's amount (text with a unit); raises AmountError for bad text."""
        self.set_recipe(self.recipe.with_amount(component_id, text))

    def remove(self, component_id: str) -> None:
        """Remove a component: drop a user line, or set a base line to zero."""
        base_ids = set()
        if self.recipe.base:
            base_ids = {ln.component for ln in self.catalog.medium(self.recipe.base).lines}
        if component_id in base_ids:
            self.set_recipe(self.recipe.with_amount(component_id, "0 mg/L"))
        else:
            self.set_recipe(self.recipe.without(component_id))

    def removed_base_lines(self) -> list[RemovedLine]:
        """Base lines the plan sets to zero, in the base's order, with the line each follows."""
        recipe = self.recipe
        if not recipe.base:
            return []
        try:
            lines = self.catalog.medium(recipe.base).lines
        except MediaplanError:
            return []
        out, previous = [], None
        for ml in lines:
            own = recipe.amount_of(ml.component)
            if own is not None and own.is_zero:
                amount = ml.amount if recipe.strength == 1 else ml.amount.scaled(recipe.strength)
                comp = self.catalog.components[ml.component]
                out.append(RemovedLine(ml.component, comp.name, amount.text, previous))
            else:
                previous = ml.component
        return out

    def restore(self, component_id: str) -> None:
        """Give a removed base line back its base amount (the plan's own amount for it goes)."""
        self.set_recipe(self.recipe.without(component_id))

    def set_conditions(self, title: str, volume: str, temperature: str, cells: str, *,
                       notes: str | None = None, storage: str | None = None) -> None:
        """Title, batch volume, temperature and the cells' reference (``""`` removes it; other [cells]
        fields such as the tolerance are kept); the plan's notes and storage temperature (``""``: not
        stated) when given. Raises AmountError for bad text."""
        from mediaplan.tasks.cells import CellReference

        plan = self.plan
        reference = (plan.cells or CellReference()).with_reference(cells)
        settings = {"volume": volume, "temperature": temperature}
        if storage is not None:
            settings["storage_temperature"] = storage or None
        recipe = plan.recipe.with_settings(**settings)
        self.change(replace(plan, title=title, recipe=recipe, cells=None if reference.empty else reference,
                            notes=plan.notes if notes is None else notes))

    def apply_target(self, recipe: Recipe, target: TargetRecord) -> None:
        """The recipe a solve reached, and the target it was asked for (the plan's [target])."""
        self.change(replace(self.plan, recipe=recipe, target=target))

    def set_projection(self, projection: ProjectionRecord) -> None:
        """Keep projection settings (the plan's [projection])."""
        self.change(replace(self.plan, projection=projection))

    def keep_series(self, series: SeriesRecord, fit=None, *, today: datetime.date | None = None) -> None:
        """Keep a plasmolysis series with its counts (the plan's [series]).

        With a fit (a PlasmolysisFit), its cell sap osmolality becomes the cells' reference for tonicity:
        one reference, so a potential kept beside an older reference goes; the tolerance and other
        [cells] fields stay.
        """
        from mediaplan.files.plan_tables import cell_reference_of
        from mediaplan.tasks.cells import CellReference

        cells = self.plan.cells
        if fit is not None:
            fitted = cell_reference_of(fit, (today or datetime.date.today()).isoformat())
            cells = replace((cells or CellReference()).merged(fitted), potential=None)
        self.change(replace(self.plan, series=series, cells=None if cells is None or cells.empty else cells))

    def undo(self) -> bool:
        return self._step(self._undo, self._redo)

    def redo(self) -> bool:
        return self._step(self._redo, self._undo)

    def _step(self, source: list[Plan], sink: list[Plan]) -> bool:
        if not source:
            return False
        sink.append(self.plan)
        self.plan = _keep_file(source.pop(), self.plan)
        self.dirty = True
        return True

    # ---- files --------------------------------------------------------------------------
    def save(self, path: str | Path | None = None, *, force: bool = False) -> Path:
        """Save (atomic; ConflictError if the file changed on disk); clears the recovery file."""
        target = planfile.write(self.plan, path, force=force)
        self.dirty = False
        self.discard_recovery()
        self.recovery_path = _recovery_name(target, "")
        return target

    def write_recovery(self) -> Path | None:
        """Autosave unsaved work to the recovery folder (atomic). Returns the file, or None if clean."""
        if not self.dirty:
            return None
        meta = {
            "path": str(self.plan.path.resolve()) if self.plan.path else "",
            "disk_digest": self.plan.disk_digest or "",
            "saved": datetime.datetime.now().isoformat(timespec="seconds"),
        }
        data = (RECOVERY_HEADER + json.dumps(meta) + "\n" + planfile.dumps(self.plan)).encode("utf-8")
        self.recovery_path.parent.mkdir(parents=True, exist_ok=True)
        planfile.atomic_write(self.recovery_path, data, backup=False)
        return self.recovery_path

    def discard_recovery(self) -> None:
        try:
            self.recovery_path.unlink()
        except FileNotFoundError:
            pass


def _keep_file(old: Plan, current: Plan) -> Plan:
    """Undo restores the recipe and settings, never the file a plan was last saved to."""
    return replace(old, path=current.path, disk_digest=current.disk_digest)


def _recovery_name(path: Path | None, stamp: str) -> Path:
    from mediaplan.files.paths import recovery_dir

    if path is not None:
        key = hashlib.sha256(str(Path(path).resolve()).encode()).hexdigest()[:12]
        return recovery_dir() / f"{Path(path).stem}-{key}.toml"
    return recovery_dir() / f"new-{stamp}-{os.getpid()}.toml"


@dataclass(frozen=True)
class Recovery:
    """Unsaved work found in the recovery folder."""

    file: Path
    plan: Plan
    original: Path | None
    saved: str
    contents: str = ""  # "23 components, on a base formulation", a base's lines counted

    @property
    def summary(self) -> str:
        where = self.original.name if self.original else "new plan"
        what = self.contents or f"{len(self.plan.recipe.amounts)} components set in the plan"
        return f"{self.plan.title} ({where}, {what}, autosaved {self.saved.replace('T', ' ')})"


def find_recoveries(catalog: Catalog, for_path: str | Path | None = None) -> list[Recovery]:
    """Recovery files, newest first; only the one for ``for_path`` when a plan is being opened.

    Unreadable recovery files are skipped (they are kept on disk for the user to inspect).
    """
    from mediaplan.files.paths import recovery_dir

    folder = recovery_dir()
    if not folder.is_dir():
        return []
    want = str(Path(for_path).resolve()) if for_path else None
    out = []
    for f in sorted(folder.glob("*.toml"), key=lambda p: p.stat().st_mtime, reverse=True):
        try:
            plan, meta = read_recovery(f, catalog)
        except (MediaplanError, OSError, ValueError):
            continue
        original = Path(meta["path"]) if meta.get("path") else None
        if want is not None and str(original) != want:
            continue
        plan.path = original
        plan.disk_digest = meta.get("disk_digest") or None
        out.append(Recovery(f, plan, original, str(meta.get("saved", "")), _contents(plan.recipe, catalog)))
    return out


def read_recovery(file: Path, catalog: Catalog) -> tuple[Plan, dict]:
    """A recovery file's plan and where it came from (``path``, ``disk_digest``, ``saved``).

    Reads the header line of this version, or the ``[recovery]`` table earlier versions wrote into the plan.
    Raises MediaplanError (an unreadable plan), OSError or ValueError (a damaged file).
    """
    import tomllib

    with open(file, "rb") as fh:
        raw = fh.read(RECOVERY_MAX_BYTES + 1)
    if len(raw) > RECOVERY_MAX_BYTES:
        raise ValueError(f"{file} is larger than a recovery file can be")
    text = raw.decode("utf-8")
    first, _, rest = text.partition("\n")
    if first.startswith(RECOVERY_HEADER):
        meta = json.loads(first[len(RECOVERY_HEADER):])
        if not isinstance(meta, dict):
            raise ValueError(f"{file}: the recovery header is not a table")
        return planfile.loads(rest, file=str(file), catalog=catalog), meta
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ValueError(f"{file}: {exc}") from None
    meta = data.pop(RECOVERY_TABLE, None)
    if not isinstance(meta, dict):
        raise ValueError(f"{file} is not a recovery file")
    return planfile.from_dict(data, text=text, file=str(file), catalog=catalog), meta


def _contents(recipe: Recipe, catalog: Catalog) -> str:
    """What the medium holds in words: its components (a base's lines counted) and the base by name."""
    try:
        n = len(recipe.lines(catalog))
        base = catalog.medium(recipe.base).name if recipe.base else None
    except MediaplanError:
        return ""
    what = f"{n} component{'' if n == 1 else 's'}"
    if base:
        what += f" on {base} × {recipe.strength:g}"
    return what


def restore(recovery: Recovery, catalog: Catalog) -> Session:
    """A session on the recovered plan: unsaved (dirty), same recovery file, same target file."""
    return Session(recovery.plan, catalog, dirty=True, recovery=recovery.file)
