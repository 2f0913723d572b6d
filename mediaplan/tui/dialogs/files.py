"""File dialogs: a path prompt with a folder tree (open, save as) and a question with choices."""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, DirectoryTree, Input, OptionList, Static
from textual.widgets.option_list import Option

from mediaplan.tui.quick import StyledOnce
from mediaplan.tui.widgets.fields import FieldInput, FieldMessage


class PlanTree(DirectoryTree):
    """Folders and files of one kind only (plan files unless told; hidden files left out)."""

    suffix = ".toml"

    def filter_paths(self, paths: Iterable[Path]) -> Iterable[Path]:
        return [p for p in paths if not p.name.startswith(".") and (p.is_dir() or p.suffix == self.suffix)]


class PathScreen(StyledOnce, ModalScreen[Path | None]):
    """Ask for a file path (a plan unless ``suffix`` says otherwise); ``must_exist`` for opening, otherwise a
    name to save to (the suffix is added when missing)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="path.cancel", tooltip="Close without choosing")]

    def __init__(self, title: str, start: Path, suggestion: str = "", *, must_exist: bool,
                 suffix: str = ".toml", recent: list[Path] | tuple[Path, ...] = ()) -> None:
        super().__init__()
        self.title_text = title
        self.start = start
        self.suggestion = suggestion
        self.must_exist = must_exist
        self.suffix = suffix
        #: plans opened or saved last, newest first (listed above the folder tree when opening)
        self.recent = list(recent)

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="path-dialog") as box:
            box.border_title = self.title_text
            yield FieldInput(self.suggestion, id="path-input", placeholder=f"a file name ending {self.suffix}")
            where = "the recent plans and the folder tree" if self.recent else "the folder tree"
            yield FieldMessage(f"Enter confirms · Tab to {where} · Esc cancels", id="path-message")
            if self.recent:
                yield Static("recent plans", classes="dialog-title", id="recent-title")
                yield OptionList(*[Option(_recent_label(p, self.start), id=str(i)) for i, p in enumerate(self.recent)],
                                 id="recent-list")
            tree = PlanTree(self.start, id="path-tree")
            tree.suffix = self.suffix
            yield tree

    def on_mount(self) -> None:
        self.query_one(Input).focus()

    @on(DirectoryTree.FileSelected)
    def _file(self, event: DirectoryTree.FileSelected) -> None:
        inp = self.query_one(Input)
        inp.value = str(event.path)
        if self.must_exist:
            self._submit(inp.value)
        else:
            inp.focus()

    @on(OptionList.OptionSelected, "#recent-list")
    def _recent(self, event: OptionList.OptionSelected) -> None:
        path = self.recent[int(event.option.id or 0)]
        self.query_one(Input).value = str(path)
        self._submit(str(path))

    @on(DirectoryTree.DirectorySelected)
    def _folder(self, event: DirectoryTree.DirectorySelected) -> None:
        inp = self.query_one(Input)
        name = Path(inp.value).name if inp.value.strip() else ""
        inp.value = str(event.path / name) if name else str(event.path) + "/"

    @on(Input.Submitted)
    def _entered(self, event: Input.Submitted) -> None:
        self._submit(event.value)

    def _submit(self, text: str) -> None:
        msg = self.query_one(FieldMessage)
        text = text.strip()
        if not text:
            msg.update("✗ type a file name")
            return
        path = Path(text).expanduser()
        if not path.is_absolute():
            path = self.start / path
        if path.is_dir():
            msg.update("✗ that is a folder: add a file name")
            return
        if self.must_exist and not path.is_file():
            msg.update(f"✗ no file {path.name} there")
            return
        if not self.must_exist and path.suffix != self.suffix:
            path = path.with_name(path.name + self.suffix)
        self.dismiss(path)

    def action_cancel(self) -> None:
        self.dismiss(None)


def _recent_label(path: Path, start: Path) -> str:
    """A recent plan as ``NAME  (folder)``: the folder relative to where the app started when inside it."""
    try:
        folder = str(path.parent.relative_to(start)) if path.parent != start else "."
    except ValueError:
        folder = str(path.parent)
        home = str(Path.home())
        if folder == home or folder.startswith(home + "/"):
            folder = "~" + folder[len(home):]
    return f"{path.name}  ({folder})"


class ChoiceScreen(StyledOnce, ModalScreen[str | None]):
    """A question with a few answers (buttons; the first is the default). Dismisses with the answer id."""

    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="choice.cancel", tooltip="Do nothing"),
        Binding("left", "app.focus_previous", "Previous", show=False, id="choice.left", tooltip="Previous answer"),
        Binding("right", "app.focus_next", "Next", show=False, id="choice.right", tooltip="Next answer"),
    ]

    def __init__(self, title: str, text: str, choices: list[tuple[str, str]]) -> None:
        super().__init__()
        self.title_text = title
        self.text = text
        self.choices = choices

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="choice-dialog") as box:
            box.border_title = self.title_text
            yield Static(self.text, markup=False, id="choice-text")
            with Horizontal(classes="buttons"):
                for i, (cid, label) in enumerate(self.choices):
                    yield Button(label, id=f"choice-{cid}", variant="primary" if i == 0 else "default")

    def on_mount(self) -> None:
        self.query(Button).first().focus()

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss((event.button.id or "").removeprefix("choice-"))

    def action_cancel(self) -> None:
        self.dismiss(None)
