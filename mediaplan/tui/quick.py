"""Screens that open at once: work Textual would do twice is done once, and what a first opening would
parse and import is readied after the app's first paint.

Opening a screen costs the styling of its widgets (a pass over every node and every rule of the stylesheet),
the first reading of the built-in stylesheets of the widget kinds it is the first to use (a button's alone
takes about 10 ms), the import of its module, its layout and its first render (a dialog's: with the screen
under it, tinted). What is avoided here:

- :class:`StyledOnce`: a screen is styled when its widgets mount; Textual styles the whole screen again
  when it is first shown (needed only for a screen shown before, whose styles may be stale), and once more
  when its width class (``-narrow``/``-wide``) is set on the first resize. The mixin sets the width class
  before the widgets mount and lets the first showing keep the styles just made. Its dialogs' backdrop
  (:class:`Backdrop`) tints each style of the screen under them once, not each stretch of text. Once the
  screen is painted, a warm start held while it opened goes on (:func:`mediaplan.tui.warm.hold`).
- :func:`prime_steps`: the screens' modules and the built-in stylesheets of the widget kinds they use are
  imported and parsed in small steps on the app's own thread after its first paint (the parsed rules wait
  in the stylesheet's parse cache; nothing is added to the stylesheet before a widget of that kind mounts).

Nothing here changes what a screen shows: the same styles are applied, only not again, and the backdrop's
segments are Textual's own (tests/tui/test_quick_open.py holds both to Textual's full work). The parse
cache and the base-class lists are Textual internals (textual 8.2, as pinned): should they change, a
priming step fails and is skipped, and the screens open as before.
"""

from __future__ import annotations

import functools
import importlib
import types
from collections.abc import Callable, Iterable

from rich.segment import Segment
from textual import events
from textual.color import Color
from textual.renderables.background_screen import BackgroundScreen

#: the screens a first action opens, readied in this order after the first paint
SCREEN_MODULES = ("mediaplan.tui.screens.target", "mediaplan.tui.screens.plasmolysis",
                  "mediaplan.tui.dialogs.amount", "mediaplan.tui.dialogs.picker", "mediaplan.tui.screens.prep",
                  "mediaplan.tui.screens.projection", "mediaplan.tui.dialogs.conditions",
                  "mediaplan.tui.dialogs.base", "mediaplan.tui.dialogs.files", "mediaplan.tui.screens.reading",
                  "mediaplan.tui.screens.compare", "mediaplan.tui.screens.help")

#: the widget kinds those screens compose (their built-in stylesheets are parsed ahead), most used first
WIDGET_KINDS = (("mediaplan.tui.widgets.fields", "FieldInput"), ("mediaplan.tui.widgets.fields", "FieldMessage"),
                ("textual.widgets", "Label"), ("textual.containers", "Grid"), ("textual.widgets", "Button"),
                ("textual.containers", "Horizontal"), ("textual.containers", "Vertical"),
                ("textual.widgets", "DataTable"), ("textual.containers", "ScrollableContainer"),
                ("mediaplan.tui.widgets.keybar", "KeyBar"),
                # (the kinds above are those of the target dialog and the series screen)
                ("textual.widgets", "Input"),
                ("textual.widgets", "OptionList"), ("textual.containers", "VerticalScroll"),
                ("textual.widgets", "Select"), ("textual.widgets", "Switch"), ("textual.widgets", "Markdown"),
                ("textual.widgets", "TextArea"), ("textual.widgets", "DirectoryTree"))


#: how many of WIDGET_KINDS the target dialog and the series screen use (primed first)
FIRST_KINDS = 10


def width_class(breakpoints: Iterable[tuple[int, str]] | None, width: int) -> str | None:
    """The class of the widest breakpoint not wider than ``width`` [cells] (as Textual chooses it), or None."""
    for least, name in sorted(breakpoints or (), reverse=True):
        if width >= least:
            return name
    return None


class StyledOnce:
    """Mixin for a Screen (put it before Screen or ModalScreen): styled once, when its widgets mount.

    Call :meth:`preset_width_class` first thing in ``compose``.
    """

    _shown_before = False

    def preset_width_class(self) -> None:
        """Give the screen its width class now, without restyling (its widgets mount with it)."""
        breakpoints = self.HORIZONTAL_BREAKPOINTS  # type: ignore[attr-defined]
        if breakpoints is None:
            breakpoints = self.app.HORIZONTAL_BREAKPOINTS  # type: ignore[attr-defined]
        chosen = width_class(breakpoints, self.app.size.width)  # type: ignore[attr-defined]
        if chosen is not None:
            self.update_classes({name: name == chosen for _, name in breakpoints},  # type: ignore[attr-defined]
                                update=False)

    def render(self):
        """A dialog's backdrop (the screen under it, tinted) with the tint worked out once per style."""
        shown = super().render()  # type: ignore[misc]
        if type(shown) is BackgroundScreen:
            return Backdrop(shown.screen, shown.color)
        return shown

    def on_screen_resume(self, event: events.ScreenResume) -> None:
        # runs before Screen's own handler (this class comes first in the order of handlers)
        if not self._shown_before and self.is_mounted:  # type: ignore[attr-defined]
            event.refresh_styles = False  # styled a moment ago, when its widgets mounted
        self._shown_before = True
        from mediaplan.tui import warm

        # a warm start held while this screen opened goes on once the screen is painted
        self.call_after_refresh(warm.release)  # type: ignore[attr-defined]


class Backdrop(BackgroundScreen):
    """Textual's tinted backdrop of a dialog, the tint of each style of the screen under it computed once
    (by Textual's own code) instead of once per stretch of text: the same segments, a few times faster."""

    @classmethod
    def process_segments(cls, segments: Iterable[Segment], color: Color) -> Iterable[Segment]:
        tint = BackgroundScreen.process_segments
        tinted: dict = {}
        for segment in segments:
            text, style, control = segment
            if control:
                yield segment
                continue
            try:
                new = tinted[style]
            except KeyError:
                new = tinted[style] = next(iter(tint([Segment(" ", style)], color))).style
            yield Segment(text, new, control)


def _default_css_of(kind: type) -> list[tuple]:
    """The (location, css, tie breaker, scope) entries Textual reads for a widget of ``kind``."""
    from textual.dom import DOMNode

    return DOMNode._get_default_css(types.SimpleNamespace(_node_bases=kind._css_bases(kind)))  # type: ignore[arg-type]


def prime_steps(app) -> tuple[list[Callable[[], None]], list[Callable[[], None]]]:
    """Small steps (a few milliseconds each) that import the screens' modules and parse the built-in
    stylesheets of the screens and of the widget kinds they compose into ``app``'s stylesheet parse cache
    (Textual reads a stylesheet with a rank that depends on the class it is read for: each class's own
    list is parsed). A step that fails may be skipped by the caller: priming only saves time.

    Two lists: the steps for the target dialog and the series screen (the likely first actions: their
    modules and the widget kinds they compose), then the rest."""
    from textual.screen import Screen

    def parse(kind: type) -> None:
        for read_from, css, tie_breaker, scope in _default_css_of(kind):
            app.stylesheet._parse_rules(css, read_from, True, tie_breaker, scope)

    def screens_of(name: str) -> None:
        module = importlib.import_module(name)
        for value in vars(module).values():
            if isinstance(value, type) and issubclass(value, Screen) and value.__module__ == name:
                parse(value)

    def widget(home: str, name: str) -> None:
        parse(getattr(importlib.import_module(home), name))

    first, rest = SCREEN_MODULES[:2], SCREEN_MODULES[2:]
    return ([functools.partial(screens_of, m) for m in first]
            + [functools.partial(widget, *k) for k in WIDGET_KINDS[:FIRST_KINDS]],
            [functools.partial(widget, *k) for k in WIDGET_KINDS[FIRST_KINDS:]]
            + [functools.partial(screens_of, m) for m in rest])
