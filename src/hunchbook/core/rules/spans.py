"""Where a rule error points in the rule text: from its kind, key and expression column to a
:class:`~hunchbook.core.errors.TextSpan`.

Pure string work over the :class:`~hunchbook.core.rules.places.Places` noted while the text was
read; an expression column is mapped through the string's quotes and escapes (TOML 1.0.0) to
the characters where the token is written.
"""

from __future__ import annotations

import re

from hunchbook.core.errors import RuleError, TextSpan
from hunchbook.core.rules.places import Places, Stretch

_WORD = re.compile(r"\w+")
#: Length in the text of the basic-string escapes longer than two characters (TOML 1.0.0).
_ESCAPE_LENGTHS = {"u": 6, "U": 10, "x": 4}
_SIMPLE_ESCAPES = {"b": "\b", "t": "\t", "n": "\n", "f": "\f", "r": "\r", '"': '"', "\\": "\\",
                   "e": "\x1b"}


def error_span(text: str, places: Places, error: RuleError) -> TextSpan | None:
    """The span of ``text`` that ``error`` is about, chosen by its kind (see ``RuleErrorKind``).

    A key that is not written in the text (a missing key, or a value checked as a whole table)
    points at its nearest enclosing table. ``None`` when nothing in the text fits, such as a
    required top-level key that is missing.
    """
    key = error.key
    if key is None:
        return None
    stretch: Stretch | None = None
    if error.kind == "expression" and key in places.values:
        stretch = expression_stretch(text, places.values[key], error.column)
    elif error.kind in ("unknown-key", "bad-name"):
        stretch = places.keys.get(key)
    elif error.kind == "bad-value":
        stretch = places.values.get(key)
    if stretch is None:
        stretch = places.enclosing(key)
    return None if stretch is None else text_span(text, *stretch)


def point_span(text: str, index: int) -> TextSpan:
    """The character at ``index`` (a TOML syntax error's position); an empty span when the
    index is at a line break or the end of the text, where there is no character to mark."""
    index = min(max(index, 0), len(text))
    at_break = index == len(text) or text[index] in "\r\n"
    return text_span(text, index, index if at_break else index + 1)


def text_span(text: str, start: int, end: int) -> TextSpan:
    """The :class:`TextSpan` of ``text[start:end]``."""
    line, column = _line_column(text, start)
    end_line, end_column = _line_column(text, end)
    return TextSpan(line, column, end_line, end_column)


def expression_stretch(text: str, value: Stretch, column: int | None) -> Stretch:
    """Where the token at a 1-based ``column`` of an expression is written.

    ``value`` is the stretch of the string holding the expression. The token is the word (name
    or number) starting at the column, or the single character there; a column past the end
    points at the closing quote. Without a column, or when the value is not a string, the
    whole value.
    """
    decoded = _decode_string(text, *value)
    if column is None or decoded is None:
        return value
    chars, places = decoded
    index = min(max(column - 1, 0), len(chars))  # past the end: the closing quote
    word = _WORD.match(chars, index)
    last = (word.end() if word else index + 1) - 1
    width = _raw_length(text, places[last]) if text.startswith('"', value[0]) else 1
    return places[index], places[last] + width


def _line_column(text: str, index: int) -> tuple[int, int]:
    line_start = text.rfind("\n", 0, index) + 1
    return text.count("\n", 0, index) + 1, index - line_start + 1


def _decode_string(text: str, start: int, end: int) -> tuple[str, list[int]] | None:
    """Decode the TOML string written at ``text[start:end]``: its characters and, for each,
    the index in ``text`` where it is written, plus a last entry for the closing quote.
    ``None`` when the value there is not a string."""
    for delimiter in ('"""', "'''", '"', "'"):
        if text.startswith(delimiter, start):
            break
    else:
        return None
    basic = delimiter[0] == '"'
    i = start + len(delimiter)
    stop = end - len(delimiter) if text.endswith(delimiter, start, end) else end
    if len(delimiter) == 3:  # a line break right after the opening quotes is trimmed
        if text.startswith("\r\n", i):
            i += 2
        elif text.startswith("\n", i):
            i += 1
    chars: list[str] = []
    places: list[int] = []
    while i < stop:
        if basic and text[i] == "\\":
            after = i + 1
            while after < stop and text[after] in " \t":
                after += 1
            if len(delimiter) == 3 and text.startswith(("\n", "\r\n"), after):
                # A line-ending backslash swallows the line break and the blanks that follow.
                i = after
                while i < stop and text[i] in " \t\r\n":
                    i += 1
                continue
            length = _raw_length(text, i)
            chars.append(_decoded_escape(text[i: i + length]))
            places.append(i)
            i += length
            continue
        chars.append(text[i])
        places.append(i)
        i += 1
    places.append(stop)
    return "".join(chars), places


def _raw_length(text: str, at: int) -> int:
    """How many characters of a basic string's text write the one character at ``at``."""
    if text[at] != "\\":
        return 1
    return _ESCAPE_LENGTHS.get(text[at + 1: at + 2], 2)


def _decoded_escape(escape: str) -> str:
    """The character a basic-string escape such as ``\\n`` or ``\\u00e9`` stands for."""
    code = escape[1:2]
    if code in _SIMPLE_ESCAPES:
        return _SIMPLE_ESCAPES[code]
    try:
        return chr(int(escape[2:], 16))
    except ValueError:
        return "?"
