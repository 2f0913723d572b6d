"""Helpers shared by subcommands: catalog, recipe from plan and inline arguments, JSON output.

Text goes out through :func:`mediaplan.files.output.write_output` (standard output or ``-o FILE``)."""

from __future__ import annotations

import argparse

from mediaplan.medium.errors import AmountError, MediaplanError


def add_recipe_arguments(p: argparse.ArgumentParser, *, plan_option: bool = True) -> None:
    """The recipe-defining arguments shared by calc and prep."""
    p.add_argument("amounts", nargs="*", metavar="ID=AMOUNT",
                   help='component and amount, e.g. sucrose="30 g/L" KNO3="1900 mg/L" mannitol="0.4 mol/kg"')
    if plan_option:
        p.add_argument("--plan", metavar="PLAN", help="start from a plan file")
    p.add_argument("--base", metavar="ID", help="published base formulation (e.g. ms1962)")
    p.add_argument("--strength", type=float, metavar="X", help="strength of the base (0.5 = half)")
    p.add_argument("--strength-scope", choices=("all", "salts", "macro"),
                   help="which lines of the base the strength scales: salts (mineral salts and iron; the "
                        "default, and what a saved plan records), macro (macro salts) or all (a plan that "
                        "states no scope); the scaled lines are named in a note")
    p.add_argument("--temperature", metavar="T", help='temperature, e.g. "25 degC" (default 25 °C)')
    p.add_argument("--storage-temperature", metavar="T",
                   help='where the medium and its stocks are kept, e.g. "4 degC": solubility is checked there too '
                        "(4 °C is assumed when neither this nor the plan says)")


def add_mismatch_arguments(p: argparse.ArgumentParser) -> None:
    """``--trust`` and ``--strict``: what a command does when a plan's catalog record differs from the
    catalog in force (the one policy, :data:`mediaplan.files.sharing.MISMATCH_POLICY`)."""
    p.add_argument("--trust", choices=("plan", "local"),
                   help="which entry wins when the plan's embedded copy differs from the local catalog")
    p.add_argument("--strict", action="store_true",
                   help="refuse (exit 2) when the plan's recorded catalog entries differ from this catalog "
                        "(default: warn, naming each entry and field, and use the local entry)")


def plan_under_policy(path, catalog, args, notes: list[str]):
    """Read the plan at ``path`` under the one catalog-mismatch policy
    (:data:`mediaplan.files.sharing.MISMATCH_POLICY`): its embedded entries in force (``--trust`` settles a
    conflict), then its recorded entries compared with the catalog in force (a warning each in ``notes``;
    ``--strict`` refuses). Returns (plan, catalog in force)."""
    from mediaplan.files.sharing import mismatch_notes, read_plan

    plan, catalog, more = read_plan(path, catalog, trust=getattr(args, "trust", None))
    notes += more
    notes += mismatch_notes(plan, catalog, strict=getattr(args, "strict", False))
    return plan, catalog


def catalog_from(args):
    from mediaplan.files.catalog import get_catalog

    return get_catalog(extra=getattr(args, "catalog", []) or [])


def recipe_from(args, catalog, *, notes: list[str] | None = None):
    """Build (plan, recipe) from --plan, --base, --strength, --temperature and ID=AMOUNT items."""
    from mediaplan.files import planfile
    from mediaplan.medium.recipe import Recipe
    from mediaplan.medium.units import parse_amount

    plan = None
    plan_path = getattr(args, "plan", None)
    if plan_path:
        plan = planfile.read(plan_path, catalog=catalog)
        recipe = plan.recipe
    else:
        recipe = Recipe()
    changes = {}
    if getattr(args, "base", None):
        catalog.medium(args.base, field="--base")
        changes["base"] = catalog.medium(args.base).id
    if getattr(args, "strength", None) is not None:
        changes["strength"] = args.strength
    if getattr(args, "strength_scope", None):
        changes["strength_scope"] = args.strength_scope
    if getattr(args, "temperature", None):
        changes["temperature"] = args.temperature
    if getattr(args, "storage_temperature", None):
        changes["storage_temperature"] = args.storage_temperature
    if changes:
        recipe = recipe.with_settings(**changes)
    for item in getattr(args, "amounts", []) or []:
        if "=" not in item:
            raise AmountError(f"'{item}' is not ID=AMOUNT", field=item, hint='write e.g. sucrose="30 g/L"')
        key, _, text = item.partition("=")
        res = catalog.resolve(key.strip(), field=key.strip())
        if res.note and notes is not None:
            notes.append(res.note)
        recipe = recipe.with_amount(res.component.id, parse_amount(text, field=key.strip()))
    if notes is not None:
        from mediaplan.medium.recipe import strength_note

        said = strength_note(recipe, catalog)
        if said:  # on standard error only: the JSON and the sheet keep the notes they always had
            note(said)
    return plan, recipe


def located_in_plan(exc: MediaplanError, plan, catalog) -> MediaplanError:
    """An error about the recipe (``medium.components.ID``, ``medium.strength``) raised after the plan was
    read, given the plan's file and the line of that component (as the plan spells it); returns ``exc``."""
    path = getattr(plan, "path", None)
    field = exc.field or ""
    if path is None or exc.file or not field.startswith("medium."):
        return exc
    import tomllib

    from mediaplan.files import reading
    from mediaplan.files.plan_tables import line_of

    try:
        text = reading.decode(reading.read_bytes(path, "plan"), path, "plan")
        comps = tomllib.loads(text).get("medium", {}).get("components", {})
    except (MediaplanError, OSError, tomllib.TOMLDecodeError):
        return exc
    line = None
    if field.startswith("medium.components."):
        cid = field.removeprefix("medium.components.")
        for key in comps if isinstance(comps, dict) else ():
            try:
                if catalog.resolve(key).component.id == cid:
                    line = line_of(text, key, "medium.components")
                    break
            except MediaplanError:
                continue
    else:
        line = line_of(text, field.removeprefix("medium."), "medium")
    return exc.located(file=str(path), line=line)


def print_json(obj, path=None, *, force: bool = False, reads: tuple = ()) -> None:
    """Print ``obj`` (a ``to_dict()`` result) as indented JSON on standard output, or write it to ``path``
    (``-o FILE``; see :func:`mediaplan.files.output.write_output` for ``force`` and ``reads``)."""
    from mediaplan.files.output import write_output
    from mediaplan.views.jsontext import json_text

    write_output(json_text(obj), path, force=force, reads=reads)


def add_output_arguments(p: argparse.ArgumentParser, formats: tuple[str, ...], default: str, *,
                         format_help: str, json_help: str = "print one JSON object") -> None:
    """``--json``, ``--format`` (one or the other: both is a usage error), ``-o FILE`` and ``--force``."""
    kind = p.add_mutually_exclusive_group()
    kind.add_argument("--json", action="store_true", help=json_help + " (also with -o)")
    kind.add_argument("--format", choices=formats, default=None, help=f"{format_help} (default {default})")
    p.set_defaults(format_default=default)
    p.add_argument("-o", "--output", metavar="FILE",
                   help="write to FILE instead of standard output (a new file; see --force)")
    p.add_argument("--force", action="store_true",
                   help="let -o replace an existing file (never one the command reads)")


def note(text: str) -> None:
    """One ``note:`` line on standard error, control characters shown as escapes."""
    import sys

    from mediaplan.views.safe_text import one_line

    print(one_line(f"note: {text}"), file=sys.stderr)


def error_line(exc) -> str:
    """The one line an error prints: ``mediaplan: ...`` in the command line's words, control characters and
    line breaks shown as escapes."""
    from mediaplan.views.safe_text import one_line

    return one_line(f"mediaplan: {in_cli_words(exc)}")


def fail(msg: str, **kw) -> MediaplanError:
    return MediaplanError(msg, **kw)


#: the flag that feeds each field the domain names in its errors (only for errors not located in a file:
#: a field read from a plan keeps the plan's own name)
FLAG_OF_FIELD = {
    "osmoticum": "--with", "target": "--target", "cells": "--cells", "cells.tolerance": "--tolerance",
    "ratio": "--ratio", "hold": "--hold", "link": "--link", "format": "--format", "trust": "--trust",
    "series.first": "--from", "series.last": "--to", "series.step": "--step", "series.steps": "--steps",
    "series.stock": "--stock", "batch_volume": "--volume",
    "stock_volume": "--stock-volume",
    "stock_factor": "--factor", "form": "--form", "force": "--force",
    "instrument": "--instrument", "chamber_temperature": "--chamber", "repeatability": "--repeatability",
    "reading.date": "--date", "reading.record": "--record", "standards": "NOMINAL=DISPLAYED",
    "storage_temperature": "--storage-temperature", "strength_scope": "--strength-scope",
    "series.preparation": "--preparation", "ph": "--ph",
}


def in_cli_words(exc):
    """Name the command-line flags behind an error: the one that feeds its field (for an error no file
    holds) and the one that would settle it (``asks_for``); returns ``exc``."""
    wanted = FLAG_OF_FIELD.get(exc.asks_for or "")
    if wanted and wanted not in (exc.hint or ""):
        exc.hint = f"{exc.hint}; give it with {wanted}" if exc.hint else f"give it with {wanted}"
    if exc.file or exc.line or not exc.field:
        return exc
    head, sep, rest = exc.field.partition(" ")
    flag = FLAG_OF_FIELD.get(exc.field) or FLAG_OF_FIELD.get(head)
    if flag:
        exc.field = flag + (f" {rest}" if sep and exc.field not in FLAG_OF_FIELD else "")
    return exc
