"""The one place where unit strings become numbers (and back).

One pint registry for the whole program. Amounts, volumes, temperatures and targets are parsed here,
once, into SI floats; the core never sees pint. The osmole is our own dimension, so that a
mol -> osmol conversion can never happen silently: it always goes through an osmotic coefficient.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal

from mediaplan.medium.errors import AmountError

if TYPE_CHECKING:
    import pint

_REGISTRY: pint.UnitRegistry | None = None
_CACHE_FOLDER: Path | None = None


def use_cache_folder(folder: Path | None) -> None:
    """Keep pint's parsed definitions in ``folder`` (start-up 0.3 s -> 0.02 s). The front ends call this
    with the user's cache folder before the first parse; the medium layer itself chooses no folder."""
    global _CACHE_FOLDER
    _CACHE_FOLDER = folder


def registry() -> pint.UnitRegistry:
    """The one registry, built on first use; any trouble with the cache folder falls back to parsing the
    definitions afresh."""
    global _REGISTRY
    if _REGISTRY is None:
        import pint

        reg = None
        if _CACHE_FOLDER is not None:
            try:
                _CACHE_FOLDER.mkdir(parents=True, exist_ok=True)
                reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=_CACHE_FOLDER)
            except Exception:  # noqa: BLE001 - a cache must never stop the program
                reg = None
        if reg is None:
            reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
        reg.define("osmole = [osmotic_amount] = osmol = Osm")
        _REGISTRY = reg
    return _REGISTRY


def Q_(value, unit=None):  # noqa: N802 - pint's customary name
    """A quantity in the one registry."""
    return registry().Quantity(value, unit)


def __getattr__(name: str):
    if name == "ureg":
        return registry()
    raise AttributeError(name)


AmountKind = Literal["mass_conc", "molar", "molal", "mass_per_water", "vol_frac"]

#: SI unit of each amount kind (what ``Amount.value`` is in)
SI_UNIT: dict[str, str] = {
    "mass_conc": "kg/m^3",  # numerically g/L
    "molar": "mol/m^3",  # numerically mmol/L
    "molal": "mol/kg",  # per kg of water
    "mass_per_water": "kg/kg",  # kg solute per kg water
    "vol_frac": "m^3/m^3",  # volume of a liquid solute per volume of medium
}

_NUM = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|inf|infinity)"
_AMOUNT_RE = re.compile(rf"^\s*(?P<num>{_NUM})\s*(?P<unit>.*?)\s*$", re.IGNORECASE)

# Magnitudes beyond these (in SI units of each kind) are typing mistakes, not media.
_ABSURD_HIGH = {"mass_conc": 5000.0, "molar": 30000.0, "molal": 200.0, "mass_per_water": 20.0, "vol_frac": 1.0}
_ABSURD_LOW = 1e-15


@dataclass(frozen=True)
class Amount:
    """A parsed amount of one component.

    Attributes
    ----------
    value : float, SI value of the amount in ``SI_UNIT[kind]``
    kind : what the amount measures (mass concentration, molarity, molality ...)
    text : the amount as the user wrote it (normalised spacing), written back unchanged to plan files
    """

    value: float
    kind: AmountKind
    text: str

    @property
    def is_zero(self) -> bool:
        return self.value == 0.0

    def scaled(self, factor: float) -> Amount:
        """The same amount times ``factor`` (strength of a base formulation)."""
        return Amount(self.value * factor, self.kind, format_amount(self.value * factor, self.kind, like=self.text))


def _normalise(text: str) -> str:
    t = text.strip().replace("μ", "u").replace("µ", "u").replace("·", "*").replace("×", "*")
    t = re.sub(r"\s+", " ", t)
    return t


@lru_cache(maxsize=256)
def _dims(unit_text: str) -> pint.util.UnitsContainer:
    return registry().parse_units(unit_text).dimensionality


def _split_unit(unit: str) -> tuple[str, str | None]:
    if "/" not in unit:
        return unit, None
    num, _, den = unit.partition("/")
    return num.strip() or "1", den.strip()


@lru_cache(maxsize=4096)
def parse_amount(text: str, *, field: str | None = None) -> Amount:
    """Parse an amount string such as ``30 g/L``, ``1650 mg/L``, ``3 % w/v``, ``20 mM``, ``0.4 mol/L``,
    ``0.5 mol/kg`` (per kg water), ``150 g/kg`` (per kg water) or ``5 % v/v`` and ``50 mL/L`` (liquids).

    Returns
    -------
    Amount with an SI value [kg/m^3, mol/m^3, mol/kg, kg/kg or m^3/m^3 by kind]

    Raises
    ------
    AmountError for a malformed number, an unknown unit, a unit of the wrong dimension, NaN,
    infinities, negative values and absurd magnitudes.
    """
    if not isinstance(text, str):
        raise AmountError(f"amount {text!r} is not text", field=field, hint='write it like "30 g/L"')
    norm = _normalise(text)
    m = _AMOUNT_RE.match(norm)
    if not m or not norm:
        raise AmountError(f"cannot read amount {text!r}", field=field,
                          hint='write a number and a unit, e.g. "30 g/L", "20 mM" or "0.5 mol/kg"')
    number = float(m.group("num"))
    unit = m.group("unit")
    if not math.isfinite(number):
        raise AmountError(f"amount {text!r} is not a finite number", field=field, hint="type a number")
    if number < 0:
        raise AmountError(f"amount {text!r} is negative", field=field, hint="amounts are 0 or more; 0 removes it")
    if not unit:
        raise AmountError(f"amount {text!r} has no unit", field=field, hint='add a unit, e.g. "30 g/L" or "20 mM"')
    kind: AmountKind
    low = unit.lower().replace(" ", "")
    if low in ("%w/v", "%(w/v)", "%wv"):
        kind, si = "mass_conc", number * 10.0  # 1 % w/v = 1 g / 100 mL = 10 g/L
    elif low in ("%v/v", "%(v/v)", "%vv"):
        kind, si = "vol_frac", number / 100.0
    elif low.startswith("%"):
        raise AmountError(f"amount {text!r}: say which percent", field=field,
                          hint='use "% w/v" (g per 100 mL) or "% v/v" (mL per 100 mL)')
    else:
        num_u, den_u = _split_unit(unit)
        try:
            num_q = Q_(1.0, num_u) if num_u != "1" else Q_(1.0)
            den_q = Q_(1.0, den_u) if den_u else None
        except Exception as exc:  # noqa: BLE001 - pint's parser raises many kinds (TokenError, AssertionError...)
            raise AmountError(f"unknown unit in {text!r}", field=field,
                              hint='use units such as mg/L, g/L, mM, mol/L, mol/kg or "% w/v"') from exc
        nd = num_q.dimensionality
        _MASS, _SUBST, _VOL = _dims("g"), _dims("mol"), _dims("L")
        if den_q is None:
            if nd == _SUBST / _VOL:
                kind, si = "molar", number * num_q.to("mol/m^3").magnitude
            else:
                raise AmountError(f"{text!r} is not a concentration", field=field,
                                  hint='give an amount per volume or per kg water, e.g. "30 g/L" or "20 mM"')
        else:
            dd = den_q.dimensionality
            if nd == _MASS and dd == _VOL:
                kind, si = "mass_conc", number * (num_q / den_q).to("kg/m^3").magnitude
            elif nd == _SUBST and dd == _VOL:
                kind, si = "molar", number * (num_q / den_q).to("mol/m^3").magnitude
            elif nd == _SUBST and dd == _MASS:
                kind, si = "molal", number * (num_q / den_q).to("mol/kg").magnitude
            elif nd == _MASS and dd == _MASS:
                kind, si = "mass_per_water", number * (num_q / den_q).to("kg/kg").magnitude
            elif nd == _VOL and dd == _VOL:
                kind, si = "vol_frac", number * (num_q / den_q).to("m^3/m^3").magnitude
            else:
                raise AmountError(f"{text!r} is not a concentration", field=field,
                                  hint='use mass or moles per litre, or moles per kg water, e.g. "30 g/L"')
    if si > _ABSURD_HIGH[kind]:
        raise AmountError(f"amount {text!r} is far beyond anything that dissolves", field=field,
                          hint="check the number and its unit")
    if 0 < si < _ABSURD_LOW:
        raise AmountError(f"amount {text!r} is vanishingly small", field=field,
                          hint="check the number and its unit; 0 removes the component")
    return Amount(si, kind, " ".join(text.split()))


def _fmt(x: float) -> str:
    if x == 0:
        return "0"
    if abs(x) >= 100:
        return f"{x:.4g}" if abs(x) < 1e5 else f"{x:.0f}"
    return f"{x:.4g}"


def format_amount(value: float, kind: AmountKind, *, like: str | None = None) -> str:
    """Write an SI amount back as text, in the unit family of ``like`` where possible."""
    unit_hint = ""
    if like:
        m = _AMOUNT_RE.match(_normalise(like))
        if m:
            unit_hint = m.group("unit")
    if kind == "mass_conc":
        if unit_hint.lower().replace(" ", "") in ("%w/v",):
            return f"{_fmt(value / 10.0)} % w/v"
        if unit_hint in ("mg/L", "g/L", "ug/L", "mg/mL", "g/mL"):
            return f"{_fmt(Q_(value, 'kg/m^3').to(unit_hint).magnitude)} {unit_hint}"
        return f"{_fmt(value * 1000.0)} mg/L" if value < 1.0 else f"{_fmt(value)} g/L"
    if kind == "molar":
        if unit_hint in ("M", "mM", "uM", "mol/L", "mmol/L", "umol/L"):
            return f"{_fmt(Q_(value, 'mol/m^3').to(unit_hint).magnitude)} {unit_hint}"
        return f"{_fmt(value)} mM"
    if kind == "molal":
        if unit_hint in ("mol/kg", "mmol/kg"):
            return f"{_fmt(Q_(value, 'mol/kg').to(unit_hint).magnitude)} {unit_hint}"
        return f"{_fmt(value)} mol/kg"
    if kind == "mass_per_water":
        return f"{_fmt(value * 1000.0)} g/kg"
    if unit_hint.lower().replace(" ", "") == "%v/v":
        return f"{_fmt(value * 100.0)} % v/v"
    return f"{_fmt(value * 1000.0)} mL/L"


def _parse_quantity(text: str, what: str, example: str, field: str | None) -> pint.Quantity:
    if not isinstance(text, str):
        text = str(text)
    norm = _normalise(text).replace("°C", "degC").replace("° C", "degC").replace("℃", "degC")
    norm = re.sub(r"(?<=\d)\s*C$", " degC", norm)
    try:
        q = Q_(norm)
    except Exception as exc:  # noqa: BLE001 - pint's parser raises many kinds
        raise AmountError(f"cannot read {what} {text!r}", field=field, hint=f'write it like "{example}"') from exc
    if not isinstance(q, registry().Quantity):
        raise AmountError(f"{what} {text!r} has no unit", field=field, hint=f'write it like "{example}"')
    if not math.isfinite(float(q.magnitude)):
        raise AmountError(f"{what} {text!r} is not a finite number", field=field, hint=f'write it like "{example}"')
    return q


@lru_cache(maxsize=1024)
def parse_volume(text: str, *, field: str | None = None) -> float:
    """Parse a batch or medium volume (``2 L``, ``500 mL``) -> [m^3]; must be positive and sane."""
    q = _parse_quantity(text, "volume", "2 L", field)
    if q.dimensionality != _dims("L"):
        raise AmountError(f"{text!r} is not a volume", field=field, hint='write it like "1 L" or "500 mL"')
    v = float(q.to("m^3").magnitude)
    if v <= 0:
        raise AmountError(f"volume {text!r} must be more than zero", field=field, hint='e.g. "1 L"')
    if v > 100.0:
        raise AmountError(f"volume {text!r} is more than 100 m³", field=field, hint="check the unit")
    if v < 1e-9:
        raise AmountError(f"volume {text!r} is less than a microlitre", field=field, hint="check the unit")
    return v


@lru_cache(maxsize=256)
def parse_temperature(text: str, *, field: str | None = None) -> float:
    """Parse a temperature (``25 degC``, ``25 °C``, ``298.15 K``) -> [K]; culture range 0-40 °C."""
    q = _parse_quantity(text, "temperature", "25 degC", field)
    if q.dimensionality != registry().parse_units("K").dimensionality:
        raise AmountError(f"{text!r} is not a temperature", field=field, hint='write it like "25 degC"')
    t = float(q.to("K").magnitude)
    if not 273.15 <= t <= 313.15:
        raise AmountError(f"temperature {text!r} is outside 0-40 °C", field=field,
                          hint="the models hold for liquid media between 0 and 40 °C")
    return t


@dataclass(frozen=True)
class Target:
    """A target for the solver: a water potential [Pa] or an osmolality [osmol/kg]."""

    kind: Literal["potential", "osmolality"]
    value: float
    text: str


@lru_cache(maxsize=256)
def parse_target(text: str, *, field: str | None = None) -> Target:
    """Parse ``-0.8 MPa``, ``-8 bar``, ``-800 kPa`` (water potential) or ``450 mOsm/kg`` (osmolality)."""
    norm = _normalise(text)
    q = _parse_quantity(norm.replace("mosm", "mOsm").replace("MOsm", "mOsm"), "target", "-0.8 MPa", field)
    if q.dimensionality == registry().parse_units("Pa").dimensionality:
        v = float(q.to("Pa").magnitude)
        if v > 0:
            raise AmountError(f"target {text!r} is positive", field=field,
                              hint="water potentials of solutions are negative, e.g. -0.8 MPa")
        if v < -20e6:
            raise AmountError(f"target {text!r} is below -20 MPa", field=field, hint="check the number and unit")
        return Target("potential", v, norm)
    if q.dimensionality == registry().parse_units("osmol/kg").dimensionality:
        v = float(q.to("osmol/kg").magnitude)
        if v < 0:
            raise AmountError(f"target {text!r} is negative", field=field, hint="osmolalities are positive")
        if v > 10:
            raise AmountError(f"target {text!r} is above 10 Osm/kg", field=field, hint="check the number and unit")
        return Target("osmolality", v, norm)
    raise AmountError(f"{text!r} is not a water potential or an osmolality", field=field,
                      hint='write "-0.8 MPa", "-8 bar" or "450 mOsm/kg"')
