"""Counts files: plasmolysis counts in CSV, one row per counted sample.

The header needs ``plasmolysed`` and ``total`` and a level column: ``water_potential_mpa`` (used as is),
``osmolality_mosmol_per_kg``, a potential with its unit (``psi (bar)``), or an osmoticum amount
(``mannitol_mol_per_kg``, ``concentration (mM)``), converted to water potential with the full model.

Comment lines before the header may state how the series was made, one ``# key: value`` each (written by
:func:`header_comments`): ``osmoticum``, ``temperature``, ``base``, ``strength`` and ``plan``. A reader
uses them where the caller gave nothing, and says so; a value the caller gives wins, and a different value
in the file is named in a note.
"""

from __future__ import annotations

import csv
import math
import re
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from mediaplan.files import reading
from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import AmountError, FitError, MediaplanError
from mediaplan.medium.recipe import Recipe
from mediaplan.medium.units import convert, parse_amount, unit_dimension
from mediaplan.tasks.plasmolysis.counts import POTENTIAL_COLUMN, Counts, check_counts
from mediaplan.thermo import potential
from mediaplan.thermo.constants import T0

_SUFFIX_UNITS = {"_mol_per_kg": "mol/kg", "_mmol_per_kg": "mmol/kg", "_mol_per_l": "mol/L", "_mmol_per_l": "mmol/L",
                 "_g_per_l": "g/L", "_mg_per_l": "mg/L", "_mm": "mM", "_m": "M"}
_PAREN = re.compile(r"^\s*(?P<name>.*?)\s*[\(\[](?P<unit>[^\)\]]+)[\)\]]\s*$")
#: the most columns a counts header may have (it needs three; a sheet with notes columns has a few more)
MAX_COLUMNS = 64
#: plausible water potentials of a level [MPa]: no solution is below -1000 MPa (saturated salts stay above
#: -400 MPa), and a level closer to zero than 1e-6 MPa but not zero is a unit slip, not a solution that
#: could be told from pure water (a series starts near -0.1 MPa) (common practice)
POTENTIAL_RANGE_MPA = (-1000.0, -1e-6)


@dataclass
class _LevelColumn:
    index: int
    header: str
    kind: str  # "potential" | "osmolality" | "amount"
    unit: str
    osmoticum: str | None = None


def _classify_column(header: str, idx: int, catalog: Catalog | None) -> _LevelColumn | None:
    """Recognise a level column: potential, osmolality or an osmoticum amount, with its unit."""
    h = header.strip()
    low = h.lower()
    if low == POTENTIAL_COLUMN:
        return _LevelColumn(idx, h, "potential", "MPa")
    if low == "osmolality_mosmol_per_kg":
        return _LevelColumn(idx, h, "osmolality", "mOsm/kg")
    m = _PAREN.match(h)
    if m:
        name, unit = m.group("name"), m.group("unit").strip()
        try:
            dim = unit_dimension(unit)
        except AmountError:  # an unreadable unit means: not a level column
            dim = None
        if dim == "pressure":
            return _LevelColumn(idx, h, "potential", unit)
        if dim == "osmolality":
            return _LevelColumn(idx, h, "osmolality", unit)
        try:
            parse_amount(f"1 {unit}")
        except AmountError:
            return None
        return _LevelColumn(idx, h, "amount", unit, _osmoticum_of(name, catalog))
    for suffix, unit in _SUFFIX_UNITS.items():
        if low.endswith(suffix) and len(low) > len(suffix):
            return _LevelColumn(idx, h, "amount", unit, _osmoticum_of(h[: -len(suffix)], catalog))
    return None


def _osmoticum_of(name: str, catalog: Catalog | None) -> str | None:
    if catalog is None or not name or name.lower() in ("concentration", "conc", "amount", "level"):
        return None
    try:
        return catalog.resolve(name).component.id
    except MediaplanError:
        return None


def read_counts_csv(path: str | Path, *, osmoticum: str | None = None, background: Recipe | None = None,
                    catalog: Catalog | None = None) -> Counts:
    """Read counts from a CSV file.

    The header needs ``plasmolysed`` and ``total`` and a level column: ``water_potential_mpa`` (used
    as is), ``osmolality_mosmol_per_kg``, a potential with its unit (``psi (bar)``), or an osmoticum
    amount (``mannitol_mol_per_kg``, ``concentration (mM)``): amounts are converted to water potential
    with the model, in ``background`` (water if None). Lines starting with ``#`` and blank lines are
    skipped; a level whose two count cells are both empty (not counted yet) is skipped too.

    The file is read line by line, never whole: a regular UTF-8 file of at most 16 MiB, lines of at most
    1 MiB, at most :data:`~mediaplan.files.reading.COUNTS_MAX_ROWS` rows of counts and
    :data:`MAX_COLUMNS` columns (:mod:`mediaplan.files.reading`).
    """
    p = Path(path)
    file = str(p)
    rows = _rows(p, file)
    first = next(rows, None)
    if first is None:
        raise FitError("the file holds no header and no counts", file=file,
                       hint=f"first line: {POTENTIAL_COLUMN},plasmolysed,total")
    head_line, header = first
    if len(header) > MAX_COLUMNS:
        raise FitError(f"the header has {len(header)} columns, more than the {MAX_COLUMNS} a counts file may have",
                       file=file, line=head_line, hint=f"the header must be {POTENTIAL_COLUMN},plasmolysed,total")
    names = [h.strip().lower() for h in header]
    missing = [c for c in ("plasmolysed", "total") if c not in names]
    if missing:
        found = ", ".join(h.strip()[:40] for h in header[:12]) + (", …" if len(header) > 12 else "")
        raise FitError(f"missing column{'s' if len(missing) > 1 else ''} {', '.join(missing)} (found: "
                       f"{found})", file=file, line=head_line,
                       hint=f"the header must be {POTENTIAL_COLUMN},plasmolysed,total")
    i_pl, i_tot = names.index("plasmolysed"), names.index("total")
    notes: list[str] = []
    osmoticum, background = _with_stated(stated_in(p), osmoticum, background, file, notes)
    cols = [c for c in (_classify_column(h, i, catalog or _lazy_catalog(header)) for i, h in enumerate(header))
            if c is not None]
    if not cols:
        found = ", ".join(h.strip()[:40] for h in header[:12]) + (", …" if len(header) > 12 else "")
        raise FitError(f"no level column (found: {found})", file=file,
                       line=head_line, hint=f"name the level column {POTENTIAL_COLUMN} (or e.g. mannitol_mol_per_kg)")
    col = next((c for c in cols if c.kind == "potential"), None) or \
        next((c for c in cols if c.kind == "osmolality"), None) or cols[0]
    xs: list[float] = []
    ys: list[int] = []
    ns: list[int] = []
    lines: list[int] = []
    if [n for n in names if n] != [POTENTIAL_COLUMN, "plasmolysed", "total"]:  # said unless the usual three
        notes.insert(0, f"columns read: levels from '{col.header.strip()}' in {col.unit}, plasmolysed from "
                        f"'{header[i_pl].strip()}', total from '{header[i_tot].strip()}'")
    skipped = 0
    for n_rows, (lineno, cells) in enumerate(rows, start=1):
        if n_rows > reading.COUNTS_MAX_ROWS:
            raise FitError(f"more than {reading.COUNTS_MAX_ROWS} rows of counts", file=file, line=lineno,
                           hint="a counts file holds one row per counted sample; is this really one?")
        if len(cells) != len(header):
            raise FitError(f"{len(cells)} cells where the header has {len(header)}", file=file, line=lineno,
                           hint="one value per column, separated by commas")
        if not cells[i_pl].strip() and not cells[i_tot].strip():
            skipped += 1
            continue
        x = _number(cells[col.index], file, lineno, col.header)
        y = _count(cells[i_pl], file, lineno, header[i_pl].strip())
        n = _count(cells[i_tot], file, lineno, header[i_tot].strip())
        if n == 0:
            raise FitError("total is 0: no cells counted", file=file, line=lineno, field=header[i_tot].strip(),
                           hint="count at least one cell, or leave both count cells empty to skip the level")
        if y > n:
            raise FitError(f"plasmolysed ({y}) is more than total ({n})", file=file, line=lineno,
                           field=header[i_pl].strip(), hint="total counts every cell seen, plasmolysed or not")
        xs.append(x)
        ys.append(y)
        ns.append(n)
        lines.append(lineno)
    if skipped:
        notes.append(f"{skipped} level(s) without counts skipped")
    x = np.array(xs, dtype=float)
    if col.kind == "potential":
        if col.unit != "MPa":  # MPa as written needs no conversion (nor the unit library)
            x = convert(x, col.unit, "MPa")
        if np.any(x > 0):
            bad = lines[int(np.argmax(x > 0))]
            raise FitError("a water potential is positive", file=file, line=bad, field=col.header,
                           hint="potentials of solutions are negative (e.g. -0.8)")
        if col.unit != "MPa":
            notes.append(f"levels read from '{col.header}' and converted to MPa")
    else:
        T = background.temperature_k if background is not None else 298.15
        if col.kind == "osmolality":
            osm = convert(x, col.unit, "osmol/kg")
            x = potential.potential_from_osmolality(osm, T) / 1e6
            notes.append(f"levels read from '{col.header}' and converted to water potential at {T - T0:g} °C")
        else:
            osmo = osmoticum or col.osmoticum
            if osmo is None:
                raise FitError(f"column '{col.header}' gives amounts but not of what", file=file, line=head_line,
                               field=col.header, hint="name the osmoticum of the series (e.g. mannitol)", asks_for="osmoticum")
            amounts = []
            for v, ln in zip(x, lines, strict=True):
                try:
                    amounts.append(parse_amount(f"{float(v)!r} {col.unit}", field=col.header))
                except AmountError as exc:
                    raise exc.located(file=file, line=ln) from None
            from mediaplan.tasks.plasmolysis.design import describe_background, potential_of_amounts

            bg = background or Recipe()
            x = potential_of_amounts(bg, osmo, amounts, catalog=catalog) / 1e6
            notes.append(f"levels read from '{col.header}' ({osmo} in {describe_background(bg)}) and converted to "
                         f"water potential with the non-ideal model at {bg.temperature_k - T0:g} °C")
    _plausible_levels(x, lines, file, col.header)
    counts = Counts(x, np.array(ys, dtype=float), np.array(ns, dtype=float), file,
                    background.temperature_k if background is not None else None, notes)
    check_counts(counts, file)
    return counts


#: the header comments a counts file may carry (``# key: value`` before the header)
STATED_KEYS = ("plan", "osmoticum", "base", "strength", "strength_scope", "temperature")
_STATED = re.compile(r"^\s*#\s*(?P<key>[a-z_]+)\s*:\s*(?P<value>.*?)\s*$")


def header_comments(*, osmoticum: str, temperature: str, base: str | None = None, strength: float = 1.0,
                    plan: str | None = None) -> list[str]:
    """The ``# key: value`` lines a series writes above its counts header, so that a fit reads the
    series as it was made (osmoticum id, temperature text, background base and strength, plan file)."""
    out = [f"# plan: {plan}"] if plan else []
    out.append(f"# osmoticum: {osmoticum}")
    if base:
        out += [f"# base: {base}", f"# strength: {strength:g}"]
    out.append(f"# temperature: {temperature}")
    return out


def stated_in(path: str | Path) -> dict[str, tuple[int, str]]:
    """key -> (line, value) of the ``# key: value`` comments above the header (only :data:`STATED_KEYS`)."""
    out: dict[str, tuple[int, str]] = {}
    for lineno, raw in reading.iter_lines(Path(path), "counts"):
        if not raw.strip():
            continue
        if not raw.lstrip().startswith("#"):
            break
        m = _STATED.match(raw)
        if m and m.group("key") in STATED_KEYS and m.group("value"):
            out.setdefault(m.group("key"), (lineno, m.group("value")))
    return out


def stated_series(path: str | Path, osmoticum: str | None = None,
                  background: Recipe | None = None) -> tuple[str | None, Recipe]:
    """The osmoticum and background of the series behind a counts file, read as :func:`read_counts_csv`
    reads them: the caller's, else what the file's ``# key: value`` comments state (water when neither)."""
    osmoticum, background = _with_stated(stated_in(path), osmoticum, background, str(path), [])
    return osmoticum, background if background is not None else Recipe()


def _with_stated(stated: dict[str, tuple[int, str]], osmoticum: str | None, background: Recipe | None,
                 file: str, notes: list[str]) -> tuple[str | None, Recipe | None]:
    """The osmoticum and background to read with: the caller's, else the file's header comments."""
    if "osmoticum" in stated:
        said = stated["osmoticum"][1]
        if osmoticum is None:
            osmoticum = said
            notes.append(f"osmoticum {said} as the file states (line {stated['osmoticum'][0]})")
        elif said != osmoticum:
            notes.append(f"the file states osmoticum {said}; {osmoticum} used as asked")
    changes: dict = {}
    for key in ("base", "strength", "strength_scope", "temperature"):
        if key not in stated:
            continue
        line, said = stated[key]
        mine = getattr(background, key) if background is not None else None
        if key == "strength":
            try:
                value: object = float(said)
            except ValueError:
                raise FitError(f"strength {said!r} is not a number", file=file, line=line, field="strength",
                               hint="write e.g. # strength: 0.5") from None
        else:
            value = said
        if background is None:
            changes[key] = value
        elif mine != value and not (key == "temperature" and _same_temperature(mine, said)):
            notes.append(f"the file states {key} {said}; {mine} used as asked")
    if changes:
        try:
            background = Recipe(**changes)
        except AmountError as exc:
            key = (exc.field or "").split(".")[-1]
            raise exc.located(file=file, line=stated.get(key, (None,))[0]) from None
        said = ", ".join(f"{k} {v:g}" if isinstance(v, float) else f"{k} {v}" for k, v in changes.items())
        notes.append(f"series made with {said}, as the file states")
    return osmoticum, background


def _same_temperature(a: str | None, b: str) -> bool:
    try:
        return a is not None and abs(Recipe(temperature=a).temperature_k - Recipe(temperature=b).temperature_k) < 1e-9
    except AmountError:
        return False


def _rows(path: Path, file: str) -> Iterator[tuple[int, list[str]]]:
    """(line number, cells) of each line that is neither blank nor a ``#`` comment, read as it goes."""
    for lineno, raw in reading.iter_lines(path, "counts"):
        if not raw.strip() or raw.lstrip().startswith("#"):
            continue
        try:
            cells = next(csv.reader([raw]), [])
        except csv.Error as exc:
            raise FitError(f"unreadable CSV ({exc})", file=file, line=lineno,
                           hint="one value per column, separated by commas") from None
        yield lineno, cells


def _plausible_levels(x: np.ndarray, lines: list[int], file: str, column: str) -> None:
    """Refuse a level whose water potential [MPa] no solution has (see :data:`POTENTIAL_RANGE_MPA`)."""
    low, high = POTENTIAL_RANGE_MPA
    for v, line in zip(np.asarray(x, dtype=float), lines, strict=True):
        if v == 0.0 or low <= v <= high:
            continue
        if not np.isfinite(v) or v < low:
            raise FitError(f"a water potential of {v:.4g} MPa is beyond any solution", file=file, line=line,
                           field=column, hint=f"levels lie between {low:g} MPa and 0; check the number and its unit")
        raise FitError(f"a water potential of {v:.4g} MPa is too close to zero to be told from pure water",
                       file=file, line=line, field=column,
                       hint="check the number and its unit; write 0 for pure water")


def _lazy_catalog(header: Sequence[str]) -> Catalog | None:
    """The catalog only when a column might name an osmoticum (keeps plain CSV reading cheap)."""
    if any(h.strip().lower() == POTENTIAL_COLUMN for h in header):
        return None
    from mediaplan.files.catalog import get_catalog

    return get_catalog()


def _number(cell: str, file: str, line: int, column: str) -> float:
    try:
        v = float(cell.strip())
    except ValueError:
        raise FitError(f"'{cell.strip()}' is not a number", file=file, line=line, field=column,
                       hint="write a plain number in this column") from None
    if not math.isfinite(v):
        raise FitError(f"'{cell.strip()}' is not a finite number", file=file, line=line, field=column)
    return v


def _count(cell: str, file: str, line: int, column: str) -> int:
    s = cell.strip()
    if not s:
        raise FitError("empty count", file=file, line=line, field=column,
                       hint="fill in both counts, or leave both empty to skip the level")
    v = _number(s, file, line, column)
    if v < 0 or v != int(v):
        raise FitError(f"'{s}' is not a whole number of cells", file=file, line=line, field=column,
                       hint="counts are whole numbers, 0 or more")
    return int(v)
