"""Inputs that take units: Validators that parse with the one unit registry (mediaplan.medium.units).

The failure description is the MediaplanError's own one-line message, shown inline under the
input; nothing here computes chemistry.
"""

from __future__ import annotations

from collections.abc import Callable

from textual.validation import ValidationResult, Validator
from textual.widgets import Input, Static

from mediaplan.medium.errors import MediaplanError


class ParsedValidator(Validator):
    """Valid when ``parse(text)`` succeeds; the error's message becomes the failure description."""

    def __init__(self, parse: Callable[[str], object], *, allow_empty: bool = False) -> None:
        super().__init__()
        self._parse = parse
        self._allow_empty = allow_empty

    def validate(self, value: str) -> ValidationResult:
        if not value.strip():
            return self.success() if self._allow_empty else self.failure("type a value")
        try:
            self._parse(value)
        except MediaplanError as exc:
            return self.failure(_plain(exc))
        return self.success()


def _plain(exc: MediaplanError) -> str:
    """The error in words without the field prefix (the input already says which field)."""
    from mediaplan.tui.words import plain

    return plain(exc)


class AmountValidator(ParsedValidator):
    """An amount with a unit: ``30 g/L``, ``20 mM``, ``0.5 mol/kg``, ``3 % w/v``."""

    def __init__(self) -> None:
        from mediaplan.medium.units import parse_amount

        super().__init__(lambda text: parse_amount(text, field="amount"))


class VolumeValidator(ParsedValidator):
    def __init__(self) -> None:
        from mediaplan.medium.units import parse_volume

        super().__init__(lambda text: parse_volume(text))


class TemperatureValidator(ParsedValidator):
    def __init__(self, *, allow_empty: bool = False) -> None:
        from mediaplan.medium.units import parse_temperature

        super().__init__(lambda text: parse_temperature(text), allow_empty=allow_empty)


class TargetValidator(ParsedValidator):
    """A water potential (``-0.8 MPa``) or an osmolality (``450 mOsm/kg``); empty allowed if asked."""

    def __init__(self, *, allow_empty: bool = False) -> None:
        from mediaplan.medium.units import parse_target

        super().__init__(lambda text: parse_target(text), allow_empty=allow_empty)


class StrengthValidator(ParsedValidator):
    def __init__(self) -> None:
        super().__init__(parse_strength)


def parse_strength(text: str) -> float:
    """A strength factor: ``1``, ``0.5``, ``1/2`` or ``50 %`` -> 0.5. Raises AmountError."""
    from mediaplan.medium.errors import AmountError

    t = text.strip().replace(",", ".")
    try:
        if t.endswith("%"):
            value = float(t[:-1]) / 100.0
        elif "/" in t:
            num, _, den = t.partition("/")
            value = float(num) / float(den)
        else:
            value = float(t)
    except (ValueError, ZeroDivisionError):
        raise AmountError(f"cannot read strength {text!r}", hint="type 1 for full, 0.5 or 1/2 or 50 % for half") \
            from None
    if not 0 <= value <= 20 or value != value:
        raise AmountError(f"strength {text!r} is outside 0-20", hint="1 is full strength")
    return value


class FieldInput(Input):
    """An Input styled once, when it mounts: the classes it takes while it is built (compact, valid or
    invalid for its first value) do not style it beforehand (Textual would, and then again on mounting)."""

    def update_node_styles(self, animate: bool = True) -> None:
        if self.is_attached:
            super().update_node_styles(animate)


class FieldMessage(Static):
    """The inline message under an input: the validator's words, or a neutral hint."""

    DEFAULT_CLASSES = "field-message"

    def __init__(self, hint: str = "", **kw) -> None:
        super().__init__(hint, markup=False, **kw)
        self.hint = hint

    def show(self, result: ValidationResult | None) -> bool:
        """Show a validation result; returns True when the value is valid."""
        if result is None or result.is_valid:
            self.update(self.hint)
            self.remove_class("-error")
            return True
        self.update("✗ " + "; ".join(result.failure_descriptions))
        self.add_class("-error")
        return False


def report(message: FieldMessage, error: str | None, ok_text: str) -> bool:
    """Show a worker's error in words (returns False), or ``ok_text`` (returns True)."""
    message.set_class(error is not None, "-error")
    message.update("✗ " + error if error is not None else ok_text)
    return error is None


def validated_value(inp: Input, message: FieldMessage) -> str | None:
    """The input's value if it validates (showing the reason inline if not)."""
    result = inp.validate(inp.value)
    return inp.value.strip() if message.show(result) else None
