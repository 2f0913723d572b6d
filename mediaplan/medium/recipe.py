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
from mediaplan.medium.errors import AmountError, MediaplanError
from mediaplan.medium.units import Amount, format_amount, parse_amount, parse_temperature, parse_volume

Origin = Literal["base", "user", "override"]

#: a substance past this multiple of its 25 °C solubility is refused, not evaluated: solubilities rise with
#: temperature, but no medium or stock made at room temperature holds twice what saturates it at 25 °C
#: (KNO3 dissolves 2.2x as much at 50 °C; common practice), and every activity model here is far past the
#: molalities it was fitted to by then, so the amount is a slip of number or unit
PLAUSIBLE_SATURATION_FACTOR = 2.0
#: the largest molality [mol/kg water] evaluated for a substance without a solubility in the catalog: as
#: model.MAX_MOLALITY, the top of every search (nothing in the catalog dissolves that far; common practice)
PLAUSIBLE_MAX_MOLALITY = 50.0
#: the most solute [kg per kg water] evaluated for a substance without a solubility in the catalog (PEG, large
#: organics): 83 % solute by mass. Saturated sucrose holds 2.1 kg per kg water at 25 °C and the PEG
#: equations reach 0.8 g/g; past 5 kg/kg no medium or stock is meant, and a heavy solute's molality stays
#: far below PLAUSIBLE_MAX_MOLALITY while the models run far out (PEG 8000 at 81 kg/kg gave 39 million
#: mOsm/kg) (common practice)
PLAUSIBLE_MAX_KG_PER_KG = 5.0

#: what the strength of a base formulation scales: scope -> catalog groups. "Half-strength MS" in most
#: laboratories means the mineral salts at half their amounts, sugars, vitamins and regulators as published
#: (common practice); "all" scales every line, "macro" the macro salts only. A new recipe scales the salts
#: (DEFAULT_STRENGTH_SCOPE); a plan file records its scope (``[medium] strength_scope``) and one without the
#: key reads as "all" (PLAN_FILE_STRENGTH_SCOPE), what the releases that wrote it computed, so that it gives
#: the numbers it gave; the command line says which scope it used and offers the others.
STRENGTH_SCOPES: dict[str, frozenset[str] | None] = {
    "salts": frozenset({"macro", "salt", "micro", "iron"}),
    "macro": frozenset({"macro", "salt"}),
    "all": None,
}
DEFAULT_STRENGTH_SCOPE = "salts"
#: the scope of a plan file with a base that states none (written before plans recorded it)
PLAN_FILE_STRENGTH_SCOPE = "all"

#: a salt past this multiple of the top molality its Pitzer parameters were fitted to (``max_m`` of the
#: catalog's pitzer.yaml) is refused: a little past it the figures still follow the data's trend, far past
#: it the osmotic coefficient turns negative or the terms overflow (KNO3 at 7.5 mol/kg, twice its max_m of
#: 3.8, gives 0 mOsm/kg at 0 °C and no answer at 25 °C). 1.25 keeps the salts of the catalog usable up to
#: their 25 °C solubility, all but CaCl2 (to 6.25 of its 7.5 mol/kg) (common practice: a quarter past the
#: data is the most any fit is trusted)
PITZER_RANGE_FACTOR = 1.25


class ScaledAmount(Amount):
    """A base line's amount times the strength: the value [SI] at once, the text (in the unit of the
    published amount, :func:`~mediaplan.medium.units.format_amount`) when first read. What
    ``Amount.scaled`` gives, without formatting a number no one may read: an evaluation at a new strength
    formats nothing until its amounts are shown. Equal to the Amount of the same value, kind and text."""

    def __init__(self, value: float, kind, text: str | None = None, *, like: str | None = None) -> None:
        object.__setattr__(self, "value", value)
        object.__setattr__(self, "kind", kind)
        if text is None:
            object.__setattr__(self, "_like", like)
        else:
            object.__setattr__(self, "text", text)

    def __getattr__(self, name: str):
        if name == "text":  # not yet formatted (an attribute lookup that found nothing comes here)
            text = format_amount(self.value, self.kind, like=self.__dict__["_like"])
            object.__setattr__(self, "text", text)
            return text
        raise AttributeError(name)

    def __eq__(self, other: object) -> bool:
        if isinstance(other, Amount):
            return (self.value, self.kind, self.text) == (other.value, other.kind, other.text)
        return NotImplemented

    __hash__ = Amount.__hash__

    def __reduce__(self):
        return (ScaledAmount, (self.value, self.kind, self.text))


@dataclass(frozen=True)
class Line:
    """One component of the effective recipe."""

    component: Component
    amount: Amount
    origin: Origin
    confidence: str | None = None  # of a published base line (A/B/C)
    scaled: bool = False  # a base line whose amount the strength changed

    def _made(self, component: Component, amount: Amount, origin: Origin, confidence: str | None,
              scaled: bool) -> Line:
        """This new, empty Line (``object.__new__``) given its fields: what ``Line(...)`` makes, at half the
        cost (for the many lines of a base at a new strength)."""
        _set(self, "__dict__", {"component": component, "amount": amount, "origin": origin,
                                "confidence": confidence, "scaled": scaled})
        return self


@dataclass(frozen=True)
class Recipe:
    """A medium to evaluate.

    Attributes
    ----------
    volume : text of the batch volume (e.g. ``1 L``); volume_m3 its value [m^3]
    temperature : text (e.g. ``25 degC``); temperature_k its value [K]
    base : id of a published medium in the catalog, or None
    strength : factor on the base formulation's amounts (0.5 for half strength)
    strength_scope : which base lines the strength scales (:data:`STRENGTH_SCOPES`: ``salts``, the default,
        ``all`` or ``macro``)
    amounts : component id -> Amount, in the user's order (overrides and additions)
    storage_temperature : text of the temperature the medium (or its stocks) is kept at (e.g. ``4 degC``),
        or None when the plan states none; storage_temperature_k its value [K] (None when not stated)
    """

    volume: str = "1 L"
    temperature: str = "25 degC"
    base: str | None = None
    strength: float = 1.0
    amounts: tuple[tuple[str, Amount], ...] = ()
    notes_for: dict[str, str] = field(default_factory=dict, compare=False)
    storage_temperature: str | None = None
    strength_scope: str = DEFAULT_STRENGTH_SCOPE

    def __post_init__(self) -> None:
        if self.strength_scope not in STRENGTH_SCOPES:
            raise AmountError(f"strength scope {self.strength_scope!r} is not one of "
                              f"{', '.join(STRENGTH_SCOPES)}", field="strength_scope",
                              hint="all, salts (the usual meaning of half-strength) or macro")
        if isinstance(self.strength, bool) or not isinstance(self.strength, (int, float)) or not math.isfinite(
                self.strength) or self.strength < 0:
            raise AmountError(f"strength {self.strength!r} must be a number of 0 or more", field="strength",
                              hint="1 for full strength, 0.5 for half")
        if self.strength > 20:
            raise AmountError(f"strength {self.strength!r} is more than 20x", field="strength",
                              hint="check the number")
        parse_volume(self.volume, field="volume")
        parse_temperature(self.temperature, field="temperature")
        if self.storage_temperature is not None:
            parse_temperature(self.storage_temperature, field="storage_temperature")

    @property
    def volume_m3(self) -> float:
        return parse_volume(self.volume)

    @property
    def temperature_k(self) -> float:
        return parse_temperature(self.temperature)

    @property
    def storage_temperature_k(self) -> float | None:
        """[K] the temperature the plan says the medium is kept at, or None when it states none."""
        return None if self.storage_temperature is None else parse_temperature(self.storage_temperature)

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

    def check_plausible(self, catalog: Catalog) -> None:
        """Refuse amounts no medium can hold (:func:`check_plausible`), for a task that weighs the recipe
        without evaluating it (the preparation sheet); :func:`~mediaplan.medium.evaluate.evaluate` checks
        on its own."""
        from mediaplan.medium.model import compiled

        lines = self.lines(catalog)
        if not lines:
            return
        model = compiled(catalog, [ln.component for ln in lines], self.temperature_k)
        n, b = model.amounts_to_arrays([ln.amount for ln in lines])
        check_plausible(lines, molality_of(model, lines, n, b), catalog.pitzer)

    def scales(self, component: Component) -> bool:
        """True when the strength applies to this component's base line (by its catalog group)."""
        groups = STRENGTH_SCOPES[self.strength_scope]
        return groups is None or component.group in groups

    # ---- the effective component list ------------------------------------------------------
    def lines(self, catalog: Catalog) -> list[Line]:
        """Base formulation × strength (on the lines of :attr:`strength_scope`, marked ``scaled``), then user
        amounts (override by component id; 0 removes)."""
        out = self._merged(catalog, self._base_lines(catalog) if self.base else ())
        return [ln for ln in out.values() if not ln.amount.is_zero]

    def lines_at_full_strength(self, catalog: Catalog) -> tuple[list[Line], list[float] | None]:
        """:meth:`lines` with each scaled base line given as its full-strength line, and the factor its
        amount takes: (lines, factors), factors[i] the strength for a scaled line and 1.0 for any other, or
        None when nothing is scaled. The same components, origins and confidences in the same order as
        :meth:`lines`; line i's amount there is ``lines[i].amount`` times ``factors[i]`` (its value
        ``value * factor``, its text :func:`~mediaplan.medium.units.format_amount` of that value like the
        published text). What an evaluation at a strength never seen before reads without making a line
        object per scaled line (:func:`~mediaplan.medium.evaluate.evaluate`)."""
        if not self.base or self.strength == 1:
            return self.lines(catalog), None
        groups, f = STRENGTH_SCOPES[self.strength_scope], self.strength
        lines, factors = [], []
        for ln in self._merged(catalog, self._full_lines(catalog)).values():
            k = f if ln.origin == "base" and (groups is None or ln.component.group in groups) else 1.0
            if ln.amount.value * k == 0.0:  # what ScaledAmount.is_zero (Amount.is_zero) says of the line
                continue
            lines.append(ln)
            factors.append(k)
        return lines, factors

    def _merged(self, catalog: Catalog, base) -> dict[str, Line]:
        """The base lines given, then the user's amounts over them (override by component id, and a
        different form of the same substance replaces a base line too), by component id in order."""
        out: dict[str, Line] = {}
        for ln in base:
            out[ln.component.id] = ln
        for cid, amt in self.amounts:
            comp = catalog.components.get(cid)  # an id: what resolve() finds first
            if comp is None:
                comp = catalog.resolve(cid, field=f"components.{cid}").component
            if comp.id in out:
                # same component overridden; a different form of the same substance replaces it too
                out[comp.id] = _new(Line)._made(comp, amt, "override", None, False)
            else:
                sub = comp.substance  # a line without a substance is the same as no other
                same = [k for k, ln in out.items() if ln.origin == "base" and ln.component.substance
                        and ln.component.substance == sub] if out and sub else []
                for k in same:
                    del out[k]
                out[comp.id] = _new(Line)._made(comp, amt, "override" if same else "user", None, False)
        return out

    def _full_lines(self, catalog: Catalog) -> list[Line]:
        """The lines of the base formulation at full strength (kept for the last few bases asked: they depend
        on the catalog's medium and components alone, which are checked to be the same objects at each use)."""
        medium = catalog.medium(self.base, field="base")
        got = _FULL_LINES.get(self.base)
        # the catalog's components the same objects as the lines' (looked up and compared in C: a list's ==
        # takes an object as equal to itself before asking it)
        if got is not None and got[0] is medium and list(map(catalog.components.get, got[2])) == got[3]:
            return got[1]
        full = [Line(catalog.components[ml.component], ml.amount, "base", ml.confidence, False)
                for ml in medium.lines]
        if len(_FULL_LINES) >= 16:
            _FULL_LINES.clear()
        # the medium kept: its id cannot be reused while cached
        _FULL_LINES[self.base] = (medium, full, [ln.component.id for ln in full], [ln.component for ln in full])
        return full

    def _base_lines(self, catalog: Catalog) -> list[Line]:
        """The lines of the base formulation at this strength and scope (:meth:`_full_lines`, kept for the last
        few strengths asked). At a new strength only the scaled lines are made, each amount a
        :class:`ScaledAmount` (formatted when first read)."""
        full = self._full_lines(catalog)
        if self.strength == 1:
            return full
        key = (self.base, self.strength, self.strength_scope)
        got = _BASE_LINES.get(key)
        if got is not None and got[0] is full:  # made from these full-strength lines
            return got[1]
        groups, f = STRENGTH_SCOPES[self.strength_scope], self.strength
        lines = []
        for ln in full:
            comp = ln.component
            if groups is None or comp.group in groups:
                a = ln.amount
                # made field by field, in each new object's own namespace (cheaper than giving it a new
                # one): what ScaledAmount(...) and Line(...) make
                amt = _new(ScaledAmount)
                d = amt.__dict__
                d["value"] = a.value * f
                d["kind"] = a.kind
                d["_like"] = a.text
                conf = ln.confidence
                ln = _new(Line)
                d = ln.__dict__
                d["component"] = comp
                d["amount"] = amt
                d["origin"] = "base"
                d["confidence"] = conf
                d["scaled"] = True
            lines.append(ln)
        if len(_BASE_LINES) >= 16:
            _BASE_LINES.clear()
        _BASE_LINES[key] = (full, lines)
        return lines


_new, _set = object.__new__, object.__setattr__


#: base id -> (the catalog's Medium, its lines at full strength, their component ids, their components);
#: (base id, strength, scope) -> (those full-strength lines, the lines at that strength): see
#: Recipe._full_lines and Recipe._base_lines. Two tables, so that many new
#: strengths do not push the full-strength lines out.
_FULL_LINES: dict[str, tuple] = {}
_BASE_LINES: dict[tuple, tuple] = {}


def check_plausible(lines: list[Line], molality, pitzer=None, *, model=None) -> None:
    """Refuse amounts no medium can hold, before any model is asked about them.

    Parameters
    ----------
    lines : the effective recipe (:meth:`Recipe.lines`)
    molality : molality of each line's component [mol/kg water], same order
    pitzer : the catalog's Pitzer parameters (``Catalog.pitzer``), for the range of each salt's own pair
    model : the compiled model of these lines (:func:`~mediaplan.medium.model.compiled`), when the caller has
        it: the limits are then kept with it

    Raises
    ------
    AmountError naming the line (``medium.components.ID``, or ``medium.strength`` for a base line) and the
    limit, when a substance (all its forms together) is past :data:`PLAUSIBLE_SATURATION_FACTOR` times its
    25 °C solubility (:attr:`Component.saturation_molality`), or past :data:`PLAUSIBLE_MAX_MOLALITY` or
    :data:`PLAUSIBLE_MAX_KG_PER_KG` without a solubility, or when a molality is not a finite number.
    """
    if within_limits(lines, molality, pitzer, model):
        return
    total: dict[str, float] = {}
    first: dict[str, Line] = {}
    for ln, m in zip(lines, molality, strict=True):
        m = float(m)
        key = ln.component.substance or ln.component.id
        if not math.isfinite(m) or m < 0:
            raise AmountError(f"{ln.component.name} at {ln.amount.text} gives no finite molality",
                              field=_field_of(ln), hint="check the amount and its unit")
        total[key] = total.get(key, 0.0) + m
        if key not in first or first[key].origin == "base":
            first[key] = ln
    for key, m in total.items():
        ln = first[key]
        c = ln.component
        limit, why = _limit_of(c, pitzer)
        if m > limit:
            name = c.name if not c.formula or c.formula == c.name else f"{c.name} ({c.formula})"
            what = ln.amount.text if ln.amount.kind == "molal" else f"{ln.amount.text} ({m:.3g} mol/kg)"
            raise AmountError(f"{name} at {what} is past {limit:.3g} mol/kg, {why}",
                              field=_field_of(ln), hint="check the number and its unit")


#: (components, which lines are base lines) -> (the Pitzer parameters, each substance's line indices and
#: limit [mol/kg]): the limits of :func:`check_plausible` depend on the lines alone, not on the amounts
_LIMITS: dict[tuple, tuple] = {}


def within_limits(lines: list[Line], molality, pitzer, model=None) -> bool:
    """True when every molality is finite and no substance reaches its limit: the answer of
    :func:`check_plausible` without building its messages (False: let it look, and say what is wrong)."""
    if model is not None and model.catalog.pitzer is pitzer and len(model.components) == len(lines):
        # the model fixes the components (ids and digests) and the parameters: only the origins can differ
        got = model.memo(("plausible", tuple(ln.origin == "base" for ln in lines)),
                         lambda: (pitzer, _limits(lines, pitzer)))
    else:
        key = tuple((ln.component.id, ln.component.digest, ln.origin == "base") for ln in lines)
        got = _LIMITS.get(key)
        if got is None or got[0] is not pitzer:  # the parameters object is kept: its id cannot be reused
            got = (pitzer, _limits(lines, pitzer))
            if len(_LIMITS) >= 64:
                _LIMITS.clear()
            _LIMITS[key] = got
    m = molality.tolist() if hasattr(molality, "tolist") else [float(x) for x in molality]
    for x in m:
        if not (x >= 0 and math.isfinite(x)):
            return False
    for idx, limit in got[1]:
        total = m[idx[0]]
        for i in idx[1:]:
            total += m[i]
        if total > limit:
            return False
    return True


def plausible_limits(lines: list[Line], pitzer) -> list[tuple[list[int], float]]:
    """Per substance of the lines: (the indices of its lines, the most it may reach [mol/kg], all its forms
    together), as :func:`check_plausible` sets them; for a batch of many compositions of these lines."""
    return _limits(lines, pitzer)


def _limits(lines: list[Line], pitzer) -> list[tuple[list[int], float]]:
    """Per substance of the lines: (the indices of its lines, its limit [mol/kg]) as :func:`check_plausible`
    sets them (the component of its first line, a user's line before a base line)."""
    idx: dict[str, list[int]] = {}
    first: dict[str, Line] = {}
    for i, ln in enumerate(lines):
        key = ln.component.substance or ln.component.id
        idx.setdefault(key, []).append(i)
        if key not in first or first[key].origin == "base":
            first[key] = ln
    return [(members, _limit_of(first[key].component, pitzer)[0]) for key, members in idx.items()]


def _limit_of(c: Component, pitzer) -> tuple[float, str]:
    """(the most of c's substance evaluated [mol/kg], why, in words): twice its 25 °C solubility, else
    :data:`PLAUSIBLE_MAX_MOLALITY` or :data:`PLAUSIBLE_MAX_KG_PER_KG` (the lower), lowered to
    :data:`PITZER_RANGE_FACTOR` times its Pitzer pair's data where that is lower still."""
    m_sat = c.saturation_molality
    if m_sat is not None:
        limit = PLAUSIBLE_SATURATION_FACTOR * m_sat
        why = (f"twice its solubility at 25 °C ({c.solubility:g} g/100 g water, {m_sat:.3g} mol/kg); "
               "no medium holds that much")
    else:
        limit = PLAUSIBLE_MAX_MOLALITY
        why = "the most any medium or stock holds"
        M = c.anhydrous_molar_mass  # [g/mol] of the solute itself
        if M and M > 0 and limit > PLAUSIBLE_MAX_KG_PER_KG * 1000.0 / M:
            limit = PLAUSIBLE_MAX_KG_PER_KG * 1000.0 / M
            why = (f"{PLAUSIBLE_MAX_KG_PER_KG:g} kg per kg of water, the most solute any medium or stock "
                   "holds")
    pair = _pair_range(c, pitzer)
    if pair is not None and PITZER_RANGE_FACTOR * pair[1] < limit:
        limit = PITZER_RANGE_FACTOR * pair[1]
        why = (f"{PITZER_RANGE_FACTOR:g} times the top of the data its Pitzer parameters were fitted to "
               f"({pair[0]}, {pair[1]:g} mol/kg); past it no figure of the model can be trusted")
    return limit, why


def _pair_range(c: Component, pitzer) -> tuple[str, float] | None:
    """(pair in words, max_m [mol/kg]) of a salt made of one cation and one anion with Pitzer parameters."""
    if pitzer is None or len(c.species) != 2:
        return None
    (a, _), (b, _) = c.species
    binary = getattr(pitzer, "binary", {}) or {}
    p = binary.get((a, b)) or binary.get((b, a))
    max_m = getattr(p, "max_m", None)
    if not max_m:
        return None
    return f"{p.cation.split('[')[0]}–{p.anion.split('[')[0]}", float(max_m)


def molality_of(model, lines: list[Line], n, b):
    """Molality of each line [mol/kg water] from the compiled model (``model.molality``), with n [mol per m^3
    of medium] and b [mol per kg water]; when the solutes leave no water, the error names the line that takes
    the most volume and its share of it."""
    try:
        return model.molality(n, b)
    except AmountError:
        raise
    except MediaplanError as exc:
        takes = [float(x) for x in n * model.v]
        i = max(range(len(lines)), key=takes.__getitem__) if lines else None
        if i is None or takes[i] <= 0:
            raise
        ln = lines[i]
        raise AmountError(f"{ln.component.name} at {ln.amount.text} would take {100 * takes[i]:.0f} % of the "
                          "volume: no water left", field=_field_of(ln), hint=exc.hint) from None


def _field_of(ln: Line) -> str:
    return "medium.strength" if ln.origin == "base" else f"medium.components.{ln.component.id}"


def strength_note(recipe: Recipe, catalog: Catalog) -> str | None:
    """In words, what the strength of the base did (None at full strength or without a base)."""
    if not recipe.base or recipe.strength == 1:
        return None
    lines = [ln for ln in recipe.lines(catalog) if ln.origin == "base"]
    scaled = [ln for ln in lines if ln.scaled]
    kept = [ln for ln in lines if not ln.scaled]
    head = f"strength {recipe.strength:g} of {recipe.base} scales {len(scaled)} of its {len(lines)} lines"
    if recipe.strength_scope == "all":
        return head + " (salts, sugars, vitamins and regulators alike; scope salts scales only the salts)"
    what = "the mineral salts" if recipe.strength_scope == "salts" else "the macro salts"
    return head + f" ({what}; {len(kept)} kept as published: " + ", ".join(
        ln.component.name for ln in kept[:4]) + (" …" if len(kept) > 4 else "") + ")"
