"""What the records of a plan's optional tables share: each reads as the table it was read from.

A record (``CellReference``, ``ProjectionRecord``, ``SeriesRecord``...) is a frozen dataclass whose fields
are the table's known keys (None = not in the table) plus ``extra``, the keys this version does not
know. :class:`TableView` makes it a read-only mapping over that table: ``dict(record)`` is the table as
TOML holds it (arrays as lists, sub-tables as dicts, unknown keys after the known ones) and
``record["osmoticum"]`` one value of it. Code computes with the attributes; the view is what the plan
file writer (:mod:`mediaplan.files.plan_tables`) and code written against the tables read.
Two records are equal when their tables are.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import fields
from typing import Any, ClassVar


class TableView(Mapping):
    """Read-only mapping over a record's table (see the module docstring)."""

    #: fields holding (key, value) pairs, shown as a sub-table
    _PAIRS: ClassVar[tuple[str, ...]] = ()

    def table(self) -> dict[str, Any]:
        """The record as its TOML table: set fields in field order (as TOML values), then ``extra``."""
        out: dict[str, Any] = {}
        for f in fields(self):  # type: ignore[arg-type]
            if f.name == "extra":
                continue
            value = getattr(self, f.name)
            if value is not None:
                out[f.name] = dict(value) if f.name in self._PAIRS else _toml_value(value)
        out.update(getattr(self, "extra", ()))
        return out

    def __getitem__(self, key: str) -> Any:
        return self.table()[key]

    def __iter__(self) -> Iterator[str]:
        return iter(self.table())

    def __len__(self) -> int:
        return len(self.table())


def _toml_value(value: Any) -> Any:
    if isinstance(value, tuple):
        return list(value)
    if isinstance(value, Mapping) and not isinstance(value, TableView):
        return dict(value)
    return value


__all__ = ["TableView"]
