"""Syntax colours for rule-file text: TOML structure plus the tokens of the expressions in it."""

from __future__ import annotations

import re
from collections.abc import Iterable

from PySide6.QtGui import (
    QColor,
    QFont,
    QPalette,
    QSyntaxHighlighter,
    QTextCharFormat,
    QTextDocument,
)

from hunchbook.core.expr import FUNCTIONS
from hunchbook.core.rules import SERIES_NAMES

#: Keys whose string value is an expression (highlighted token by token).
EXPRESSION_KEYS = frozenset({"position", "constraint"})
#: Words of the expression language that are neither names nor functions.
EXPRESSION_WORDS = frozenset({"and", "or", "not", "if", "else"})

# Block states: what a line that ends inside a multi-line string continues with.
_PLAIN = -1
_IN_BASIC = 1        # inside """...""" (text)
_IN_LITERAL = 2      # inside '''...''' (text)
_IN_BASIC_EXPR = 3   # inside """...""" holding an expression
_IN_LITERAL_EXPR = 4  # inside '''...''' holding an expression
_OPEN_STATES = {('"""', False): _IN_BASIC, ("'''", False): _IN_LITERAL,
                ('"""', True): _IN_BASIC_EXPR, ("'''", True): _IN_LITERAL_EXPR}
_STATE_OPENERS = {state: key for key, state in _OPEN_STATES.items()}

_WORD = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_NUMBER = re.compile(r"[+-]?(?:\d[\d_]*(?:\.[\d_]+)?(?:[eE][+-]?\d+)?|inf|nan)\b")
_DATE = re.compile(r"\d{4}-\d{2}-\d{2}(?:[T ]\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?"
                   r"(?:Z|[+-]\d{2}:\d{2})?")
_BARE_KEY = re.compile(r"[A-Za-z0-9_\-]+")
_EXPR_NUMBER = re.compile(r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
#: A name in quotes inside an expression (a market, ``close["GOLD"]``, or an event,
#: ``event("report")``); in a basic TOML string its quotes are written ``\"``.
_EXPR_QUOTED = re.compile(r"""\\?"[^"\\\n]*\\?"|'[^'\n]*'""")


class TomlHighlighter(QSyntaxHighlighter):
    """Colours a rule file: comments, table headers, keys, strings, numbers, dates, booleans,
    and inside ``position`` / ``constraint`` strings the expression's functions, series,
    parameter names, keywords, numbers and names in quotes (markets, events).

    Colours are chosen for the palette's base colour, so light and dark themes both read well.
    """

    def __init__(self, document: QTextDocument, palette: QPalette | None = None) -> None:
        super().__init__(document)
        self._parameters: frozenset[str] = frozenset()
        self._formats = _formats(palette or QPalette())

    def set_parameter_names(self, names: Iterable[str]) -> None:
        """Highlight these names as parameters inside expressions (re-colours when they change)."""
        wanted = frozenset(names)
        if wanted != self._parameters:
            self._parameters = wanted
            self.rehighlight()

    def parameter_names(self) -> frozenset[str]:
        """The parameter names currently highlighted."""
        return self._parameters

    def highlightBlock(self, text: str) -> None:  # noqa: N802 (Qt override)
        """Colour one line, continuing a multi-line string from the previous line if needed."""
        self.setCurrentBlockState(_PLAIN)
        i = 0
        previous = self.previousBlockState()
        if previous in _STATE_OPENERS:
            delimiter, is_expression = _STATE_OPENERS[previous]
            i = self._string_body(text, 0, delimiter, is_expression)
            if i < 0:
                return
        self._line(text, i)

    def _line(self, text: str, i: int) -> None:
        """Colour from ``i`` to the end of the line, outside any string."""
        stripped = text[i:].lstrip()
        if i == 0 and stripped.startswith("["):
            i = self._header(text, len(text) - len(stripped))
        expect_key = True
        last_key = ""
        brace_depth = 0
        n = len(text)
        while i < n:
            char = text[i]
            if char.isspace():
                i += 1
            elif char == "#":
                self.setFormat(i, n - i, self._formats["comment"])
                return
            elif char in "\"'":
                triple = text.startswith(char * 3, i)
                is_key = expect_key and not triple
                is_expression = not expect_key and last_key in EXPRESSION_KEYS
                if is_key:
                    end, _ = _single_string_end(text, i)
                    self.setFormat(i, end - i, self._formats["key"])
                    last_key = _unquote(text[i:end])
                    i = end
                elif triple:
                    self.setFormat(i, 3, self._formats["string"])
                    i = self._string_body(text, i + 3, char * 3, is_expression)
                    if i < 0:
                        return
                else:
                    i = self._single_string(text, i, is_expression)
            elif char == "=":
                expect_key = False
                i += 1
            elif char == "{":
                brace_depth += 1
                expect_key = True
                i += 1
            elif char == "}":
                brace_depth = max(brace_depth - 1, 0)
                i += 1
            elif char == ",":
                expect_key = brace_depth > 0
                i += 1
            elif char == ".":
                i += 1
            elif expect_key and (match := _BARE_KEY.match(text, i)):
                self.setFormat(i, match.end() - i, self._formats["key"])
                last_key = match.group()
                i = match.end()
            else:
                i = self._scalar(text, i)

    def _header(self, text: str, i: int) -> int:
        """Colour a ``[table]`` header line up to its closing bracket; return where it ends."""
        end = i
        quote = ""
        while end < len(text):
            char = text[end]
            if quote:
                quote = "" if char == quote else quote
            elif char in "\"'":
                quote = char
            elif char == "]":
                end += 2 if text.startswith("]]", end) else 1
                break
            elif char == "#":
                break
            end += 1
        self.setFormat(i, end - i, self._formats["header"])
        return end

    def _scalar(self, text: str, i: int) -> int:
        """Colour a bare value (number, date, boolean) starting at ``i``; return its end."""
        for pattern, name in ((_DATE, "number"), (_NUMBER, "number")):
            match = pattern.match(text, i)
            if match and match.end() > i:
                self.setFormat(i, match.end() - i, self._formats[name])
                return match.end()
        match = _WORD.match(text, i)
        if match:
            if match.group() in ("true", "false"):
                self.setFormat(i, match.end() - i, self._formats["number"])
            return match.end()
        return i + 1

    def _single_string(self, text: str, i: int, is_expression: bool) -> int:
        """Colour a one-line string starting at its quote; return the index after it."""
        end, closed = _single_string_end(text, i)
        body_end = end - 1 if closed else end
        self.setFormat(i, 1, self._formats["string"])
        if closed:
            self.setFormat(end - 1, 1, self._formats["string"])
        self._body(text, i + 1, body_end, is_expression)
        return end

    def _string_body(self, text: str, i: int, delimiter: str, is_expression: bool) -> int:
        """Colour the inside of a multi-line string from ``i``; return the index after its
        closing delimiter, or -1 when the string goes on past this line (block state set)."""
        close = _triple_close(text, i, delimiter)
        if close < 0:
            self._body(text, i, len(text), is_expression)
            self.setCurrentBlockState(_OPEN_STATES[(delimiter, is_expression)])
            return -1
        self._body(text, i, close, is_expression)
        end = close + 3
        while end < len(text) and text[end] == delimiter[0] and end < close + 5:
            end += 1
        self.setFormat(close, end - close, self._formats["string"])
        return end

    def _body(self, text: str, start: int, stop: int, is_expression: bool) -> None:
        """Colour a string's content: plain string colour, or expression tokens."""
        if not is_expression:
            self.setFormat(start, stop - start, self._formats["string"])
            return
        i = start
        while i < stop:
            word = _WORD.match(text, i, stop)
            if word:
                kind = self._word_kind(word.group())
                if kind:
                    self.setFormat(i, word.end() - i, self._formats[kind])
                i = word.end()
                continue
            quoted = _EXPR_QUOTED.match(text, i, stop)
            if quoted:
                self.setFormat(i, quoted.end() - i, self._formats["string"])
                i = quoted.end()
                continue
            number = _EXPR_NUMBER.match(text, i, stop)
            if number:
                self.setFormat(i, number.end() - i, self._formats["number"])
                i = number.end()
                continue
            i += 1

    def _word_kind(self, word: str) -> str | None:
        if word in FUNCTIONS:
            return "function"
        if word in SERIES_NAMES:
            return "series"
        if word in self._parameters:
            return "parameter"
        if word in EXPRESSION_WORDS:
            return "keyword"
        return None


def _single_string_end(text: str, i: int) -> tuple[int, bool]:
    """Index after the one-line string starting at ``text[i]`` (its quote) and whether it is
    closed on this line (else the index is the line's end)."""
    quote = text[i]
    j = i + 1
    while j < len(text):
        if quote == '"' and text[j] == "\\":
            j += 2
            continue
        if text[j] == quote:
            return j + 1, True
        j += 1
    return len(text), False


def _triple_close(text: str, i: int, delimiter: str) -> int:
    """Index of the closing triple delimiter at or after ``i`` on this line, or -1."""
    j = i
    while j < len(text):
        if delimiter == '"""' and text[j] == "\\":
            j += 2
            continue
        if text.startswith(delimiter, j):
            return j
        j += 1
    return -1


def _unquote(key: str) -> str:
    return key[1:-1] if len(key) >= 2 and key[0] == key[-1] and key[0] in "\"'" else key


def _formats(palette: QPalette) -> dict[str, QTextCharFormat]:
    """Text formats for each token kind, tuned to a light or a dark base colour."""
    dark = palette.color(QPalette.ColorRole.Base).lightness() < 128
    colours = {
        "comment": "#8a9199" if dark else "#6a737d",
        "header": "#e0a458" if dark else "#8a4b00",
        "key": "#7fb4ff" if dark else "#0b4f9c",
        "string": "#9ccc65" if dark else "#2f7a14",
        "number": "#f08d7e" if dark else "#a8321f",
        "function": "#d39bf2" if dark else "#6f2da8",
        "series": "#5fd3c4" if dark else "#00726b",
        "parameter": "#ffd166" if dark else "#9a6700",
        "keyword": "#c5a3ff" if dark else "#5a3e9a",
    }
    formats: dict[str, QTextCharFormat] = {}
    for name, colour in colours.items():
        fmt = QTextCharFormat()
        fmt.setForeground(QColor(colour))
        if name in ("header", "function"):
            fmt.setFontWeight(QFont.Weight.Bold)
        if name == "comment":
            fmt.setFontItalic(True)
        if name == "parameter":
            fmt.setFontWeight(QFont.Weight.DemiBold)
        formats[name] = fmt
    return formats
