"""Every user action in one table: its key, footer label, palette title and tooltip.

The bindings, the command palette and the help screen are all built from this table, so a new
action appears in all three at once. ``where`` says which object runs it: "screen" (the main
screen) or "app".
"""

from __future__ import annotations

from dataclasses import dataclass

from textual.binding import Binding


@dataclass(frozen=True)
class UserAction:
    """One action: ``keys`` (comma-separated), ``label`` for the key bar (``short`` when the bar is
    narrow), ``rank`` (lower is kept longer when the key bar cannot show every key)."""

    id: str
    keys: str
    action: str
    label: str
    title: str
    tooltip: str
    where: str = "screen"
    show: bool = True
    key_display: str | None = None
    short: str | None = None
    rank: int = 50


#: Keys are letters or Ctrl with a letter that browser-based terminals pass through (Ctrl+W, Ctrl+N and Ctrl+T
#: close or open tabs there, so no action depends on them).
ACTIONS: tuple[UserAction, ...] = (
    UserAction("add", "a", "add_component", "Add", "Add a component",
               "Search the catalog by name, alias or formula and add a component", rank=20),
    UserAction("edit", "e", "edit_amount", "Amount", "Edit the selected amount",
               "Change the amount of the selected component (Enter or a click does the same)", rank=25),
    UserAction("remove", "x,delete", "remove_component", "Remove", "Remove or restore the selected component",
               "Remove the selected component (a base line is struck through; x again restores it)",
               key_display="x", rank=40),
    UserAction("base", "b", "choose_base", "Base", "Choose base formulation and strength",
               "Start from a published formulation at full, half or any strength", rank=22),
    UserAction("conditions", "c", "conditions", "Conditions", "Title, notes, volume, temperature, cells",
               "The plan's title and notes, batch volume, temperature and the cells' sap for tonicity",
               short="Cond.", rank=30),
    UserAction("target", "t", "set_target", "Target", "Reach a target with an osmoticum",
               "Solve for the osmoticum addition that reaches a water potential, osmolality or tonicity", rank=23),
    UserAction("series", "p", "plasmolysis", "Plasmolysis", "Plasmolysis series: design, counts, fit",
               "Design a series evenly spaced in water potential, enter counts, fit the 50 % point",
               short="Series", rank=24),
    UserAction("projection", "w", "projection", "After autoclave", "Medium after autoclaving and weeks of culture",
               "The medium as made, after autoclaving (sucrose hydrolysed) and after weeks of culture (water lost)",
               short="Autoclave", rank=41),
    UserAction("notes", "i", "toggle_details", "Details", "Show or hide the details of the notes on the figures",
               "Notes on the figures in plain words, or with the models' details", rank=45),
    UserAction("compare", "v", "compare_plans", "Compare", "Compare with another plan…",
               "The open plan beside another plan file: figures, settings and components that differ", rank=47),
    UserAction("reading", "g", "osmometer_reading", "Reading", "Check an osmometer reading of a batch",
               "Osmometer reading of a batch against the plan; record it", where="app", rank=48),
    UserAction("prep", "m", "prep_sheet", "Prep", "Preparation sheet for a batch",
               "What to weigh for a batch volume, with or without stock solutions", rank=10),
    UserAction("undo", "u,ctrl+z", "undo", "Undo", "Undo the last change", "Undo the last change", key_display="u",
               rank=11),
    UserAction("redo", "r,ctrl+y", "redo", "Redo", "Redo", "Redo the change just undone", key_display="r", rank=42),
    UserAction("help", "question_mark,f1", "help", "Keys", "Show keys and help", "List every key binding",
               where="app", key_display="?", rank=1),
    UserAction("save", "ctrl+s", "save", "Save", "Save the plan", "Save the plan to its file", where="app", rank=3),
    UserAction("save_as", "S", "save_as", "Save as", "Save the plan as…", "Save under a new file name (Shift+S)",
               where="app", rank=43),
    UserAction("open", "o,ctrl+o", "open_plan", "Open", "Open a plan…", "Open a plan file", where="app",
               key_display="o", rank=44),
    UserAction("new", "n", "new_plan", "New", "New plan", "Start a new, empty plan (asks first if there is unsaved work)",
               where="app", rank=46),
    UserAction("quit", "q,ctrl+q", "quit", "Quit", "Quit", "Quit (asks first if there is unsaved work)",
               where="app", key_display="q", rank=2),
)

#: rank of a binding in the key bar by its id (the actions above, and the keys of the other screens)
RANK: dict[str, int] = {f"mediaplan.{a.id}": a.rank for a in ACTIONS}
#: the key bar's short labels by binding id
SHORT: dict[str, str] = {f"mediaplan.{a.id}": a.short for a in ACTIONS if a.short}


def bindings(where: str) -> list[Binding]:
    return [Binding(a.keys, a.action, a.label, show=a.show, key_display=a.key_display, tooltip=a.tooltip,
                    id=f"mediaplan.{a.id}") for a in ACTIONS if a.where == where]

