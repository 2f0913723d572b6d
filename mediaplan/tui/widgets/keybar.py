"""The key bar: one line at the bottom of a screen with the keys that work there.

It is built from the screen's active bindings (so it always says what a key does right now) and fits
the terminal's width: full labels when they fit, short labels when not, and at the narrowest the keys
of lowest rank (:data:`mediaplan.tui.actions.RANK`) are left out. ``?`` (every key) and the command
palette are always kept, so every action stays reachable. A click on a key runs it.

A key that is the first letter of its label is shown inside the label, that letter bold, underlined and
coloured (``Add``, ``Target``); any other key is shown before its label (``m Prep``, ``^s Save``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

from rich.cells import cell_len
from textual import events
from textual.binding import Binding
from textual.content import Content
from textual.dom import DOMNode
from textual.style import Style
from textual.widget import Widget

from mediaplan.tui.actions import RANK, SHORT

#: rank of a key that has none in RANK (kept after the main actions, before the rarely used ones)
DEFAULT_RANK = 35
#: the command palette's place in the bar
PALETTE_RANK = 4
#: cells between two keys
GAP = 2


@dataclass(frozen=True)
class KeyItem:
    """One key in the bar."""

    key: str  # as shown: "a", "^s", "esc"
    label: str
    short: str
    rank: int
    enabled: bool
    binding: Binding | None  # None: the command palette
    namespace: DOMNode | None

    def text(self, short: bool) -> str:
        return self.short if short else self.label

    def inside(self, short: bool) -> bool:
        """The key is the label's first letter (shown inside the label)."""
        text = self.text(short)
        return len(self.key) == 1 and text[:1].lower() == self.key

    def width(self, short: bool) -> int:
        text = self.text(short)
        return cell_len(text) if self.inside(short) else cell_len(self.key) + 1 + cell_len(text)


def fit_items(items: list[KeyItem], width: int) -> tuple[list[KeyItem], bool]:
    """The items that fit ``width`` cells, in their order, and whether short labels are used.

    Full labels if every key fits with them; else short labels; else the highest ranks are left out
    (the lowest ranks, such as help and the palette, always stay).
    """

    def total(chosen: list[KeyItem], short: bool) -> int:
        return sum(it.width(short) for it in chosen) + GAP * max(len(chosen) - 1, 0) + 1

    if total(items, False) <= width:
        return items, False
    chosen = list(items)
    while total(chosen, True) > width and len(chosen) > 1:
        chosen.remove(max(chosen, key=lambda it: (it.rank, chosen.index(it))))
    return chosen, True


class KeyBar(Widget):
    """The keys of the current screen, fitted to one line."""

    ALLOW_SELECT = False
    COMPONENT_CLASSES: ClassVar[set[str]] = {"keybar--key", "keybar--label", "keybar--off"}
    DEFAULT_CSS = """
    KeyBar {
        dock: bottom;
        height: 1;
        width: 1fr;
        background: $panel;
        color: $foreground;
        & > .keybar--key { color: $secondary; text-style: bold; }
        & > .keybar--label { color: $foreground; }
        & > .keybar--off { color: $foreground 45%; }
    }
    """

    def __init__(self, **kw) -> None:
        super().__init__(**kw)
        self._spans: list[tuple[int, int, KeyItem]] = []

    def on_mount(self) -> None:
        self.screen.bindings_updated_signal.subscribe(self, self._bindings_changed)

    def on_unmount(self) -> None:
        self.screen.bindings_updated_signal.unsubscribe(self)

    def _bindings_changed(self, screen) -> None:
        self.refresh()

    def items(self) -> list[KeyItem]:
        """Every shown key of the screen (one per action), then the command palette."""
        out: list[KeyItem] = []
        seen: set[str] = set()
        palette: KeyItem | None = None
        for namespace, binding, enabled, _tooltip in self.screen.active_bindings.values():
            if binding.key == self.app.COMMAND_PALETTE_BINDING and self.app.ENABLE_COMMAND_PALETTE:
                palette = KeyItem("^p", "Commands", "Cmds", PALETTE_RANK, True, None, namespace)
                continue
            if not binding.show or binding.action in seen:
                continue
            seen.add(binding.action)
            key = binding.key_display or self.app.get_key_display(binding)
            label = binding.description
            out.append(KeyItem(key, label, SHORT.get(binding.id or "", label), RANK.get(binding.id or "",
                                                                                       DEFAULT_RANK),
                               enabled, binding, namespace))
        if palette is None and self.app.ENABLE_COMMAND_PALETTE:
            palette = KeyItem("^p", "Commands", "Cmds", PALETTE_RANK, True, None, None)
        return out + ([palette] if palette else [])

    def render(self) -> Content:
        chosen, short = fit_items(self.items(), self.size.width or 80)
        get = self.get_component_rich_style
        key_style = Style.from_rich_style(get("keybar--key"))
        label_style = Style.from_rich_style(get("keybar--label"))
        off_style = Style.from_rich_style(get("keybar--off"))
        parts: list[Content | str | tuple] = [" "]
        x = 1
        self._spans = []
        for i, it in enumerate(chosen):
            if i:
                parts.append(" " * GAP)
                x += GAP
            label = it.text(short)
            if it.inside(short):
                parts.append((label[0], key_style + Style(underline=True) if it.enabled else off_style))
                parts.append((label[1:], label_style if it.enabled else off_style))
            else:
                parts.append((it.key, key_style if it.enabled else off_style))
                parts.append((" " + label, label_style if it.enabled else off_style))
            w = it.width(short)
            self._spans.append((x, x + w, it))
            x += w
        return Content.assemble(*parts)

    def shown(self) -> list[str]:
        """The labels the bar shows now (for tests and the help screen)."""
        chosen, short = fit_items(self.items(), self.size.width or 80)
        return [it.text(short) for it in chosen]

    async def on_click(self, event: events.Click) -> None:
        for x0, x1, it in self._spans:
            if x0 <= event.x < x1:
                event.stop()
                if it.binding is None:
                    self.app.action_command_palette()
                elif it.enabled:
                    await self.app.run_action(it.binding.action, it.namespace)
                return
