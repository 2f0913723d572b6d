"""Edits to a plan file that keep what its author wrote.

A plan saved over the file it was opened from (``check --stamp``, ``fit --write-cells``, a series or a
solve written back, a save in the terminal app) is not written afresh: its text is parsed with a
comment-preserving TOML library (tomlkit) and only the values that changed are rewritten. Entries appended
to an array of tables (``[[readings]]``) are added after the last one, the others left as written. Comments, blank
lines, odd spacing, key order, keys this version does not read, the spelling of component keys
(``KNO3 =`` stays ``KNO3 =``) and the format version line (``version = "1.4"``) stay byte for byte.

How the change is found: the plan the file held (read again from its text) and the plan to save are both
turned into the table the plan writer would write (:func:`mediaplan.files.planfile.to_dict`); only the
keys whose values differ between these two are set, added or deleted in the document. A key the plan
model does not read is in neither table, so it is never touched. The edited text is then read back and
must give exactly the plan to save; when it does not (a layout the editor cannot follow), or the text
cannot be read with the catalog, :class:`EditError` says why and the caller writes the plan whole.

New files are written with tomli-w (:func:`mediaplan.files.planfile.dumps`), not here.
"""

from __future__ import annotations

import datetime
from typing import Any

import tomlkit
from tomlkit.container import Container
from tomlkit.items import AoT, Table

from mediaplan.medium.catalog import Catalog
from mediaplan.medium.errors import MediaplanError

#: where the component keys live (their spelling in the file is kept)
COMPONENTS = ("medium", "components")


class EditError(Exception):
    """The file's text could not be edited to hold the plan (the caller writes the plan whole)."""


def updated_text(old_text: str, plan, *, catalog: Catalog | None = None) -> str:
    """``old_text`` (a plan file) edited so that it holds ``plan``; raises :class:`EditError` when it cannot.

    catalog : resolves component keys as written (``KNO3``) to the ids the plan holds; without one the
        catalog in force is used, and when the file does not read with it either, the keys are taken as
        written (an edit still, but a key spelt otherwise than the plan's id is then written as the id)
    """
    if catalog is not None:
        return _edited(old_text, plan, catalog)
    in_force = _catalog_in_force()
    if in_force is not None:
        try:
            return _edited(old_text, plan, in_force)
        except EditError:
            pass
    return _edited(old_text, plan, None)


def _catalog_in_force() -> Catalog | None:
    try:
        from mediaplan.files.catalog import get_catalog

        return get_catalog()
    except MediaplanError:
        return None


def _edited(old_text: str, plan, catalog: Catalog | None) -> str:
    from mediaplan.files import planfile

    try:
        was = planfile.loads(old_text, catalog=catalog)
    except MediaplanError as exc:
        raise EditError(f"the file as it stands cannot be read: {exc}") from None
    before, after = planfile.to_dict(was), planfile.to_dict(plan)
    try:
        doc = tomlkit.parse(old_text)
    except Exception as exc:  # noqa: BLE001 - any parse failure of the editor means: write the plan whole
        raise EditError(f"the editor cannot read the file: {exc}") from None
    spelled = _component_spellings(doc, was)
    try:
        _merge(doc, before, after, (), spelled)
        text = doc.as_string()
    except EditError:
        raise
    except Exception as exc:  # noqa: BLE001 - a layout the editor cannot follow: write the plan whole
        raise EditError(f"the editor cannot change this layout: {type(exc).__name__}") from None
    try:
        again = planfile.to_dict(planfile.loads(text, catalog=catalog))
    except MediaplanError as exc:
        raise EditError(f"the edited text does not read back: {exc}") from None
    if not same_value(again, after):
        raise EditError("the edited text does not read back as the plan")
    return text


def _component_spellings(doc, plan) -> dict[str, str]:
    """Component id -> its key as written in the file (the reader keeps the file's order, one id a key)."""
    try:
        table = doc[COMPONENTS[0]][COMPONENTS[1]]
        keys = list(table.keys())
    except (KeyError, TypeError, AttributeError):
        return {}
    ids = [cid for cid, _ in plan.recipe.amounts]
    if len(keys) != len(ids):
        return {}
    return dict(zip(ids, keys, strict=True))


def same_value(a: Any, b: Any) -> bool:
    """Equal values of the same TOML type (``1`` is not ``1.0``, ``true`` is not ``1``), tables and arrays
    compared item by item."""
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(same_value(a[k], b[k]) for k in a)
    if isinstance(a, (list, tuple)) and isinstance(b, (list, tuple)):
        return len(a) == len(b) and all(same_value(x, y) for x, y in zip(a, b, strict=True))
    if isinstance(a, datetime.date) or isinstance(b, datetime.date):
        return type(a) is type(b) and a == b
    return type(a) is type(b) and a == b


def _merge(container, before: dict, after: dict, path: tuple, spelled: dict[str, str]) -> None:
    """Change ``container`` (a part of the document) from ``before`` to ``after``: set what differs, add
    what is new, delete what went; leave everything else as it is."""
    def key_of(k: str) -> str:
        return spelled.get(k, k) if path == COMPONENTS else k

    for k, new in after.items():
        dk = key_of(k)
        if k in before and same_value(before[k], new):
            continue  # unchanged (also a default the file leaves out: it stays out)
        if dk not in container:
            _add(container, dk, new, top=not path)
            continue
        old, here = before.get(k), container[dk]
        if isinstance(new, dict) and isinstance(old, dict) and hasattr(here, "keys"):
            _merge(here, old, new, (*path, k), spelled)
        elif (_tables(new) and _tables(old) and len(new) == len(old) and isinstance(here, (AoT, list))
              and len(here) == len(new)):
            for i, (o, n) in enumerate(zip(old, new, strict=True)):
                _merge(here[i], o, n, (*path, k, i), spelled)
        elif (_tables(new) and _tables(old) and len(new) > len(old) and isinstance(here, AoT)
              and len(here) == len(old)):
            # entries appended (a reading recorded): the ones there are edited in place, the new ones added
            for i, (o, n) in enumerate(zip(old, new[:len(old)], strict=True)):
                _merge(here[i], o, n, (*path, k, i), spelled)
            for n in new[len(old):]:
                here.append(_item(n))
        else:
            container[dk] = _item(new)
    for k in before:
        if k not in after and key_of(k) in container:
            del container[key_of(k)]


def _tables(v: Any) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def _item(value: Any):
    return tomlkit.item(value)


def _add(container, key: str, value: Any, *, top: bool) -> None:
    """Add a key: a plain value after the table's last value (before the comments and blank lines that lead
    into the next table); a table after everything else, set off by a blank line."""
    item = _item(value)
    if isinstance(item, (Table, AoT)):
        if top:
            _blank_line_before_new_table(container)
        container[key] = item
        return
    body = _body(container)
    last = max((i for i, (k, v) in enumerate(body) if k is not None and not isinstance(v, (Table, AoT))),
               default=None)
    insert_at = getattr(_container(container), "_insert_at", None)
    if body and insert_at is not None and (last is None or last + 1 < len(body)):
        try:
            insert_at(0 if last is None else last + 1, key, item)
            return
        except (ValueError, TypeError):
            pass
    container[key] = item


def _container(container) -> Container | None:
    if isinstance(container, Container):
        return container
    return getattr(container, "value", None) if isinstance(getattr(container, "value", None), Container) else None


def _body(container) -> list:
    c = _container(container)
    return list(getattr(c, "body", [])) if c is not None else []


def _blank_line_before_new_table(doc) -> None:
    text = doc.as_string()
    if not text or text.endswith("\n\n"):
        return
    for _ in range(1 if text.endswith("\n") else 2):
        doc.add(tomlkit.nl())


__all__ = ["EditError", "updated_text", "same_value"]
