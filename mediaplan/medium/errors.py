"""One family of errors for everything a user can get wrong.

Every error carries where it happened (file, line, field) and a hint on how to fix it, and renders
as one line. The CLI prints ``str(err)`` to stderr and exits 2; the terminal app shows it inline.
"""

from __future__ import annotations


class MediaplanError(Exception):
    """Base class: a problem with the user's input or data, never a bug.

    Parameters
    ----------
    message : what is wrong, in words
    file : the file concerned, if any
    line : 1-based line in that file, if known
    field : the field or key concerned (``components.sucrose.amount``)
    hint : what to do about it
    asks_for : the input that would settle it, as a domain field name (``osmoticum``, ``trust``); each
        front end says how its users give it (the command line names its flag)
    """

    def __init__(
        self,
        message: str,
        *,
        file: str | None = None,
        line: int | None = None,
        field: str | None = None,
        hint: str | None = None,
        asks_for: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.field = field
        self.hint = hint
        self.asks_for = asks_for

    def where(self) -> str:
        parts = []
        if self.file:
            parts.append(str(self.file) + (f":{self.line}" if self.line else ""))
        elif self.line:
            parts.append(f"line {self.line}")
        if self.field:
            parts.append(self.field)
        return ": ".join(parts)

    def __str__(self) -> str:  # one line, always
        where = self.where()
        text = f"{where}: {self.message}" if where else self.message
        if self.hint:
            text += f" ({self.hint})"
        return " ".join(text.split())

    def located(self, *, file: str | None = None, line: int | None = None, field: str | None = None):
        """Fill in location details that the raiser did not know; returns self."""
        if file and not self.file:
            self.file = file
        if line and not self.line:
            self.line = line
        if field and not self.field:
            self.field = field
        return self


class AmountError(MediaplanError):
    """An amount, volume, temperature or target that cannot be used."""


class UnknownComponentError(MediaplanError):
    """A component id, alias or formula that the catalog does not know."""


class CatalogError(MediaplanError):
    """A catalog file that is malformed or inconsistent."""


class PlanFileError(MediaplanError):
    """A plan file that cannot be read or written."""


class ConflictError(PlanFileError):
    """A save refused because the file changed on disk since it was opened."""


class InfeasibleError(MediaplanError):
    """A target that cannot be reached (solubility, direction, range)."""


class FitError(MediaplanError):
    """Counts that cannot be fitted (too few levels, separation, bad CSV)."""
