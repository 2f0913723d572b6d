"""The cell reference of a plan: the cells' sap osmolality and the isotonic band (pure domain logic).

Read from a typed value (``--cells``, ``--tolerance``, a dialog field) or from the plan's ``[cells]``
table (``osmolality`` or ``potential``, ``tolerance``); used by calc, solve and the terminal app.
"""

from __future__ import annotations

from mediaplan.medium.errors import AmountError
from mediaplan.medium.evaluate import ISOTONIC_TOLERANCE
from mediaplan.medium.units import parse_target
from mediaplan.tasks.projection import parse_fraction
from mediaplan.thermo.potential import osmolality_from_potential


def cell_reference(text: str | None, plan, T: float) -> float | None:
    """Cell reference [mOsm/kg] from --cells or the plan's [cells] table (osmolality, else potential)."""
    field = "cells"
    if text is None and plan is not None and plan.cells:
        key = "osmolality" if plan.cells.get("osmolality") else "potential"
        text, field = plan.cells.get(key), f"cells.{key}"
    if not text:
        return None
    t = parse_target(str(text), field=field)
    value = t.value * 1000.0 if t.kind == "osmolality" else float(osmolality_from_potential(t.value, T)) * 1000.0
    if value <= 0:
        raise AmountError(f"cell reference {text!r} must be below 0 MPa or above 0 mOsm/kg", field=field)
    return value


def cell_tolerance(text: str | None, plan) -> float:
    """Isotonic band [fraction] from --tolerance, the plan's [cells] tolerance, or the default 5 %."""
    if text is None and plan is not None and plan.cells and "tolerance" in plan.cells:
        return parse_fraction(plan.cells["tolerance"], field="cells.tolerance", upper=0.5)
    if text is None:
        return ISOTONIC_TOLERANCE
    return parse_fraction(text, field="cells.tolerance", upper=0.5)
