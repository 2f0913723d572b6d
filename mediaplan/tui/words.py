"""The terminal app in its own words: an error names the app's input that feeds its field, never a flag.

The domain names fields in its own words (``osmoticum``, ``series.first``, ``cells.tolerance``...) and the
command line maps them to its flags (:mod:`mediaplan.cli.common`); here they map to the labels of the
app's inputs, and a hint that tells the user to run a command line is left out. Every place the app
shows a :class:`~mediaplan.medium.errors.MediaplanError` shows :func:`in_app_words` of it.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from mediaplan.medium.errors import MediaplanError

#: the app's input (its label, as the screen shows it) that feeds each domain field; a screen that labels a
#: field its own way passes its labels to :func:`in_app_words`
APP_LABELS: dict[str, str] = {
    # conditions dialog (c)
    "title": "title", "volume": "volume", "temperature": "temperature", "cells": "cells",
    "cells.osmolality": "cells", "cells.potential": "cells",
    # base dialog (b) and amount dialog
    "base": "base formulation", "strength": "strength ×", "amount": "amount",
    # target dialog (t)
    "target": "target", "osmoticum": "osmotica", "ratio": "osmotica", "hold": "osmotica",
    # plasmolysis screen (p)
    "series.first": "first ψ", "series.last": "last ψ", "series.steps": "levels",
    "link": "link (l: logit or probit)",
    # osmometer reading (g)
    "reading": "reading", "instrument": "instrument", "chamber_temperature": "chamber",
    "repeatability": "repeatability", "calibration": "calibration",
    # projection dialog (w: after autoclaving and culture)
    "projection": "projection", "projection.autoclave_hydrolysis": "sucrose hydrolysed",
    "projection.water_loss_per_week": "water lost per week", "projection.water_loss": "water lost per week",
    "projection.weeks": "weeks of culture",
    # preparation sheet (m)
    "batch_volume": "batch",
}

#: fields the app has no input for, in plain words (an error about them cannot be settled in the app)
PLAIN_WORDS: dict[str, str] = {
    "cells.tolerance": "isotonic band of the cells", "series.step": "spacing of the levels",
    "series.stock": "stock solution", "stock_volume": "stock volume", "stock_factor": "stock strength",
    "form": "form on the shelf", "format": "sheet format", "trust": "which catalog entry to trust",
    "force": "permission to replace the file",
    "reading.date": "day of the reading", "reading.record": "record of the reading",
    "standards": "readings of the osmometer standards",
    "storage_temperature": "storage temperature of the plan", "strength_scope": "which lines the strength scales",
    "series.preparation": "how the levels are made", "ph": "pH on the sheet",
}

#: labels of the plasmolysis screen, where one osmoticum is typed and the volume is that of each level
SERIES_LABELS: dict[str, str] = {"osmoticum": "osmoticum", "volume": "volume each"}

_LEVEL = re.compile(r"^series\.levels\[(\d+)\](?:\.(\w+)(?:\[(\d+)\])?)?$")
#: a hint (or part of one) that sends the user to a command line
_COMMAND = re.compile(r"\bmediaplan [a-z]|(?:^|[\s(\"'])--[a-z]")


def app_label(field: str, labels: Mapping[str, str] | None = None) -> str:
    """What the app calls a domain field: its input's label, a plain description, or the field itself."""
    own = {**APP_LABELS, **(labels or {})}
    if field in own:
        return own[field]
    if field in PLAIN_WORDS:
        return PLAIN_WORDS[field]
    m = _LEVEL.match(field)
    if m:
        level, key, sample = m.groups()
        if key in ("plasmolysed", "total"):
            return f"counts of level {level}" + (f", sample {sample}" if sample else "")
        return f"level {level}"
    head, sep, rest = field.partition(" ")
    if sep and head in own:
        return f"{own[head]} {rest}"
    return field


def without_command_lines(hint: str | None) -> str | None:
    """A hint without the parts that tell the user to run a command line (``mediaplan diff``, ``--trust``)."""
    if not hint:
        return hint
    parts = []
    for part in hint.split(";"):
        part = re.sub(r"\s*\([^()]*\)", lambda m: "" if _COMMAND.search(m.group(0)) else m.group(0), part)
        if part.strip() and not _COMMAND.search(part):
            parts.append(part.strip())
    return "; ".join(parts) or None


def in_app_words(exc: MediaplanError, labels: Mapping[str, str] | None = None) -> str:
    """The error as one line in the app's words.

    The field of an error that no file holds is named by the app's input for it (``labels`` first, then
    :data:`APP_LABELS`); a field read from a plan file keeps the file's own name. The input that would
    settle the error (``asks_for``) is named when the app has one; a hint to run a command line is left out.
    """
    own = {**APP_LABELS, **(labels or {})}
    field = exc.field
    if field and not (exc.file or exc.line):
        field = app_label(field, own)
    hint = without_command_lines(exc.hint)
    wanted = own.get(exc.asks_for or "")
    if wanted and wanted not in (hint or ""):
        hint = f"{hint}; set it in the {wanted} field" if hint else f"set it in the {wanted} field"
    return str(MediaplanError(exc.message, file=exc.file, line=exc.line, field=field, hint=hint))


def plain(exc: MediaplanError) -> str:
    """The error in words without the field prefix (shown under the input it concerns)."""
    text = exc.message
    hint = without_command_lines(exc.hint)
    if hint:
        text += f" — {hint}"
    return text


__all__ = ["APP_LABELS", "PLAIN_WORDS", "SERIES_LABELS", "app_label", "in_app_words", "plain",
           "without_command_lines"]
