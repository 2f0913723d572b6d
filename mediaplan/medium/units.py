"""The one place where unit strings become numbers (and back).

One pint registry for the whole program. Amounts, volumes, temperatures, targets, fractions and the
units of counts-file columns are parsed here, once, into SI floats; the core never sees pint. The
osmole is our own dimension, so that a mol -> osmol conversion can never happen silently: it always
goes through an osmotic coefficient.

Text goes through three steps, and pint only ever sees what the second step built:

1. :func:`normalise` - one normalising step: every kind of space becomes one plain space; the minus
   sign (U+2212) and the en dash (U+2013) become ``-``; the micro sign (U+00B5) and Greek mu (U+03BC)
   become ``u``; ``·``, ``⋅`` and ``×`` become ``*``; superscript powers (``L⁻¹``, ``m³``) become
   ``L^-1``, ``m^3``; ``°C``, ``℃``, ``°F`` become ``degC``, ``degF``; ``ℓ`` becomes ``l``.
2. Our own small grammar (checked before pint is asked anything)::

       text   := number [space] unit                      at most 100 characters
       number := [+-] digits [. digits] [e [+-] 1-3 digits]   (or nan / inf, refused later as not finite)
       unit   := factor {sep factor} [/ factor]           at most 64 characters
              |  % [w/v | v/v | (w/v) | (v/v) | wv | vv]
       sep    := * | space                                (· and × were made * by step 1)
       factor := NAME [power]     power := [^ | **] [+-] 1..3   as in L-1, L^-1, L**-1, L⁻¹, m3, m³

   NAME is one of :data:`UNIT_NAMES` (``C`` also, where the text is a temperature); ``degC`` and ``degF``
   stand alone (an offset has no meaning inside a product: ``25 degC*degC/K`` is refused). A minus reaches
   the grammar only as the sign of the number, of its exponent or of a power; a decimal comma,
   thousands separators, two ``/``, several units after ``/``, powers beyond 3, other operators,
   brackets and any other character are refused in one line that names the piece not understood.
3. pint converts the checked unit (names from the table, powers -3..3) to SI, once per distinct unit:
   the conversion factor is cached, so a new number in a known unit costs a multiplication.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import cached_property, lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Literal, NamedTuple

from mediaplan.medium.errors import AmountError

if TYPE_CHECKING:
    import pint

_REGISTRY: pint.UnitRegistry | None = None
_CACHE_FOLDER: Path | None = None


def use_cache_folder(folder: Path | None) -> None:
    """Keep pint's parsed definitions in ``folder`` (start-up 0.3 s -> 0.02 s). The front ends call this
    with the user's cache folder before the first parse; the medium layer itself chooses no folder."""
    global _CACHE_FOLDER, _FACTS
    _CACHE_FOLDER = folder
    _FACTS = None  # read again from the new folder (see _unit_facts)


def cache_folder() -> Path | None:
    """The folder the front ends gave :func:`use_cache_folder` (None: no caches on disk this run)."""
    return _CACHE_FOLDER


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
    """A quantity in the one registry (for unit text of our own; user text goes through the grammar)."""
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

#: What :func:`measure` and :func:`unit_dimension` tell apart, and the SI unit of each value.
#: "fraction" is a bare percent; "other" is any other unit the grammar reads (a mass, a length...).
MEASURE_SI_UNIT: dict[str, str] = {
    **SI_UNIT,
    "pressure": "Pa",
    "osmolality": "osmol/kg",
    "volume": "m^3",
    "temperature": "K",
    "fraction": "1",
}

# ---------------------------------------------------------------------------------------------------
# The accepted unit names
# ---------------------------------------------------------------------------------------------------

#: Every unit name the grammar accepts (case matters: M is molar, m is metre) -> the name pint is given.
#: Only units the tool has use for: masses and moles for amounts, osmoles for osmolalities, litres
#: (and m3, dm3, cm3) for volumes, molarities, pressures for water potentials, temperatures.
#: ``mosm`` and ``MOsm`` are read as milliosmoles (nobody means mega-osmoles).
UNIT_NAMES: dict[str, str] = {
    # mass
    "g": "g", "gram": "g", "grams": "g",
    "mg": "mg", "milligram": "mg", "milligrams": "mg",
    "ug": "ug", "microgram": "ug", "micrograms": "ug",
    "kg": "kg", "kilogram": "kg", "kilograms": "kg",
    # amount of substance
    "mol": "mol", "mole": "mol", "moles": "mol",
    "mmol": "mmol", "umol": "umol",
    # osmotic amount (our own dimension)
    "osmol": "osmol", "Osm": "osmol",
    "mosmol": "mosmol", "mOsmol": "mosmol", "mOsm": "mosmol", "mosm": "mosmol", "MOsm": "mosmol",
    # volume (and lengths, for m3, dm3, cm3)
    "L": "L", "l": "L", "litre": "L", "litres": "L", "liter": "L", "liters": "L",
    "mL": "mL", "ml": "mL", "millilitre": "mL", "millilitres": "mL", "milliliter": "mL", "milliliters": "mL",
    "uL": "uL", "ul": "uL",
    "m": "m", "dm": "dm", "cm": "cm",
    # molarity
    "M": "M", "mM": "mM", "uM": "uM", "nM": "nM",
    # pressure
    "Pa": "Pa", "kPa": "kPa", "MPa": "MPa", "bar": "bar", "atm": "atm",
    # temperature
    "K": "K", "degC": "degC", "degF": "degF",
}

#: Percent forms (compared in lower case, spaces removed) -> what the percent is of.
_PERCENT = {"%": "", "%w/v": "w/v", "%(w/v)": "w/v", "%wv": "w/v", "%v/v": "v/v", "%(v/v)": "v/v", "%vv": "v/v"}

MAX_TEXT = 100  #: longest text read [characters]
MAX_UNIT = 64  #: longest unit read [characters]
MAX_POWER = 3  #: largest power of a unit, either sign

# ---------------------------------------------------------------------------------------------------
# Step 1: one normalising step
# ---------------------------------------------------------------------------------------------------

_CHARS = str.maketrans({
    "\u2212": "-",  # minus sign
    "\u2013": "-",  # en dash
    "\u00b5": "u",  # micro sign
    "\u03bc": "u",  # Greek small mu
    "\u00b7": "*",  # middle dot
    "\u22c5": "*",  # dot operator
    "\u00d7": "*",  # multiplication sign
    "\u2103": "degC",  # degree Celsius sign
    "\u2109": "degF",  # degree Fahrenheit sign
    "\u2113": "l",  # script small l (litre)
})
_SUPER = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_SUPER_RUN = re.compile("[⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺]+")
_DEGREE = re.compile(r"[°º] ?([CF])(?![A-Za-z])")


def normalise(text: str) -> str:
    """The one normalising step before anything is parsed (see the module docstring): spaces of every
    kind become one plain space, U+2212 and U+2013 become ``-``, micro signs ``u``, ``·`` ``*``,
    superscript powers ``^n``, ``°C`` ``degC``. Nothing is read as something it was not written as:
    a comma stays a comma (and is refused later)."""
    if text.isascii():
        return " ".join(text.split())
    t = _SUPER_RUN.sub(lambda m: "^" + m.group().translate(_SUPER), text.translate(_CHARS))
    t = " ".join(t.split())
    if "°" in t or "º" in t:
        t = _DEGREE.sub(lambda m: "deg" + m.group(1), t)
    return t


# ---------------------------------------------------------------------------------------------------
# Step 2: our own grammar
# ---------------------------------------------------------------------------------------------------

_NUM = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|infinity|inf)"
_NUMBER_RE = re.compile(rf"(?P<num>{_NUM}) ?", re.IGNORECASE)
_EXP_DIGITS = re.compile(r"[eE][-+]?(\d+)$")
_AROUND_POWER = re.compile(r" ?(\^|\*\*) ?")
_SEP = re.compile(r" ?(?<!\*)\*(?!\*) ?| ")
_FACTOR = re.compile(r"(?P<name>[A-Za-z]+)(?:(?:\^|\*\*)?(?P<power>[-+]?\d{1,2}))?")

_REASON_HINT = {
    "power": f"powers go from -{MAX_POWER} to {MAX_POWER}, written L-1, L^-1 or L⁻¹",
    "character": "a unit is names joined by '/', '·', '*' or spaces",
    "slash": "one '/' at most, as in mol/kg",
    "denominator": "one unit after '/', as in mol/kg, or powers, as in g L-1",
    "mixed": "write g/L or g L-1, not both",
    "offset": "a degree Celsius or Fahrenheit stands alone, as in 25 degC; inside a product write K",
}


@dataclass(frozen=True)
class _Unit:
    """A unit read by the grammar: factors (pint name, power) and, for percents, what they are of."""

    factors: tuple[tuple[str, int], ...] = ()
    percent: str | None = None  # None (not a percent), "" (bare %), "w/v", "v/v" or "?" (some other %)

    @staticmethod
    def _join(factors) -> str:
        return " * ".join(name if p == 1 else f"{name}^{p}" for name, p in factors)

    @cached_property
    def numerator(self) -> str:
        return self._join((n, p) for n, p in self.factors if p > 0)

    @cached_property
    def denominator(self) -> str:
        return self._join((n, -p) for n, p in self.factors if p < 0)

    @cached_property
    def text(self) -> str:
        """The unit as pint is given it."""
        return self._join(self.factors)


class _Refused(Exception):
    """The grammar does not read ``piece``; ``reason`` says why (a key of ``_REASON_HINT`` or "name")."""

    def __init__(self, piece: str, reason: str) -> None:
        super().__init__(piece)
        self.piece = piece
        self.reason = reason


def _factors(side: str, temperature: bool) -> list[tuple[str, int]]:
    out = []
    for word in _SEP.split(side.strip()):
        m = _FACTOR.fullmatch(word)
        if m is None:
            reason = "power" if re.search(r"\^|\*\*|\d", word) else "character"
            raise _Refused(word or side.strip() or "/", reason)
        name, power = m.group("name"), int(m.group("power") or 1)
        if name in UNIT_NAMES:
            pint_name = UNIT_NAMES[name]
        elif temperature and name == "C":
            pint_name = "degC"
        else:
            raise _Refused(word, "name")
        if not 1 <= abs(power) <= MAX_POWER:
            raise _Refused(word, "power")
        out.append((pint_name, power))
    return out


#: units with an offset (°C, °F): read alone only, never inside a product, quotient or power
_OFFSET_UNITS = frozenset({"degC", "degF"})


@lru_cache(maxsize=512)
def _read_unit(unit: str, temperature: bool) -> _Unit:
    """Read a normalised unit text with the grammar; raises _Refused."""
    if unit.startswith("%"):
        return _Unit(percent=_PERCENT.get(unit.lower().replace(" ", ""), "?"))
    unit = _AROUND_POWER.sub(r"\1", unit)
    sides = unit.split("/")
    if len(sides) > 2:
        raise _Refused(unit, "slash")
    if not all(side.strip() for side in sides):
        raise _Refused(unit, "character")
    factors = _factors(sides[0], temperature)
    if len(sides) == 2:
        below = _factors(sides[1], temperature)
        if len(below) > 1:
            raise _Refused(sides[1].strip(), "denominator")
        if any(p < 0 for _, p in factors + below):
            raise _Refused(unit, "mixed")
        factors += [(n, -p) for n, p in below]
    if len(factors) > 1 or factors[0][1] != 1:  # '25 degC*degC/K' has no one meaning (pint: 25 K)
        for name, _ in factors:
            if name in _OFFSET_UNITS:
                raise _Refused(unit, "offset")
    return _Unit(tuple(factors))


class _Read(NamedTuple):
    """A text read by the grammar: its number, its unit (None when it has none)."""

    number: float
    unit: _Unit | None


@dataclass(frozen=True)
class _Context:
    """How one entry point names what it reads in its messages."""

    what: str  # "amount", "volume", "temperature", "target", "fraction", "unit"
    example: str  # hint when the text cannot be read at all
    units_hint: str  # hint listing accepted forms when a unit is not understood

    def quoted(self, text: str) -> str:
        return f"{self.what} {text!r}"


_AMOUNT = _Context("amount", 'write a number and a unit, e.g. "30 g/L", "20 mM" or "0.5 mol/kg"',
                   'use units such as mg/L, g/L, mM, mol/L, mol/kg or "% w/v"')
_VOLUME = _Context("volume", 'write it like "2 L"', 'write it like "2 L" or "500 mL"')
_TEMPERATURE = _Context("temperature", 'write it like "25 degC"', 'write it like "25 degC", "25 °C" or "298.15 K"')
_TARGET = _Context("target", 'write it like "-0.8 MPa"', 'write "-0.8 MPa", "-8 bar" or "450 mOsm/kg"')
_FRACTION = _Context("fraction", 'write a fraction (0.1) or "10 %"', 'write a fraction (0.1) or "10 %"')
_UNIT_ONLY = _Context("unit", "write a unit such as MPa, bar, mOsm/kg, mM or mol/kg",
                      "use units such as MPa, bar, mOsm/kg, mM, mol/kg or g/L")


def _too_long(what: str, length: int, limit: int, hint: str, field: str | None) -> AmountError:
    """Refuse a text before anything else is done with it; the message never repeats the text."""
    return AmountError(f"{what} is {length} characters long (at most {limit})", field=field, hint=hint)


def _refuse_unit(ctx: _Context, text: str, err: _Refused, field: str | None) -> AmountError:
    """One line naming the piece of the unit that the grammar does not read."""
    if err.reason == "name" and ctx.what == "amount":  # the wording the amount dialog has always shown
        return AmountError(f"unknown unit in {text!r}", field=field, hint=ctx.units_hint)
    if ctx.what == "unit":
        where = "" if err.piece == text.strip() else f" in {text!r}"
    else:
        where = f" in {text!r}" if ctx.what == "amount" else f" in {ctx.quoted(text)}"
    hint = ctx.units_hint if err.reason == "name" else f"{_REASON_HINT[err.reason]}; {ctx.units_hint}"
    return AmountError(f"unknown unit {err.piece!r}{where}", field=field, hint=hint)


def _refuse_separator(ctx: _Context, text: str, norm: str, field: str | None) -> AmountError:
    """The number goes on with a comma, a second point or a space before more digits: a decimal comma or
    thousands separators. Neither is guessed at; the hint says what to write."""
    written = re.match(r"[-+]?[\d.]*(?:[ ,.]\d+)*", norm).group()  # type: ignore[union-attr]
    whole, _, decimals = written.partition(",")
    if re.fullmatch(r"[-+]?\d+,\d+", written) and (len(decimals) != 3 or whole.lstrip("+-").startswith("0")):
        return AmountError(f"{ctx.quoted(text)} has a decimal comma", field=field,
                           hint=f"write {whole}.{decimals}")
    if re.fullmatch(r"[-+]?[1-9]\d{0,2},\d{3}", written):
        return AmountError(f"{ctx.quoted(text)} has a comma in its number", field=field,
                           hint=f"write {whole}{decimals} with no separator, or {whole}.{decimals} if the comma "
                                f"marks decimals")
    example = ""
    if re.fullmatch(r"[-+]?\d{1,3}(?:[ ,]\d{3})+(?:\.\d+)?", written):
        example = ": " + re.sub(r"[ ,]", "", written)
    return AmountError(f"{ctx.quoted(text)} has separators in its number", field=field,
                       hint=f"write the number with no thousands separators and a point for decimals{example}")


def _read(text: str, ctx: _Context, field: str | None, *, temperature: bool = False) -> _Read:
    """Normalise and read ``text`` with the grammar (number, unit); every refusal is one AmountError."""
    stripped = text.strip()
    if len(stripped) > MAX_TEXT:
        raise _too_long(f"{ctx.what} text", len(stripped), MAX_TEXT, ctx.example, field)
    norm = normalise(stripped)
    m = _NUMBER_RE.match(norm)
    if not m or not norm:
        raise AmountError(f"cannot read {ctx.quoted(text)}", field=field, hint=ctx.example)
    num = m.group("num")
    rest = norm[m.end():]
    if (rest[:1] in (",", ".") and rest[1:2].isdigit()) or (m.group().endswith(" ") and rest[:1].isdigit()):
        raise _refuse_separator(ctx, text, norm, field)
    exp = _EXP_DIGITS.search(num) if "e" in num or "E" in num else None
    if exp and len(exp.group(1)) > 3:
        raise AmountError(f"the number of {ctx.quoted(text)} has an exponent of more than 3 digits", field=field,
                          hint="write it like 1.5e-3; a number this size is a typing mistake")
    number = float(num)
    if not rest:
        return _Read(number, None)
    if len(rest) > MAX_UNIT:
        raise _too_long(f"the unit of {ctx.quoted(text)}", len(rest), MAX_UNIT, ctx.units_hint, field)
    try:
        unit = _read_unit(rest, temperature)
    except _Refused as err:
        raise _refuse_unit(ctx, text, err, field) from None
    return _Read(number, unit)


# ---------------------------------------------------------------------------------------------------
# Step 3: dimensions and conversion factors, once per distinct unit
# ---------------------------------------------------------------------------------------------------


@lru_cache(maxsize=256)
def _dims(unit_text: str) -> frozenset:
    """Dimensionality of a unit text of our own or built by the grammar: frozenset of (dimension, power)."""
    facts = _unit_facts()
    got = facts["dims"].get(unit_text)
    if got is None:
        got = sorted((str(k), int(v)) for k, v in registry().parse_units(unit_text).dimensionality.items())
        _learn("dims", unit_text, got)
    return frozenset((k, v) for k, v in got)


@lru_cache(maxsize=512)
def _factor(unit_text: str, to: str) -> float:
    """How many ``to`` one ``unit_text`` is (both of our own or built by the grammar; multiplicative)."""
    facts = _unit_facts()
    key = f"{unit_text}|{to}"
    got = facts["factors"].get(key)
    if got is None:
        got = float(Q_(1.0, unit_text).to(to).magnitude)
        _learn("factors", key, got)
    return float(got)


# What pint answered about a unit (its dimensions, a conversion factor) is kept in the cache folder, so that
# a later run of the program need not import pint at all for units it has met (most start-ups meet only
# the units of the catalog and of one plan). The file names the pint version and this module's digest it
# was learnt under and is ignored when either differs; a float survives JSON exactly (repr).
_FACTS: dict | None = None
_FACTS_DIRTY = False


def _facts_key() -> str:
    """Which pint (its package file, as installed: a reinstall changes it) and which version of this module."""
    import hashlib
    import importlib.util
    import os

    spec = importlib.util.find_spec("pint")  # finds pint without importing it
    st = os.stat(spec.origin) if spec and spec.origin else None
    pint_id = f"{spec.origin if spec else None} {st.st_size if st else 0} {st.st_mtime_ns if st else 0}"
    return f"pint {pint_id}; {hashlib.blake2b(Path(__file__).read_bytes(), digest_size=12).hexdigest()}"


def _unit_facts() -> dict:
    global _FACTS
    if _FACTS is None:
        facts = {"dims": {}, "factors": {}}
        if _CACHE_FOLDER is not None:
            try:
                import json

                key = _facts_key()
                stored = json.loads((_CACHE_FOLDER / "unit_facts.json").read_text(encoding="utf-8"))
                if stored.get("key") == key and isinstance(stored.get("dims"), dict) and isinstance(
                        stored.get("factors"), dict):
                    facts = {"dims": stored["dims"], "factors": stored["factors"]}
            except Exception:  # noqa: BLE001 - missing or unreadable: pint answers, as without a cache
                pass
        _FACTS = facts
    return _FACTS


def _learn(table: str, key: str, value) -> None:
    global _FACTS_DIRTY
    _unit_facts()[table][key] = value
    if _CACHE_FOLDER is not None and not _FACTS_DIRTY:
        import atexit

        _FACTS_DIRTY = True
        atexit.register(_save_facts)


def _save_facts() -> None:
    """Write what was learnt (atomically: a temporary file in the folder, then a rename)."""
    global _FACTS_DIRTY
    if _FACTS is None or _CACHE_FOLDER is None:
        return
    try:
        import json
        import os
        import tempfile

        _CACHE_FOLDER.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(dir=_CACHE_FOLDER, suffix=".tmp")
        try:
            with os.fdopen(fd, "w", encoding="utf-8") as fh:
                json.dump({"key": _facts_key(), **_FACTS}, fh)
            os.replace(tmp, _CACHE_FOLDER / "unit_facts.json")
        finally:
            if os.path.exists(tmp):
                os.unlink(tmp)
        _FACTS_DIRTY = False
    except Exception:  # noqa: BLE001 - a cache must never stop the program
        pass


_AMOUNT_KINDS = {("mass", "volume"): "mass_conc", ("substance", "volume"): "molar",
                 ("substance", "mass"): "molal", ("mass", "mass"): "mass_per_water",
                 ("volume", "volume"): "vol_frac"}


def _family(unit_text: str) -> str | None:
    if not unit_text:
        return None
    d = _dims(unit_text)
    for name, probe in (("mass", "g"), ("substance", "mol"), ("volume", "L")):
        if d == _dims(probe):
            return name
    return None


@lru_cache(maxsize=512)
def _kind(unit: _Unit) -> str:
    """What a unit measures: an amount kind, "pressure", "osmolality", "volume", "temperature",
    "fraction", "percent?" (a percent of something unsaid) or "other"."""
    if unit.percent is not None:
        return {"": "fraction", "w/v": "mass_conc", "v/v": "vol_frac"}.get(unit.percent, "percent?")
    num, den = unit.numerator, unit.denominator
    if den:
        kind = _AMOUNT_KINDS.get((_family(num), _family(den)))  # type: ignore[arg-type]
        if kind:
            return kind
    elif num and _dims(num) == _dims("mol/L"):
        return "molar"
    total = _dims(unit.text)
    for kind, probe in (("pressure", "Pa"), ("osmolality", "osmol/kg"), ("temperature", "K"), ("volume", "L")):
        if total == _dims(probe):
            return kind
    return "other"


def _si(number: float, unit: _Unit, kind: str) -> float:
    """``number`` in ``unit`` as an SI value of ``kind`` (see MEASURE_SI_UNIT)."""
    if unit.percent == "w/v":
        return number * 10.0  # 1 % w/v = 1 g / 100 mL = 10 g/L
    if unit.percent is not None:
        return number / 100.0
    if kind == "temperature":
        if unit.text in ("degC", "K"):  # pint's offset conversion, x * 1 + 273.15, without pint
            return float(number + 273.15) if unit.text == "degC" else float(number)
        return float(Q_(number, unit.text).to("K").magnitude)
    return number * _factor(unit.text, MEASURE_SI_UNIT[kind])


@dataclass(frozen=True)
class Measure:
    """A number with a unit, read and converted to SI, not yet checked for range.

    Attributes
    ----------
    kind : what it measures, a key of MEASURE_SI_UNIT (an amount kind, pressure, osmolality, volume,
        temperature or fraction)
    value : the SI value [MEASURE_SI_UNIT[kind]: kg/m^3, mol/m^3, mol/kg, kg/kg, m^3/m^3, Pa, osmol/kg,
        m^3, K or 1]
    """

    kind: str
    value: float


def measure(text: str, *, field: str | None = None, temperature: bool = False) -> Measure:
    """Read any text the grammar knows (``30 g L-1``, ``−0.8 MPa``, ``25 °C``, ``10 %``) into its kind and
    SI value, with no range check. ``temperature`` lets a bare ``C`` mean degrees Celsius.

    Raises
    ------
    AmountError for text the grammar does not read, a text without a unit, a non-finite number, and a
    unit that measures nothing mediaplan uses.
    """
    if not isinstance(text, str):
        raise AmountError(f"{text!r} is not text", field=field, hint='write a number and a unit, e.g. "30 g/L"')
    ctx = _Context("quantity", 'write a number and a unit, e.g. "30 g/L" or "-0.8 MPa"', _UNIT_ONLY.units_hint)
    r = _read(text, ctx, field, temperature=temperature)
    if r.unit is None:
        raise AmountError(f"{ctx.quoted(text)} has no unit", field=field, hint=ctx.example)
    if not math.isfinite(r.number):
        raise AmountError(f"{ctx.quoted(text)} is not a finite number", field=field, hint="type a number")
    kind = _kind(r.unit)
    if kind in ("other", "percent?"):
        raise AmountError(f"{ctx.quoted(text)} measures nothing mediaplan uses", field=field,
                          hint="give an amount, a volume, a temperature, a water potential or an osmolality")
    return Measure(kind, _si(r.number, r.unit, kind))


def _unit_only(unit_text: str, field: str | None) -> _Unit:
    if not isinstance(unit_text, str):
        raise AmountError(f"unit {unit_text!r} is not text", field=field, hint=_UNIT_ONLY.example)
    stripped = unit_text.strip()
    if len(stripped) > MAX_UNIT:
        raise _too_long("unit text", len(stripped), MAX_UNIT, _UNIT_ONLY.units_hint, field)
    norm = normalise(stripped)
    if not norm:
        raise AmountError("no unit given", field=field, hint=_UNIT_ONLY.example)
    try:
        return _read_unit(norm, False)
    except _Refused as err:
        raise _refuse_unit(_UNIT_ONLY, unit_text, err, field) from None


def unit_dimension(unit_text: str, *, field: str | None = None) -> str:
    """What a unit text alone measures (``bar`` -> "pressure", ``mOsm/kg`` -> "osmolality", ``mM`` ->
    "molar", ``g L-1`` -> "mass_conc"): a key of MEASURE_SI_UNIT, or "other" for a unit the grammar reads
    that measures nothing mediaplan uses (``g``, ``m``).

    Raises
    ------
    AmountError for a unit the grammar does not read.
    """
    kind = _kind(_unit_only(unit_text, field))
    return "other" if kind == "percent?" else kind


def convert(value, unit_text: str, to: str, *, field: str | None = None):
    """``value`` (a float or a numpy array) in ``unit_text`` (as a user wrote it) expressed in ``to`` (a
    unit of our own, such as "MPa" or "osmol/kg").

    Raises
    ------
    AmountError when ``unit_text`` is not read by the grammar or does not measure what ``to`` measures.
    """
    unit = _unit_only(unit_text, field)
    target = _read_unit(normalise(to), False)
    if unit.percent is not None or target.percent is not None or _dims(unit.text) != _dims(target.text):
        raise AmountError(f"unit {unit_text!r} cannot be converted to {to}", field=field,
                          hint=f"give a unit of the same kind as {to}")
    if _kind(unit) == "temperature":
        return Q_(value, unit.text).to(target.text).magnitude
    return value * _factor(unit.text, target.text)


# ---------------------------------------------------------------------------------------------------
# Amounts
# ---------------------------------------------------------------------------------------------------

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


@lru_cache(maxsize=4096)
def parse_amount(text: str, *, field: str | None = None) -> Amount:
    """Parse an amount string such as ``30 g/L``, ``1650 mg/L``, ``3 % w/v``, ``20 mM``, ``0.4 mol/L``,
    ``0.5 mol/kg`` (per kg water), ``150 g/kg`` (per kg water) or ``5 % v/v`` and ``50 mL/L`` (liquids);
    also ``30 g L-1``, ``30 g·L⁻¹``, ``2 µM`` and the other spellings of the module's grammar.

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
    r = _read(text, _AMOUNT, field)
    number = r.number
    if not math.isfinite(number):
        raise AmountError(f"amount {text!r} is not a finite number", field=field, hint="type a number")
    if number < 0:
        raise AmountError(f"amount {text!r} is negative", field=field, hint="amounts are 0 or more; 0 removes it")
    if r.unit is None:
        raise AmountError(f"amount {text!r} has no unit", field=field, hint='add a unit, e.g. "30 g/L" or "20 mM"')
    if r.unit.percent is not None and r.unit.percent not in ("w/v", "v/v"):
        raise AmountError(f"amount {text!r}: say which percent", field=field,
                          hint='use "% w/v" (g per 100 mL) or "% v/v" (mL per 100 mL)')
    kind = _kind(r.unit)
    if kind not in _ABSURD_HIGH:
        if not r.unit.denominator:
            raise AmountError(f"{text!r} is not a concentration", field=field,
                              hint='give an amount per volume or per kg water, e.g. "30 g/L" or "20 mM"')
        raise AmountError(f"{text!r} is not a concentration", field=field,
                          hint='use mass or moles per litre, or moles per kg water, e.g. "30 g/L"')
    si = _si(number, r.unit, kind)
    if si > _ABSURD_HIGH[kind]:
        raise AmountError(f"amount {text!r} is far beyond anything that dissolves", field=field,
                          hint="check the number and its unit")
    if 0 < si < _ABSURD_LOW:
        raise AmountError(f"amount {text!r} is vanishingly small", field=field,
                          hint="check the number and its unit; 0 removes the component")
    return Amount(si, kind, " ".join(text.split()))  # type: ignore[arg-type]


def _fmt(x: float) -> str:
    if x == 0:
        return "0"
    if abs(x) >= 100:
        return f"{x:.4g}" if abs(x) < 1e5 else f"{x:.0f}"
    return f"{x:.4g}"


@lru_cache(maxsize=1024)
def _unit_hint(like: str) -> str:
    """The unit part of an amount text as written (normalised), or "" when there is none."""
    norm = normalise(like[: MAX_TEXT + 1])
    m = _NUMBER_RE.match(norm)
    return norm[m.end():] if m else ""


@lru_cache(maxsize=4096)
def format_amount(value: float, kind: AmountKind, *, like: str | None = None) -> str:
    """Write an SI amount back as text, in the unit family of ``like`` where possible.

    A number times a conversion factor known once per unit (what pint's conversion computes, bit for bit);
    the unit library is asked only the first time a unit is met, so scaled amounts (a base at half
    strength) cost no unit parsing."""
    unit_hint = _unit_hint(like) if like else ""
    if kind == "mass_conc":
        if unit_hint.lower().replace(" ", "") in ("%w/v",):
            return f"{_fmt(value / 10.0)} % w/v"
        if unit_hint in ("mg/L", "g/L", "ug/L", "mg/mL", "g/mL"):
            return f"{_fmt(value * _factor('kg/m^3', unit_hint))} {unit_hint}"
        return f"{_fmt(value * 1000.0)} mg/L" if value < 1.0 else f"{_fmt(value)} g/L"
    if kind == "molar":
        if unit_hint in ("M", "mM", "uM", "mol/L", "mmol/L", "umol/L"):
            return f"{_fmt(value * _factor('mol/m^3', unit_hint))} {unit_hint}"
        return f"{_fmt(value)} mM"
    if kind == "molal":
        if unit_hint in ("mol/kg", "mmol/kg"):
            return f"{_fmt(value * _factor('mol/kg', unit_hint))} {unit_hint}"
        return f"{_fmt(value)} mol/kg"
    if kind == "mass_per_water":
        return f"{_fmt(value * 1000.0)} g/kg"
    if unit_hint.lower().replace(" ", "") == "%v/v":
        return f"{_fmt(value * 100.0)} % v/v"
    return f"{_fmt(value * 1000.0)} mL/L"


# ---------------------------------------------------------------------------------------------------
# Volumes, temperatures, targets, fractions
# ---------------------------------------------------------------------------------------------------


def _quantity(text, ctx: _Context, field: str | None, *, temperature: bool = False) -> tuple[float, _Unit, str]:
    """Read a number with a unit for a volume, temperature or target: (number, unit, kind)."""
    if not isinstance(text, str):
        text = str(text)
    r = _read(text, ctx, field, temperature=temperature)
    if r.unit is None:
        raise AmountError(f"{ctx.what} {text!r} has no unit", field=field, hint=ctx.example)
    if not math.isfinite(r.number):
        raise AmountError(f"{ctx.what} {text!r} is not a finite number", field=field, hint=ctx.example)
    return r.number, r.unit, _kind(r.unit)


@lru_cache(maxsize=1024)
def parse_volume(text: str, *, field: str | None = None) -> float:
    """Parse a batch or medium volume (``2 L``, ``500 mL``) -> [m^3]; must be positive and sane."""
    number, unit, kind = _quantity(text, _VOLUME, field)
    if kind != "volume":
        raise AmountError(f"{text!r} is not a volume", field=field, hint='write it like "1 L" or "500 mL"')
    v = _si(number, unit, kind)
    if v <= 0:
        raise AmountError(f"volume {text!r} must be more than zero", field=field, hint='e.g. "1 L"')
    if v > 100.0:
        raise AmountError(f"volume {text!r} is more than 100 m³", field=field, hint="check the unit")
    if v < 1e-9:
        raise AmountError(f"volume {text!r} is less than a microlitre", field=field, hint="check the unit")
    return v


@lru_cache(maxsize=256)
def parse_temperature(text: str, *, field: str | None = None) -> float:
    """Parse a temperature (``25 degC``, ``25 °C``, ``25 C``, ``298.15 K``) -> [K]; culture range 0-40 °C."""
    number, unit, kind = _quantity(text, _TEMPERATURE, field, temperature=True)
    if kind != "temperature":
        raise AmountError(f"{text!r} is not a temperature", field=field, hint='write it like "25 degC"')
    t = _si(number, unit, kind)
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
    """Parse ``-0.8 MPa``, ``−0.8 MPa`` (U+2212), ``-8 bar``, ``-800 kPa`` (water potential) or
    ``450 mOsm/kg`` (osmolality); ``Target.text`` is the normalised text."""
    number, unit, kind = _quantity(text, _TARGET, field)
    norm = normalise(text)
    if kind == "pressure":
        v = _si(number, unit, kind)
        if v > 0:
            raise AmountError(f"target {text!r} is positive", field=field,
                              hint="water potentials of solutions are negative, e.g. -0.8 MPa")
        if v < -20e6:
            raise AmountError(f"target {text!r} is below -20 MPa", field=field, hint="check the number and unit")
        return Target("potential", v, norm)
    if kind == "osmolality":
        v = _si(number, unit, kind)
        if v < 0:
            raise AmountError(f"target {text!r} is negative", field=field, hint="osmolalities are positive")
        if v > 10:
            raise AmountError(f"target {text!r} is above 10 Osm/kg", field=field, hint="check the number and unit")
        return Target("osmolality", v, norm)
    raise AmountError(f"{text!r} is not a water potential or an osmolality", field=field,
                      hint='write "-0.8 MPa", "-8 bar" or "450 mOsm/kg"')


def parse_fraction(value, *, field: str, upper: float = 1.0) -> float:
    """A fraction [-] from a number (0.1) or a text: a plain number ("0.1") or a percentage ("10 %"),
    checked to lie in [0, upper]."""
    if isinstance(value, bool):
        raise AmountError(f"{value!r} is not a fraction", field=field, hint=_FRACTION.example)
    if isinstance(value, (int, float)):
        v = float(value)
    else:
        text = str(value)
        try:
            r = _read(text, _FRACTION, field)
        except AmountError:
            raise AmountError(f"cannot read {text[:MAX_TEXT]!r} as a fraction", field=field,
                              hint=_FRACTION.example) from None
        if r.unit is not None and r.unit.percent != "":
            raise AmountError(f"cannot read {text!r} as a fraction", field=field, hint=_FRACTION.example)
        v = r.number / (100.0 if r.unit is not None else 1.0)
    if not math.isfinite(v) or v < 0 or v > upper:
        raise AmountError(f"{value!r} must lie between 0 and {upper:g}", field=field, hint=_FRACTION.example)
    return v
