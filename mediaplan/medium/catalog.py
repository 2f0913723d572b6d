"""The component catalog as the engine sees it: chemicals as sold, published media, model parameters.

``Catalog`` answers questions (resolve a name, find a medium, search); it reads no file. Loading and
validating the YAML folders, and the bundled catalog's location, live in :mod:`mediaplan.files.catalog`.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

from mediaplan.medium.errors import UnknownComponentError
from mediaplan.medium.units import Amount
from mediaplan.thermo.params import NeutralParams, PitzerParams

GROUPS = (
    "macro", "micro", "iron", "carbon", "osmoticum", "organic", "vitamin", "amino_acid",
    "growth_regulator", "buffer", "ph", "gelling", "cryoprotectant", "salt",
)
#: groups shown together in the contribution chart
GROUP_LABELS = {
    "macro": "macro salts", "salt": "macro salts", "micro": "micro salts", "iron": "iron chelate",
    "carbon": "carbon source", "osmoticum": "osmoticum", "cryoprotectant": "osmoticum",
    "organic": "organics", "vitamin": "organics", "amino_acid": "organics", "growth_regulator": "organics",
    "buffer": "buffer & pH", "ph": "buffer & pH", "gelling": "gelling agent",
}



def normalise_name(text: str) -> str:
    """Key used for alias look-up: case, spaces, dashes and hydrate dots (·, ., *) do not matter."""
    t = text.strip().lower().replace("·", ".").replace("*", ".").replace("•", ".")
    t = t.replace("µ", "u").replace("μ", "u")
    t = re.sub(r"[\s\-_,]+", "", t)
    return t


#: temperature [K] of the catalog's single ``solubility`` figure
SOLUBILITY_T_K = 298.15


@dataclass(frozen=True)
class SolubilityPoint:
    """One row of a component's solubility table: temperature_k [K], g_per_100g_water [g anhydrous substance
    per 100 g water] at saturation, the source of the row, and whether the row is recalled (from memory)."""

    temperature_k: float
    g_per_100g_water: float
    source: str
    from_memory: bool = False


@dataclass(frozen=True)
class Saturation:
    """The solubility of a substance at one temperature, as far as the catalog knows it.

    molality [mol/kg water] at saturation, or None when no figure holds at ``asked_k``;
    g_per_100g_water [g anhydrous per 100 g water], likewise; temperature_k [K] the temperature the figure
    belongs to (``asked_k`` when interpolated in a table, 298.15 K when only the 25 °C figure is known, None
    when no figure holds); asked_k [K] the temperature asked for; note: why the figure is not at ``asked_k``
    (outside the table's range, only a 25 °C value), or None; from_memory: a recalled row went into it.
    """

    molality: float | None
    g_per_100g_water: float | None
    temperature_k: float | None
    asked_k: float
    note: str | None = None
    from_memory: bool = False

    @property
    def at_asked(self) -> bool:
        """The figure is the solubility at the temperature asked for (interpolated in a table, or the
        25 °C figure asked at 25 °C)."""
        return self.temperature_k is not None and abs(self.temperature_k - self.asked_k) < 0.05


def celsius(T: float) -> str:
    """A temperature [K] as short text in °C (``4 °C``, ``22.5 °C``)."""
    return f"{T - 273.15:.3g} °C" if abs(T - 273.15) < 100 else f"{T - 273.15:.0f} °C"


@dataclass(frozen=True)
class Component:
    """One chemical in the form it is sold (hydrates are separate components).

    molar_mass [g/mol] of the form as sold; hydrate_water [mol/mol]; solubility [g anhydrous per
    100 g water, 25 °C]; apparent_molar_volume [cm^3/mol]; density [g/cm^3] (liquids);
    species: what one formula unit dissolves into; solubility_table: the solubility at several
    temperatures (rows in increasing temperature, each with its source; empty when only the 25 °C
    figure is known), read by :meth:`saturation_at`.
    """

    id: str
    name: str
    formula: str | None
    aliases: tuple[str, ...]
    cas: str | None
    group: str
    molar_mass: float | None
    hydrate_water: float
    substance: str | None
    default_form: bool
    species: tuple[tuple[str, float], ...]
    solubility: float | None
    apparent_molar_volume: float | None
    density: float | None
    reflection_coefficient: float | None
    hazard: str | None
    sources: dict[str, str]
    file: str
    line: int
    digest: str
    solubility_table: tuple[SolubilityPoint, ...] = ()

    @property
    def anhydrous_molar_mass(self) -> float | None:
        """[g/mol] of the substance without its hydrate water."""
        if self.molar_mass is None:
            return None
        return self.molar_mass - self.hydrate_water * 18.015268

    @property
    def saturation_molality(self) -> float | None:
        """[mol/kg water] of the substance at saturation (25 °C, from ``solubility``), or None without data.
        The one place the solubility in g per 100 g water becomes a molality."""
        if self.solubility is None or not self.anhydrous_molar_mass:
            return None
        return self.solubility * 10.0 / self.anhydrous_molar_mass

    def saturation_at(self, T: float) -> Saturation:
        """The solubility at temperature T [K] (see :class:`Saturation`).

        With a solubility table: linear interpolation between the two rows around T (in g per 100 g
        water, then to mol/kg with the anhydrous molar mass). Outside the table's temperatures nothing is
        extrapolated: the figure is None and ``note`` says which temperatures the table covers. Without a
        table only the 25 °C ``solubility`` is known: it is returned with ``temperature_k`` 298.15 K and,
        at any other temperature, a note that says so. The one place a solubility becomes a molality at
        a temperature (:attr:`saturation_molality` is the 25 °C figure).
        """
        M = self.anhydrous_molar_mass
        T = float(T)
        if not M:
            return Saturation(None, None, None, T)
        rows = self.solubility_table
        if rows:
            lo, hi = rows[0].temperature_k, rows[-1].temperature_k
            if not lo - 1e-6 <= T <= hi + 1e-6:
                return Saturation(None, None, None, T, note=(
                    f"the solubility of {self.name} is tabulated only from {celsius(lo)} to {celsius(hi)}"),
                    from_memory=False)
            k = next((i for i in range(1, len(rows)) if rows[i].temperature_k + 1e-6 >= T), len(rows) - 1)
            a, b = rows[max(k - 1, 0)], rows[k]
            if b.temperature_k == a.temperature_k:
                g, mem = a.g_per_100g_water, a.from_memory
            else:
                w = min(max((T - a.temperature_k) / (b.temperature_k - a.temperature_k), 0.0), 1.0)
                g = a.g_per_100g_water + w * (b.g_per_100g_water - a.g_per_100g_water)
                mem = (a.from_memory and w < 1.0 - 1e-9) or (b.from_memory and w > 1e-9)
            return Saturation(g * 10.0 / M, g, T, T, from_memory=mem)
        if self.solubility is None:
            return Saturation(None, None, None, T)
        note = None if abs(T - SOLUBILITY_T_K) < 0.05 else (
            f"only the solubility of {self.name} at 25 °C is known")
        mem = "from memory" in (self.sources.get("solubility") or "")
        return Saturation(self.solubility * 10.0 / M, self.solubility, SOLUBILITY_T_K, T, note=note, from_memory=mem)

    def soluble_at(self, T: float) -> tuple[Component, str]:
        """This component with ``solubility`` set to its figure at T [K] (what :meth:`Sweep.limit
        <mediaplan.medium.model.Sweep.limit>` reads), and where that figure holds in words (``at 4 °C``).
        Outside its table the nearest tabulated end is used and named as such; without a table the 25 °C
        figure is, and named too. Nothing is extrapolated silently."""
        from dataclasses import replace

        sat = self.saturation_at(T)
        if sat.at_asked:
            return replace(self, solubility=sat.g_per_100g_water), f"at {celsius(T)}"
        rows = self.solubility_table
        if rows:
            end = rows[0] if rows[0].temperature_k > T else rows[-1]
            return (replace(self, solubility=end.g_per_100g_water),
                    f"at {celsius(end.temperature_k)}, the nearest tabulated temperature to {celsius(T)}")
        if sat.molality is not None:
            return self, f"at 25 °C (only a 25 °C figure is known; asked at {celsius(T)})"
        return self, ""

    def saturation_molality_at(self, T: float) -> float | None:
        """[mol/kg water] at saturation at temperature T [K], or None when the catalog has no figure that
        holds at T (see :meth:`saturation_at`: nothing is extrapolated)."""
        sat = self.saturation_at(T)
        return sat.molality if sat.at_asked else None

    @property
    def display(self) -> str:
        return self.formula or self.name

    def source_of(self, field_name: str) -> str | None:
        return self.sources.get(field_name)


@dataclass(frozen=True)
class MediumLine:
    component: str
    amount: Amount
    confidence: str
    note: str | None = None


@dataclass(frozen=True)
class Medium:
    """A published base formulation (amounts as published, per litre of medium)."""

    id: str
    name: str
    citation: str
    doi: str | None
    confidence: str
    ph: str | None
    lines: tuple[MediumLine, ...]
    optional: tuple[MediumLine, ...]
    notes: tuple[str, ...]
    file: str
    digest: str


@dataclass
class Resolution:
    """The outcome of looking up a name: the component, and a note when a default form was chosen."""

    component: Component
    note: str | None = None


@dataclass
class Catalog:
    """Components, media and model parameters, merged from one or more folders."""

    components: dict[str, Component]
    media: dict[str, Medium]
    pitzer: PitzerParams | None
    neutral: dict[str, NeutralParams]
    folders: tuple[Path, ...]
    shadowed: list[str] = field(default_factory=list)

    # ---- look-up -------------------------------------------------------------------------
    @cached_property
    def _alias_index(self) -> dict[str, list[str]]:
        index: dict[str, list[str]] = {}

        def add(key: str, cid: str) -> None:
            k = normalise_name(key)
            if k and cid not in index.setdefault(k, []):
                index[k].append(cid)

        for c in self.components.values():
            add(c.id, c.id)
            if c.formula:
                add(c.formula, c.id)
            for a in c.aliases:
                add(a, c.id)
        # a common name names the default form
        for c in self.components.values():
            add(c.name, c.id)
        return index

    def resolve(self, name: str, *, field: str | None = None) -> Resolution:
        """Find a component by id, alias, formula or name.

        Raises UnknownComponentError with the nearest ids as a hint.
        """
        if name in self.components:
            return Resolution(self.components[name])
        hits = self._alias_index.get(normalise_name(name), [])
        if len(hits) == 1:
            comp = self.components[hits[0]]
            note = None
            if normalise_name(name) not in {normalise_name(comp.id), normalise_name(comp.formula or "")}:
                siblings = [c for c in self.components.values() if c.substance == comp.substance and c.id != comp.id]
                if siblings:
                    note = f"'{name}' taken as {comp.display} ({comp.id}); other forms: " + ", ".join(
                        s.display for s in siblings)
            return Resolution(comp, note)
        if len(hits) > 1:
            defaults = [h for h in hits if self.components[h].default_form]
            if len(defaults) == 1:
                comp = self.components[defaults[0]]
                others = ", ".join(self.components[h].display for h in hits if h != comp.id)
                return Resolution(comp, f"'{name}' taken as {comp.display} ({comp.id}); also sold as {others}")
            raise UnknownComponentError(f"'{name}' could mean " + ", ".join(hits), field=field,
                                        hint="use one of these ids")
        raise UnknownComponentError(f"unknown component '{name}'", field=field, hint=self._suggest(name))

    def _suggest(self, name: str) -> str:
        keys = list(self.components) + [a for a in self._alias_index]
        close = difflib.get_close_matches(normalise_name(name), keys, n=5, cutoff=0.5)
        ids: list[str] = []
        for k in close:
            for cid in ([k] if k in self.components else self._alias_index.get(k, [])):
                if cid not in ids:
                    ids.append(cid)
        if ids:
            return "did you mean " + ", ".join(ids[:4]) + "? Or search the catalog by name, formula or CAS number"
        return "search the catalog by name, formula or CAS number"

    def medium(self, mid: str, *, field: str | None = None) -> Medium:
        if mid in self.media:
            return self.media[mid]
        low = {k.lower(): k for k in self.media}
        key = normalise_name(mid)
        for k, real in low.items():
            if normalise_name(k) == key or normalise_name(self.media[real].name) == key:
                return self.media[real]
        close = difflib.get_close_matches(mid.lower(), list(low), n=3, cutoff=0.4)
        hint = ("did you mean " + ", ".join(low[c] for c in close) + "?") if close else (
            "known media: " + ", ".join(sorted(self.media)))
        raise UnknownComponentError(f"unknown base medium '{mid}'", field=field, hint=hint)

    def search(self, text: str, limit: int = 30) -> list[Component]:
        """Components whose id, name, formula or alias contains the text (best matches first)."""
        q = normalise_name(text)
        scored = []
        for c in self.components.values():
            keys = [c.id, c.name, c.formula or "", c.cas or "", *c.aliases]
            best = None
            for k in keys:
                nk = normalise_name(k)
                if not nk:
                    continue
                if nk == q:
                    score = 0
                elif nk.startswith(q):
                    score = 1
                elif q in nk:
                    score = 2
                else:
                    continue
                best = score if best is None else min(best, score)
            if best is not None:
                scored.append((best, not c.default_form, c.name, c))
        scored.sort(key=lambda t: t[:3])
        return [t[3] for t in scored[:limit]]


__all__ = ["Catalog", "Component", "Medium", "MediumLine", "Resolution", "GROUPS", "GROUP_LABELS", "normalise_name",
           "Saturation", "SolubilityPoint", "SOLUBILITY_T_K", "celsius"]
