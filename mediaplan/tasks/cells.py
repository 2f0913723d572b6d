"""The cell reference of a plan: the cells' sap osmolality and the isotonic band (pure domain logic).

A :class:`CellReference` is what a plan's ``[cells]`` table holds (read and written by
:mod:`mediaplan.files.plan_tables`). The reference is read from a typed value (``--cells``,
``--tolerance``, a dialog field) or from that record (``osmolality`` or ``potential``, ``tolerance``);
used by calc, solve and the terminal app.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

from mediaplan.medium.errors import AmountError
from mediaplan.medium.units import parse_fraction, parse_target
from mediaplan.tasks.records import TableView

# the engine (evaluate, thermo and numpy) is imported where a figure is computed, not when a plan's [cells]
# table is read


@dataclass(frozen=True, eq=False)
class CellReference(TableView):
    """The cells a medium is compared with, as a plan records them (``[cells]``); None = not given.

    osmolality : the cells' sap osmolality as written, e.g. ``"450 mOsm/kg"``
    potential : the sap's osmotic potential as written, e.g. ``"-1.1 MPa"`` (used when there is no osmolality)
    tolerance : half-width of the isotonic band as written: a fraction (``0.05``) or a percentage (``"5 %"``)
    source : where the figure comes from, in words
    ci95 : the 95 % interval of a fitted reference, in words
    extra : keys this version does not know, as (key, value) pairs, kept as they were
    """

    osmolality: str | None = None
    potential: str | None = None
    tolerance: float | str | None = None
    source: str | None = None
    ci95: str | None = None
    extra: tuple[tuple[str, Any], ...] = ()

    @property
    def empty(self) -> bool:
        """True when the record holds nothing (a plan then has no ``[cells]`` table)."""
        return all(getattr(self, k) is None for k in ("osmolality", "potential", "tolerance", "source", "ci95")) \
            and not self.extra

    @property
    def reference(self) -> tuple[str, str] | None:
        """(field, text) of the reference in force: the osmolality, else the potential; None without one."""
        key = "osmolality" if self.osmolality else "potential"
        text = getattr(self, key)
        return (f"cells.{key}", text) if text else None

    def with_reference(self, text: str) -> CellReference:
        """The record with ``text`` (an osmolality or a potential) as its one reference; ``""`` removes it.

        Other fields (tolerance, source, unknown keys) are kept.
        """
        cleared = replace(self, osmolality=None, potential=None)
        if not text:
            return cleared
        return replace(cleared, **{parse_target(text, field="cells").kind: text})

    def merged(self, newer: CellReference) -> CellReference:
        """This record with every field that ``newer`` sets taken from ``newer`` (unknown keys too)."""
        changes = {k: getattr(newer, k) for k in ("osmolality", "potential", "tolerance", "source", "ci95")
                   if getattr(newer, k) is not None}
        extra = dict(self.extra)
        extra.update(newer.extra)
        return replace(self, **changes, extra=tuple(extra.items()))


def _cells_of(cells) -> CellReference | None:
    """A CellReference, or the one a plan holds (``plan.cells``)."""
    if cells is None or isinstance(cells, CellReference):
        return cells
    return getattr(cells, "cells", None)


@dataclass(frozen=True)
class ReferenceInForce:
    """The one cell reference a command uses, and where it came from.

    mosmol : the cells' sap osmolality [mOsm/kg], or None when there is none
    source : in words, which value was used (typed, the plan's osmolality, the plan's potential at T)
    ignored : in words, a value that was given too and not used (the plan's when one was typed; the
        plan's potential when it also holds an osmolality), with what it would have given; None otherwise
    """

    mosmol: float | None
    source: str
    ignored: str | None = None

    @property
    def words(self) -> str:
        """One line for a note: the reference, its source, and what was not used."""
        if self.mosmol is None:
            return "no cell reference"
        head = f"cell reference {self.mosmol:.1f} mOsm/kg from {self.source}"
        return head + (f"; {self.ignored}" if self.ignored else "")


def _mosmol(text: str, field: str, T: float) -> float:
    from mediaplan.thermo.potential import osmolality_from_potential

    t = parse_target(str(text), field=field)
    value = t.value * 1000.0 if t.kind == "osmolality" else float(osmolality_from_potential(t.value, T)) * 1000.0
    if value <= 0:
        raise AmountError(f"cell reference {text!r} must be below 0 MPa or above 0 mOsm/kg", field=field)
    return value


def reference_in_force(text: str | None, cells, T: float) -> ReferenceInForce:
    """Decide the cell reference, the same way for every command and the app.

    Order: a typed value (``--cells``, the app's cells field) wins over the plan's ``[cells]``; within
    ``[cells]``, the osmolality wins over the potential, because an osmolality [mOsm/kg] does not depend on
    temperature while a potential does; a potential is converted at ``T`` [K], the medium's temperature.

    cells : a CellReference, or a plan holding one as ``cells``; None for none
    """
    ref = _cells_of(cells)
    if text is not None:
        if not text:
            return ReferenceInForce(None, "nothing")  # an empty typed value clears the reference
        value = _mosmol(text, "cells", T)
        ignored = None
        if ref is not None and ref.reference is not None:
            ignored = f"the plan's [cells] {ref.reference[1]} not used (a typed value wins)"
        return ReferenceInForce(value, f"the value typed ({text})", ignored)
    if ref is None or ref.reference is None:
        return ReferenceInForce(None, "nothing")
    field, written = ref.reference
    value = _mosmol(written, field, T)
    source = f"the plan's [cells] {field.split('.')[-1]} {written}"
    if field == "cells.potential":
        source += f" at {T - 273.15:.4g} °C"
    ignored = None
    if field == "cells.osmolality" and ref.potential:
        other = _mosmol(ref.potential, "cells.potential", T)
        ignored = (f"its potential {ref.potential} not used (it is {other:.1f} mOsm/kg at {T - 273.15:.4g} °C, "
                   f"{100 * (other / value - 1):+.1f} %)")
    return ReferenceInForce(value, source, ignored)


def cell_reference(text: str | None, cells, T: float) -> float | None:
    """Cell reference [mOsm/kg] from a typed value, else from the record (osmolality, else potential):
    the number of :func:`reference_in_force`.

    cells : a CellReference, or a plan holding one as ``cells``; None for none
    T : temperature [K] (a potential is converted at it)
    """
    return reference_in_force(text, cells, T).mosmol


def cell_tolerance(text: str | None, cells) -> float:
    """Isotonic band [fraction] from a typed value, the record's tolerance, or the default 5 %.

    cells : a CellReference, or a plan holding one as ``cells``; None for none
    """
    ref = _cells_of(cells)
    if text is None and ref is not None and ref.tolerance is not None:
        return parse_fraction(ref.tolerance, field="cells.tolerance", upper=0.5)
    if text is None:
        from mediaplan.medium.evaluate import ISOTONIC_TOLERANCE

        return ISOTONIC_TOLERANCE
    return parse_fraction(text, field="cells.tolerance", upper=0.5)


__all__ = ["CellReference", "ReferenceInForce", "cell_reference", "cell_tolerance", "reference_in_force"]
