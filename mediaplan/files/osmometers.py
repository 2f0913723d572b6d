"""The lab's osmometers in the user's config folder: calibration and repeatability of each instrument.

``<config>/osmometers.toml`` (our own format), one table per instrument kind::

    [freezing-point]
    repeatability = "2 mOsm/kg"          # optional: the lab's own figure (s.d. of one reading)
    offset_mosmol_per_kg = -1.4          # from the standards: true = offset + slope × displayed
    slope = 1.003
    standards = [[100.0, 101.0], [290.0, 291.5], [1000.0, 998.0]]   # (nominal, displayed) [mOsm/kg]
    calibrated = "2026-12-05"

Read with the bounded reader; written atomically (:func:`mediaplan.files.planfile.atomic_write`), other
instruments' tables kept as they were.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from typing import Any

import tomli_w

from mediaplan.files import reading
from mediaplan.files.paths import user_config_dir
from mediaplan.medium.errors import AmountError, PlanFileError
from mediaplan.medium.units import measure, parse_temperature
from mediaplan.tasks.reading import INSTRUMENTS, Calibration, Instrument, fit_calibration

FILE_NAME = "osmometers.toml"
_KEYS = ("repeatability", "offset_mosmol_per_kg", "slope", "standards", "calibrated")


def settings_path() -> Path:
    """Where the lab's osmometer settings live."""
    return user_config_dir() / FILE_NAME


def _load(path: Path) -> dict[str, Any]:
    if not path.exists():
        return {}
    text = reading.decode(reading.read_bytes(path, "plan"), path, "plan")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PlanFileError(f"malformed TOML: {str(exc).split(' (at ')[0]}", file=str(path),
                            hint="fix the file, or delete it to forget the calibrations") from None
    for kind, table in data.items():
        if kind not in INSTRUMENTS or not isinstance(table, dict):
            raise PlanFileError(f"unknown instrument [{kind}]", file=str(path), field=kind,
                                hint="the instruments are " + ", ".join(f"[{k}]" for k in INSTRUMENTS))
        for key in table:
            if key not in _KEYS:
                raise PlanFileError(f"unknown key {key} in [{kind}]", file=str(path), field=f"{kind}.{key}",
                                    hint="known keys: " + ", ".join(_KEYS))
    return data


def calibration_of(kind: str, *, path: Path | None = None) -> Calibration | None:
    """The stored calibration of an instrument kind, or None."""
    path = path or settings_path()
    table = _load(path).get(kind) or {}
    if "slope" not in table and "offset_mosmol_per_kg" not in table:
        return None
    try:
        pairs = tuple((float(a), float(b)) for a, b in table.get("standards", []))
        offset, slope = float(table.get("offset_mosmol_per_kg", 0.0)), float(table.get("slope", 1.0))
    except (TypeError, ValueError):
        raise PlanFileError(f"the calibration of [{kind}] is not numbers", file=str(path), field=kind,
                            hint="calibrate again, or delete the table") from None
    if not (math.isfinite(offset) and math.isfinite(slope) and 0.8 <= slope <= 1.25):
        raise PlanFileError(f"the calibration of [{kind}] is out of range", file=str(path), field=kind,
                            hint="calibrate again, or delete the table")
    return Calibration(kind, offset, slope, pairs, str(table["calibrated"]) if "calibrated" in table else None)


def repeatability_of(kind: str, *, path: Path | None = None) -> str | None:
    """The lab's own repeatability text of an instrument kind, or None."""
    value = (_load(path or settings_path()).get(kind) or {}).get("repeatability")
    return value if isinstance(value, str) else None


def reading_setup(kind: str, *, chamber: str | None = None, repeatability: str | None = None,
                  calibrated: bool = True, path: Path | None = None) -> tuple[Instrument, Calibration | None]:
    """The instrument a reading was taken on, and the calibration to apply to it (None when ``calibrated`` is
    false or none is stored): the one setup of the command line, the API and the app. ``chamber`` is a
    vapour-pressure osmometer's chamber temperature (text); a freezing-point osmometer has none."""
    chamber_k = None
    if chamber is not None and chamber.strip():
        if kind != "vapour-pressure":
            raise AmountError("a chamber temperature belongs to a vapour-pressure osmometer",
                              field="chamber_temperature", hint="leave it out for a freezing-point osmometer")
        chamber_k = parse_temperature(chamber, field="chamber_temperature")
    inst = instrument(kind, repeatability=repeatability, chamber_temperature_k=chamber_k, path=path)
    return inst, (calibration_of(kind, path=path) if calibrated else None)


def osmotica_named(plan) -> list[str]:
    """The osmotica a plan names (its target's and its series'): the unlisted solutes a reading considers."""
    named = list(plan.target.osmotica or ()) if getattr(plan, "target", None) is not None else []
    series = getattr(plan, "series", None)
    if series is not None and series.osmoticum:
        named.append(series.osmoticum)
    return named


def instrument(kind: str, *, repeatability: str | None = None, chamber_temperature_k: float | None = None,
               path: Path | None = None) -> Instrument:
    """The instrument with its repeatability: as given, else the lab's (config file), else the default."""
    text = repeatability if repeatability is not None else repeatability_of(kind, path=path)
    mosmol = fraction = None
    if text is not None:
        mosmol, fraction = parse_repeatability(text)
    return Instrument(kind, mosmol, fraction, chamber_temperature_k)


def parse_repeatability(text: str) -> tuple[float | None, float | None]:
    """``"2 mOsm/kg"`` -> (2.0, None) [mOsm/kg]; ``"0.5 %"`` -> (None, 0.005) [-]."""
    t = str(text).strip()
    if t.endswith("%"):
        try:
            v = float(t[:-1].strip())
        except ValueError:
            raise AmountError(f"cannot read {t!r} as a repeatability", field="repeatability",
                              hint='e.g. "2 mOsm/kg" or "0.5 %"') from None
        if not math.isfinite(v) or not 0 <= v <= 20:
            raise AmountError(f"repeatability {t!r} must be 0 to 20 %", field="repeatability", hint='e.g. "0.5 %"')
        return None, v / 100.0
    m = measure(t, field="repeatability")
    if m.kind != "osmolality":
        raise AmountError(f"{t!r} is not an osmolality", field="repeatability", hint='e.g. "2 mOsm/kg" or "0.5 %"')
    v = m.value * 1000.0
    if not 0 <= v <= 100:
        raise AmountError(f"repeatability {t!r} must be 0 to 100 mOsm/kg", field="repeatability",
                          hint='e.g. "2 mOsm/kg"')
    return v, None


def save_calibration(cal: Calibration, *, path: Path | None = None) -> Path:
    """Store an instrument's calibration (the other instruments' settings kept); returns the file."""
    from mediaplan.files.planfile import atomic_write

    path = path or settings_path()
    data = _load(path)
    table = dict(data.get(cal.instrument) or {})
    table.update(offset_mosmol_per_kg=round(cal.offset_mosmol, 6), slope=round(cal.slope, 8),
                 standards=[[a, b] for a, b in cal.standards])
    if cal.date:
        table["calibrated"] = cal.date
    data[cal.instrument] = table
    path.parent.mkdir(parents=True, exist_ok=True)
    atomic_write(path, tomli_w.dumps(data).encode("utf-8"), backup=False)
    return path


def save_repeatability(kind: str, text: str, *, path: Path | None = None) -> Path:
    """Store the lab's repeatability of an instrument (checked first: ``"2 mOsm/kg"`` or ``"0.5 %"``)."""
    from mediaplan.files.planfile import atomic_write

    parse_repeatability(text)
    path = path or settings_path()
    data = _load(path)
    data[kind] = {**(data.get(kind) or {}), "repeatability": text.strip()}
    path.parent.mkdir(parents=True, exist_ok=True)
    atomic_write(path, tomli_w.dumps(data).encode("utf-8"), backup=False)
    return path


def forget_calibration(kind: str, *, path: Path | None = None) -> bool:
    """Remove an instrument's calibration (its repeatability kept); returns whether there was one."""
    from mediaplan.files.planfile import atomic_write

    path = path or settings_path()
    data = _load(path)
    table = dict(data.get(kind) or {})
    had = any(k in table for k in ("offset_mosmol_per_kg", "slope", "standards", "calibrated"))
    if not had:
        return False
    for k in ("offset_mosmol_per_kg", "slope", "standards", "calibrated"):
        table.pop(k, None)
    if table:
        data[kind] = table
    else:
        data.pop(kind, None)
    atomic_write(path, tomli_w.dumps(data).encode("utf-8"), backup=False)
    return True


def calibrate(kind: str, standards: list[tuple[float, float]], *, date: str | None = None,
              path: Path | None = None) -> tuple[Calibration, Path]:
    """Fit and store a calibration from (nominal, displayed) standard readings [mOsm/kg]."""
    cal = fit_calibration(kind, standards, date=date)
    return cal, save_calibration(cal, path=path)


__all__ = ["FILE_NAME", "calibrate", "calibration_of", "forget_calibration", "instrument", "parse_repeatability",
           "repeatability_of", "save_calibration", "save_repeatability", "settings_path"]
