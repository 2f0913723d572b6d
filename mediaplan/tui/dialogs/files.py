"""File dialogs: a path prompt with a folder tree (open, save as) and a question with choices."""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, DirectoryTree, Input, Static

from mediaplan.tui.widgets.fields import FieldMessage


class PlanTree(DirectoryTree):
    """Folders and files of one kind only (plan files unless told; hidden files left out)."""

    suffix = ".toml"

    def filter_paths(self, paths: Iterable[Path]) -> Iterable[Path]:
        return [p for p in paths if not p.name.startswith(".") and (p.is_dir() or p.suffix == self.suffix)]


class PathScreen(ModalScreen[Path | None]):
    """Ask for a file path (a plan unless ``suffix`` says otherwise); ``must_exist`` for opening, otherwise a
    name to save to (the suffix is added when missing)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="path.cancel", tooltip="Close without choosing")]

    def __init__(self, title: str, start: Path, suggestion: str = "", *, must_exist: bool,
                 suffix: str = ".toml") -> None:
        super().__init__()
        self.title_text = title
        self.start = start
        self.suggestion = suggestion
        self.must_exist = must_exist
        self.suffix = suffix

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="path-dialog") as box:
            box.border_title = self.title_text
            yield Input(self.suggestion, id="path-input", placeholder=f"a file name ending {self.suffix}")
            yield FieldMessage("Enter confirms · Tab to the folder tree · Esc cancels", id="path-message")
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


class ChoiceScreen(ModalScreen[str | None]):
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
