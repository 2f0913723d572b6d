"""Recipes: what goes into one medium.

A Recipe is a batch volume and a temperature, an optional published base formulation at some strength,
and component amounts that override or add to it (an amount of 0 removes a base component).
Amounts stay as parsed :class:`~mediaplan.medium.units.Amount` objects (SI inside); the recipe keeps the
user's own text for each so that plan files round-trip exactly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Literal

from mediaplan.medium.catalog import Catalog, Component
from mediaplan.medium.errors import AmountError
from mediaplan.medium.units import Amount, parse_amount, parse_temperature, parse_volume

Origin = Literal["base", "user", "override"]


@dataclass(frozen=True)
class Line:
    """One component of the effective recipe."""

    component: Component
    amount: Amount
    origin: Origin
    confidence: str | None = None  # of a published base line (A/B/C)


@dataclass(frozen=True)
class Recipe:
    """A medium to evaluate.

    Attributes
    ----------
    volume : text of the batch volume (e.g. ``1 L``); volume_m3 its value [m^3]
    temperature : text (e.g. ``25 degC``); temperature_k its value [K]
    base : id of a published medium in the catalog, or None
    strength : factor on the base formulation's amounts (0.5 for half strength)
    amounts : component id -> Amount, in the user's order (overrides and additions)
    """

    volume: str = "1 L"
    temperature: str = "25 degC"
    base: str | None = None
    strength: float = 1.0
    amounts: tuple[tuple[str, Amount], ...] = ()
    notes_for: dict[str, str] = field(default_factory=dict, compare=False)

    def __post_init__(self) -> None:
        if isinstance(self.strength, bool) or not isinstance(self.strength, (int, float)) or not math.isfinite(
                self.strength) or self.strength < 0:
            raise AmountError(f"strength {self.strength!r} must be a number of 0 or more", field="strength",
                              hint="1 for full strength, 0.5 for half")
        if self.strength > 20:
            raise AmountError(f"strength {self.strength!r} is more than 20x", field="strength",
                              hint="check the number")
        parse_volume(self.volume, field="volume")
        parse_temperature(self.temperature, field="temperature")

    @property
    def volume_m3(self) -> float:
        return parse_volume(self.volume)

    @property
    def temperature_k(self) -> float:
        return parse_temperature(self.temperature)

    # ---- edits return new recipes (the domain object is immutable; views re-render) ---------
    def with_amount(self, component_id: str, amount: Amount | str) -> Recipe:
        if isinstance(amount, str):
            amount = parse_amount(amount, field=component_id)
        items = list(self.amounts)
        for i, (cid, _) in enumerate(items):
            if cid == component_id:
                items[i] = (cid, amount)
                break
        else:
            items.append((component_id, amount))
        return replace(self, amounts=tuple(items))

    def without(self, component_id: str) -> Recipe:
        return replace(self, amounts=tuple((c, a) for c, a in self.amounts if c != component_id))

    def with_settings(self, **changes) -> Recipe:
        return replace(self, **changes)

    def amount_of(self, component_id: str) -> Amount | None:
        for cid, a in self.amounts:
            if cid == component_id:
                return a
        return None

    # ---- the effective component list ------------------------------------------------------
    def lines(self, catalog: Catalog) -> list[Line]:
        """Base formulation × strength, then user amounts (override by component id; 0 removes)."""
        out: dict[str, Line] = {}
        if self.base:
            medium = catalog.medium(self.base, field="base")
            for ml in medium.lines:
                comp = catalog.components[ml.component]
                amt = ml.amount if self.strength == 1 else ml.amount.scaled(self.strength)
                out[comp.id] = Line(comp, amt, "base", ml.confidence)
        for cid, amt in self.amounts:
            comp = catalog.resolve(cid, field=f"components.{cid}").component
            if comp.id in out:
                # same component overridden; a different form of the same substance replaces it too
                out[comp.id] = Line(comp, amt, "override")
            else:
                same = [k for k, ln in out.items() if ln.origin == "base" and ln.component.substance
                        and ln.component.substance == comp.substance]
                for k in same:
                    del out[k]
                out[comp.id] = Line(comp, amt, "override" if same else "user")
        return [ln for ln in out.values() if not ln.amount.is_zero]
