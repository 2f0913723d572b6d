"""Text from files made safe to show: one function per place it goes.

Titles, notes, catalog names, file names and error messages come from files anyone may have written. What
they hold must not act on the reader's terminal, spreadsheet or browser:

- :func:`terminal` (every text view, every error and note line): control characters other than tab and
  newline (C0, DEL, C1: ESC, BEL, CSI ...) and the invisible bidirectional overrides are shown as escapes
  (``\\x1b``, ``\\u202e``), so nothing a file holds can move the cursor, change colours, ring the bell,
  set the window title or reorder what is shown;
- :func:`one_line`: the same, with line breaks shown as ``\\n`` (an error is always one line);
- :func:`csv_cell`: a text cell that a spreadsheet would take as a formula (it starts with ``=``, ``+``,
  ``-`` or ``@``) gets a leading single quote; numbers (``-0.81``, ``+5``, ``1,234``) are left as they are;
- :func:`markdown` and :func:`html_text`: HTML in the text is escaped (``<`` → ``&lt;`` ...), so a title
  or a catalog name cannot add markup, links or scripts to a document; Markdown text keeps to one line.
"""

from __future__ import annotations

import html
import re

#: C0 controls except tab and newline, DEL, C1 controls; and the bidirectional embedding/override/isolate
#: marks, which reorder the text around them without being seen
_UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")
_UNSAFE_OR_NEWLINE = re.compile("[\x00-\x08\x0a-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")
#: what makes a spreadsheet read a cell as a formula
FORMULA_START = ("=", "+", "-", "@")
_NUMBER = re.compile(r"[+-]?(\d{1,3}(,\d{3})+|\d+)?(\.\d+)?([eE][+-]?\d+)?")


def _escape(m: re.Match) -> str:
    c = m.group()
    return f"\\x{ord(c):02x}" if ord(c) < 0x100 else f"\\u{ord(c):04x}"


def terminal(text: str) -> str:
    """``text`` with every control character but tab and newline shown as an escape (``\\x1b``)."""
    return _UNSAFE.sub(_escape, text)


def one_line(text: str) -> str:
    """``text`` safe for a one-line message: control characters and line breaks shown as escapes."""
    return _UNSAFE_OR_NEWLINE.sub(lambda m: "\\n" if m.group() == "\n" else _escape(m), text)


def is_number(text: str) -> bool:
    """Does ``text`` read as a plain number (sign, digits, thousands commas, decimals, exponent)?"""
    t = text.strip()
    return bool(t) and any(ch.isdigit() for ch in t) and _NUMBER.fullmatch(t) is not None


def csv_cell(value):
    """A CSV cell: text made inert for spreadsheets (a leading ``'`` before ``= + - @``) and freed of
    control characters; numbers, and text that reads as a number, are left as they are."""
    if not isinstance(value, str):
        return value
    text = terminal(value)
    if text.startswith(FORMULA_START) and not is_number(text):
        return "'" + text
    return text


def markdown(text) -> str:
    """Text for a Markdown document: HTML escaped, control characters escaped, line breaks as spaces."""
    return html.escape(terminal(str(text)), quote=False).replace("\n", " ")


def html_text(text) -> str:
    """Text for an HTML document: HTML and quotes escaped, control characters escaped."""
    return html.escape(terminal(str(text)))


# ---- numbers as people read them ---------------------------------------------------------------------
#: a zero with a minus sign in front (``-0.0000``, ``−0.000``, ``-0``): rounding left the sign of a tiny
#: negative number, which reads as a value below zero
_SIGNED_ZERO = re.compile(r"(?<![\w.])[-\u2212](0(?:\.0+)?)(?![\d.eE])")
#: a number in exponent form in front of a percent sign or a times sign (``1e+02 %``, ``1e+06×``)
_EXP_BEFORE_UNIT = re.compile(r"(?<![\w.])(\d(?:\.\d+)?[eE][+-]?\d+)(?=\s?[%×x])")
#: a decimal with 15 or more digits after the point: binary float noise (``0.30000000000000004``)
_FLOAT_NOISE = re.compile(r"(?<![\w.])(\d+\.\d{15,})(?![\d])")


def _plain(m: re.Match) -> str:
    x = float(m.group(1))
    if not 1e-4 <= abs(x) < 1e9:
        return m.group(1)
    return f"{x:.6f}".rstrip("0").rstrip(".")


def tidy_numbers(text: str) -> str:
    """Numbers in ``text`` as people read them: no minus on a zero (``-0.0000`` → ``0.0000``), no exponent
    before a percent or times sign (``1e+02 %`` → ``100 %``), no float noise (``0.30000000000000004`` →
    ``0.3``). Digits that carry a value are never changed: only signs of zeros, the form of a number, and
    digits past the 12th significant one."""
    text = _SIGNED_ZERO.sub(r"\1", text)
    text = _EXP_BEFORE_UNIT.sub(_plain, text)
    return _FLOAT_NOISE.sub(lambda m: f"{float(m.group(1)):.12g}", text)
