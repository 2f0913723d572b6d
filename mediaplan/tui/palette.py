"""Command-palette provider: the actions that fit the current state, plus catalog shortcuts.

Typing a component's name offers "add …" for catalog matches not yet in the recipe and
"amount of …" for those already in it.
"""

from __future__ import annotations

from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider
from textual.content import Content

from mediaplan.tui.actions import ACTIONS


class PlanCommands(Provider):
    def _main(self):
        from mediaplan.tui.screens.main import MainScreen

        screen = self.screen
        return screen if isinstance(screen, MainScreen) else None

    def _available(self):
        main = self._main()
        if main is None:
            return
        for a in ACTIONS:
            target = main if a.where == "screen" else self.app
            if target.check_action(a.action, ()):
                yield a.title, a.tooltip, partial(target.run_action, a.action)

    async def discover(self) -> Hits:
        for title, help_text, run in self._available():
            yield DiscoveryHit(title, run, help=help_text)

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for title, help_text, run in self._available():
            score = matcher.match(title)
            if score > 0:
                yield Hit(score, matcher.highlight(title), run, help=help_text)
        main = self._main()
        if main is None or len(query.strip()) < 2:
            return
        session = self.app.session
        ev = main.committed
        present = {c.id for c in ev.components} if ev else set()
        for comp in session.catalog.search(query, limit=6):
            if comp.id in present:
                title = f"amount of {comp.name}"
                run = partial(main.edit, comp.id, ev.component(comp.id).amount)
            else:
                title = f"add {comp.name}"
                run = partial(main.edit, comp.id, "")
            yield Hit(0.5, Content(title), run, text=title, help=comp.formula or comp.id)
