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
    id: str
    keys: str
    action: str
    label: str
    title: str
    tooltip: str
    where: str = "screen"
    show: bool = True
    key_display: str | None = None


ACTIONS: tuple[UserAction, ...] = (
    UserAction("add", "a", "add_component", "Add", "Add a component",
               "Search the catalog by name, alias or formula and add a component"),
    UserAction("edit", "e", "edit_amount", "Amount", "Edit the selected amount",
               "Change the amount of the selected component (Enter or a click does the same)"),
    UserAction("remove", "x,delete", "remove_component", "Remove", "Remove the selected component",
               "Remove the selected component (a base component is set to 0)", key_display="x"),
    UserAction("base", "b", "choose_base", "Base", "Choose base formulation and strength",
               "Start from a published formulation at full, half or any strength"),
    UserAction("conditions", "c", "conditions", "Conditions", "Set title, volume, temperature, cell reference",
               "Batch volume, temperature and the cells' sap osmolality for tonicity"),
    UserAction("target", "t", "set_target", "Target", "Reach a target with an osmoticum",
               "Solve for the osmoticum addition that reaches a water potential, osmolality or tonicity"),
    UserAction("series", "p", "plasmolysis", "Plasmolysis", "Plasmolysis series: design, counts, fit",
               "Design a series evenly spaced in water potential, enter counts, fit the 50 % point"),
    UserAction("projection", "w", "projection", "Weeks", "Project autoclaving and weeks of culture",
               "The medium as made, after autoclaving and after weeks of culture"),
    UserAction("prep", "m", "prep_sheet", "Prep", "Preparation sheet for a batch",
               "What to weigh for a batch volume, with or without stock solutions"),
    UserAction("undo", "u,ctrl+z", "undo", "Undo", "Undo the last change", "Undo the last change", key_display="u"),
    UserAction("redo", "r,ctrl+y", "redo", "Redo", "Redo", "Redo the change just undone", key_display="r"),
    UserAction("help", "question_mark,f1", "help", "Keys", "Show keys and help", "List every key binding",
               where="app", key_display="?"),
    UserAction("save", "ctrl+s", "save", "Save", "Save the plan", "Save the plan to its file", where="app"),
    UserAction("save_as", "ctrl+w", "save_as", "Save as", "Save the plan as…", "Save under a new file name",
               where="app"),
    UserAction("open", "ctrl+o", "open_plan", "Open", "Open a plan…", "Open a plan file", where="app"),
    UserAction("new", "ctrl+n", "new_plan", "New", "New plan", "Start a new, empty plan", where="app"),
    UserAction("quit", "q,ctrl+q", "quit", "Quit", "Quit", "Quit (asks first if there is unsaved work)",
               where="app"),
)


def bindings(where: str) -> list[Binding]:
    return [Binding(a.keys, a.action, a.label, show=a.show, key_display=a.key_display, tooltip=a.tooltip,
                    id=f"mediaplan.{a.id}") for a in ACTIONS if a.where == where]

