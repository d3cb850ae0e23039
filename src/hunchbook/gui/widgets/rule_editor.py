"""The spec editor: a form for a rule file side by side with the rule-file text, kept in sync.

Typing in the text re-reads it after a short pause and, when it is valid, refills the form;
changing the form rewrites the text through :func:`hunchbook.core.rules.dump_rules`, which keeps
the user's comments and layout. Errors are shown below the text and underlined where they are.
"""

from __future__ import annotations

import re
from typing import NamedTuple

from PySide6.QtCore import QEvent, Qt, QTimer, Signal
from PySide6.QtGui import (
    QColor,
    QFontDatabase,
    QKeyEvent,
    QKeySequence,
    QPalette,
    QTextCharFormat,
    QTextCursor,
    QTextFormat,
)
from PySide6.QtWidgets import (
    QApplication,
    QHBoxLayout,
    QLabel,
    QPlainTextEdit,
    QSplitter,
    QTextEdit,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.errors import RuleError
from hunchbook.core.rules import RuleSpec, dump_rules, parse_rules
from hunchbook.gui.widgets.rule_form import RuleForm
from hunchbook.gui.widgets.toml_highlighter import TomlHighlighter

#: Pause after the last keystroke before the text is re-read (milliseconds).
SETTLE_MS = 300
_OUT_OF_DATE = ("The text has an error, so these fields show its last valid version. Fix the "
                "text (see the message below it) to edit here again.")
_NO_RULES = "No valid rule text yet: write or load a rule file and the fields will follow it."


class RuleEditor(QWidget):
    """Edits one rule file as a form and as text, both kept in sync.

    Signals
    -------
    text_changed(str)
        The rule text changed, by typing or through the form; sent once typing pauses
        (about 300 ms), never for :meth:`set_text`.
    validity_changed(bool, str)
        Whether the text is a valid rule file, and the one-line error message ("" when valid).
    save_requested(str)
        Ctrl+S (the platform's Save keys) inside the editor, with the current text.
    """

    text_changed = Signal(str)
    validity_changed = Signal(bool, str)
    save_requested = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._text = ""
        self._plain = ""
        self._crlf = False
        self._applying = False
        self._parse_pending = False
        self._emit_pending = False
        self._read_only = False
        self._error: RuleError | None = None
        self._validity: tuple[bool, str] | None = None

        self.form = RuleForm()
        self.form.edited.connect(self._form_edited)

        self.text_edit = QPlainTextEdit()
        self.text_edit.setObjectName("ruleText")
        font = QFontDatabase.systemFont(QFontDatabase.SystemFont.FixedFont)
        self.text_edit.setFont(font)
        self.text_edit.setLineWrapMode(QPlainTextEdit.LineWrapMode.NoWrap)
        self.text_edit.setTabStopDistance(4 * self.text_edit.fontMetrics().horizontalAdvance(" "))
        self.text_edit.setToolTip("The rule file as text (TOML). Edits here update the form "
                                  "once the text is valid; Ctrl+S saves a new revision.")
        self.highlighter = TomlHighlighter(self.text_edit.document(), self.text_edit.palette())
        self.text_edit.textChanged.connect(self._text_edited)
        self.text_edit.cursorPositionChanged.connect(self._show_cursor_position)

        self.message = QLabel()
        self.message.setObjectName("ruleMessage")
        self.message.setWordWrap(True)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.cursor_label = QLabel()
        self.cursor_label.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignTop)
        self._error_colour = _error_colour(self.palette())

        self._settle = QTimer(self)
        self._settle.setSingleShot(True)
        self._settle.setInterval(SETTLE_MS)
        self._settle.timeout.connect(self._settled)

        text_side = QWidget()
        text_layout = QVBoxLayout(text_side)
        text_layout.setContentsMargins(0, 0, 0, 0)
        text_layout.addWidget(self.text_edit, 1)
        status = QHBoxLayout()
        status.addWidget(self.message, 1)
        status.addWidget(self.cursor_label)
        text_layout.addLayout(status)

        self.splitter = QSplitter(Qt.Orientation.Horizontal)
        self.splitter.setChildrenCollapsible(False)
        self.splitter.addWidget(self.form)
        self.splitter.addWidget(text_side)
        self.splitter.setStretchFactor(0, 4)
        self.splitter.setStretchFactor(1, 5)
        self.splitter.setSizes([420, 560])
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)

        self.form.set_spec(None)
        self.form.set_out_of_date(_NO_RULES)
        self._show_cursor_position()
        app = QApplication.instance()
        if isinstance(app, QApplication):
            app.focusChanged.connect(self._focus_changed)

    # --- public API -----------------------------------------------------------------------------

    def set_text(self, text: str) -> None:
        """Load a rule text (a stored revision); sends no ``text_changed``.

        The undo history starts afresh, the form follows the text at once when it is valid,
        and ``validity_changed`` reports the new state if it differs.
        """
        self._settle.stop()
        self._emit_pending = False
        self._applying = True
        try:
            self.text_edit.setPlainText(text)
        finally:
            self._applying = False
        self._text = text
        self._plain = self.text_edit.toPlainText()
        self._crlf = "\r\n" in text
        self._reread()

    def text(self) -> str:
        """The current rule text, exactly as loaded, typed or written by the form."""
        return self._text

    def set_market_choices(self, symbols: list[str]) -> None:
        """Markets offered by the form's market list (markets named in the text stay listed)."""
        self.form.set_market_choices(symbols)

    def set_read_only(self, read_only: bool) -> None:
        """Show the rule without allowing changes (text and form); Ctrl+S is then ignored."""
        self._read_only = read_only
        self.text_edit.setReadOnly(read_only)
        self.form.set_read_only(read_only)

    def is_read_only(self) -> bool:
        """Whether changes are blocked."""
        return self._read_only

    def error_message(self) -> str | None:
        """The one-line message of the text's error, or ``None`` when the text is valid."""
        return str(self._error) if self._error is not None else None

    def error_range(self) -> tuple[int, int] | None:
        """The underlined part of the document as (start, end) positions, or ``None``."""
        selections = self.text_edit.extraSelections()
        if not selections:
            return None
        cursor = selections[0].cursor
        return cursor.selectionStart(), cursor.selectionEnd()

    # --- keys ---------------------------------------------------------------------------------

    def event(self, event: QEvent) -> bool:
        """Claim the Save keys for this editor while focus is inside it (before window-wide
        shortcuts), so Ctrl+S here always means "save this rule"."""
        if (event.type() == QEvent.Type.ShortcutOverride and isinstance(event, QKeyEvent)
                and event.matches(QKeySequence.StandardKey.Save)):
            event.accept()
            return True
        return super().event(event)

    def keyPressEvent(self, event: QKeyEvent) -> None:  # noqa: N802 (Qt override)
        """Ctrl+S sends ``save_requested`` with the current text (not when read-only)."""
        if event.matches(QKeySequence.StandardKey.Save):
            event.accept()
            if not self._read_only:
                self._flush()
                self.save_requested.emit(self._text)
            return
        super().keyPressEvent(event)

    # --- text to form -------------------------------------------------------------------------

    def _text_edited(self) -> None:
        if self._applying:
            return
        plain = self.text_edit.toPlainText()
        if plain == self._plain:
            return  # only colours changed (the highlighter re-formats the document)
        self._plain = plain
        self._text = plain.replace("\n", "\r\n") if self._crlf else plain
        self._parse_pending = True
        self._emit_pending = True
        self._settle.start()

    def _settled(self) -> None:
        if self._parse_pending:
            self._reread()
        if self._emit_pending:
            self._emit_pending = False
            self.text_changed.emit(self._text)

    def _flush(self) -> None:
        """Re-read the text now if typing is still waiting for its pause."""
        if self._parse_pending:
            self._settle.stop()
            self._settled()

    def _focus_changed(self, _old: QWidget | None, new: QWidget | None) -> None:
        # Entering the form while the text waits to be re-read: bring the form up to date first,
        # so a change made in the form starts from what the text says.
        if new is not None and self._parse_pending and self.form.isAncestorOf(new):
            self._flush()

    def _reread(self) -> None:
        """Parse the text; refill the form when valid, else show and underline the error."""
        self._parse_pending = False
        try:
            spec = parse_rules(self._text)
        except RuleError as error:
            self._show_error(error)
            if not self._text.strip():
                self.form.set_spec(None)
                self.form.set_out_of_date(_NO_RULES)
            elif not self.form.is_out_of_date():
                self.form.set_out_of_date(_OUT_OF_DATE)
            return
        self.form.set_spec(spec)
        self.form.set_problem(None)
        self.form.set_out_of_date(None)
        self._show_valid(spec)

    # --- form to text -------------------------------------------------------------------------

    def _form_edited(self) -> None:
        if self._read_only:
            return
        if self._parse_pending:
            self._flush()
            return
        try:
            spec = self.form.spec()
            new_text = dump_rules(spec, original=self._text)
        except RuleError as error:
            self.form.set_problem(str(error))
            return
        self.form.set_problem(None)
        self._replace_text(new_text)
        self._plain = self.text_edit.toPlainText()
        self._text = new_text
        self._emit_pending = True
        self._settle.start()
        self._show_valid(parse_rules(new_text))

    def _replace_text(self, new_text: str) -> None:
        """Change the document to ``new_text`` by replacing only the part that differs, as one
        undoable step (the cursor and scroll position stay where they were)."""
        old = self.text_edit.toPlainText()
        new = new_text.replace("\r\n", "\n")
        prefix = 0
        limit = min(len(old), len(new))
        while prefix < limit and old[prefix] == new[prefix]:
            prefix += 1
        suffix = 0
        while (suffix < limit - prefix
               and old[len(old) - 1 - suffix] == new[len(new) - 1 - suffix]):
            suffix += 1
        cursor = QTextCursor(self.text_edit.document())
        cursor.setPosition(_qt_position(old, prefix))
        cursor.setPosition(_qt_position(old, len(old) - suffix), QTextCursor.MoveMode.KeepAnchor)
        self._applying = True
        try:
            cursor.beginEditBlock()
            cursor.insertText(new[prefix: len(new) - suffix])
            cursor.endEditBlock()
        finally:
            self._applying = False

    # --- showing the state --------------------------------------------------------------------

    def _show_error(self, error: RuleError) -> None:
        self._error = error
        message = str(error)
        self.message.setText(message)
        self.message.setStyleSheet(f"color: {self._error_colour.name()};")
        plain = self.text_edit.toPlainText()
        span = error_span(plain, error)
        selections = []
        if span is not None:
            start, end = (_qt_position(plain, i) for i in span)
            if error.key:  # syntax errors already name their line
                line = self.text_edit.document().findBlock(start).blockNumber() + 1
                self.message.setText(f"Line {line}: {message}")
            selection = QTextEdit.ExtraSelection()
            cursor = QTextCursor(self.text_edit.document())
            cursor.setPosition(start)
            cursor.setPosition(max(end, start), QTextCursor.MoveMode.KeepAnchor)
            selection.cursor = cursor
            fmt = QTextCharFormat()
            fmt.setUnderlineStyle(QTextCharFormat.UnderlineStyle.WaveUnderline)
            fmt.setUnderlineColor(self._error_colour)
            background = QColor(self._error_colour)
            background.setAlpha(40)
            fmt.setBackground(background)
            if end <= start:
                fmt.setProperty(QTextFormat.Property.FullWidthSelection, True)
            selection.format = fmt
            selections.append(selection)
        self.text_edit.setExtraSelections(selections)
        self._report(False, message)

    def _show_valid(self, spec: RuleSpec) -> None:
        self._error = None
        self.text_edit.setExtraSelections([])
        self.highlighter.set_parameter_names(spec.parameter_names)
        sets = spec.grid_size()
        markets = len(spec.markets)
        self.message.setText(f"Valid rule file: {sets:,} parameter set{'s' * (sets != 1)} "
                             f"before the constraint, {markets} market{'s' * (markets != 1)}.")
        self.message.setStyleSheet("")
        self.message.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        self._report(True, "")

    def _report(self, valid: bool, message: str) -> None:
        if self._validity != (valid, message):
            self._validity = (valid, message)
            self.validity_changed.emit(valid, message)

    def _show_cursor_position(self) -> None:
        cursor = self.text_edit.textCursor()
        self.cursor_label.setText(f"Line {cursor.blockNumber() + 1}, "
                                  f"column {cursor.positionInBlock() + 1}")


def _qt_position(text: str, index: int) -> int:
    """A Python string index as a Qt document position (Qt counts UTF-16 code units)."""
    return index + sum(1 for char in text[:index] if ord(char) > 0xFFFF)


def _error_colour(palette: QPalette) -> QColor:
    dark = palette.color(QPalette.ColorRole.Base).lightness() < 128
    return QColor("#ff7b72" if dark else "#c62828")


# --- Where an error sits in the text ---------------------------------------------------------

_SYNTAX_AT = re.compile(r"line (\d+), column (\d+)")
_EXPRESSION_WORD = re.compile(r"\w+")
_ESCAPE_LENGTHS = {"u": 6, "U": 10, "x": 4}
_BARE_KEY = re.compile(r"[A-Za-z0-9_\-]+")
_SIMPLE_ESCAPES = {"b": "\b", "t": "\t", "n": "\n", "f": "\f", "r": "\r", '"': '"', "\\": "\\",
                   "e": "\x1b"}


class _KeySpan(NamedTuple):
    """Where one key and its value sit in the text (indices into the text)."""

    key_start: int
    key_end: int
    value_start: int
    value_end: int


def error_span(text: str, error: RuleError) -> tuple[int, int] | None:
    """The part of ``text`` an error points at, as (start, end) indices into the string.

    TOML syntax errors carry "line N, column M" in their message; other errors name a key and,
    for expressions, a 1-based column inside the expression string, which is mapped through the
    string's quoting and escapes to the character in the text. An error naming a key that is
    not in the text points at the nearest table that is. ``None`` when nothing can be located.
    """
    problem = error.problem
    if problem.startswith("TOML syntax error"):
        match = _SYNTAX_AT.search(problem)
        return _line_column_span(text, int(match[1]), int(match[2])) if match else None
    if not error.key:
        return None
    keys, tables = _key_spans(text)
    found = keys.get(error.key)
    if found is None:
        return _table_span(error.key, keys, tables)
    if error.column is not None:
        return _expression_span(text, found, error.column)
    if problem.startswith("unknown key"):
        return found.key_start, found.key_end
    return found.value_start, found.value_end


def _line_column_span(text: str, line: int, column: int) -> tuple[int, int]:
    """One character at a 1-based line and column; a position past the end of a line is
    moved back onto the line's last character."""
    body_offset = 1 if text.startswith("\ufeff") else 0
    starts = [0, *(i + 1 for i, char in enumerate(text) if char == "\n")]
    row = min(max(line, 1), len(starts)) - 1
    line_start = starts[row]
    line_end = starts[row + 1] - 1 if row + 1 < len(starts) else len(text)
    if line_end > line_start and text[line_end - 1] == "\r":
        line_end -= 1
    at = line_start + max(column, 1) - 1 + (body_offset if row == 0 else 0)
    if at >= line_end:
        at = max(line_end - 1, line_start)
    return at, at + 1 if at < line_end else at


def _table_span(key: str, keys: dict[str, _KeySpan],
                tables: dict[str, tuple[int, int]]) -> tuple[int, int] | None:
    """The header (or inline table key) of ``key`` or of its nearest enclosing table."""
    parts = key.split(".")
    while parts:
        path = ".".join(parts)
        if path in tables:
            return tables[path]
        if path in keys:
            span = keys[path]
            return span.key_start, span.key_end
        parts.pop()
    return None


def _expression_span(text: str, found: _KeySpan, column: int) -> tuple[int, int]:
    """The word (or single character) at a 1-based column of the expression string value."""
    offsets = _string_offsets(text, found.value_start, found.value_end)
    if offsets is None:
        return found.value_start, found.value_end
    decoded, places = offsets
    index = min(max(column - 1, 0), len(decoded))
    if index == len(decoded):
        closing = places[-1]
        return closing, min(closing + 1, found.value_end)
    word = _EXPRESSION_WORD.match(decoded, index)
    last = (word.end() if word else index + 1) - 1
    basic = text.startswith('"', found.value_start)
    width = _raw_length(text, places[last]) if basic else 1
    return places[index], places[last] + width


def _raw_length(text: str, at: int) -> int:
    """How many characters of a basic string's text write the one character at ``at``."""
    if text[at] != "\\":
        return 1
    return _ESCAPE_LENGTHS.get(text[at + 1: at + 2], 2)


def _string_offsets(text: str, start: int, end: int) -> tuple[str, list[int]] | None:
    """Decode the TOML string ``text[start:end]``, giving its characters and, for each, the index
    in ``text`` where it is written, plus one final entry for the closing quote. ``None`` when
    the value is not a string."""
    for delimiter in ('"""', "'''", '"', "'"):
        if text.startswith(delimiter, start):
            break
    else:
        return None
    basic = delimiter[0] == '"'
    i = start + len(delimiter)
    stop = end - len(delimiter) if text.endswith(delimiter, start, end) else end
    if len(delimiter) == 3:
        if text.startswith("\r\n", i):
            i += 2
        elif text.startswith("\n", i):
            i += 1
    chars: list[str] = []
    places: list[int] = []
    while i < stop:
        char = text[i]
        if basic and char == "\\":
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
        chars.append(char)
        places.append(i)
        i += 1
    places.append(stop)
    return "".join(chars), places


def _decoded_escape(escape: str) -> str:
    """The character a basic-string escape such as ``\\n`` or ``\\u00e9`` stands for."""
    code = escape[1:2]
    if code in _SIMPLE_ESCAPES:
        return _SIMPLE_ESCAPES[code]
    try:
        return chr(int(escape[2:], 16))
    except ValueError:
        return "?"


def _key_spans(text: str) -> tuple[dict[str, _KeySpan], dict[str, tuple[int, int]]]:
    """Every key of a TOML text with its position, and every table header's position.

    Keys are named by their dotted path as the rule errors name them (``"signal.position"``,
    ``"costs.ZINC.X.commission"``). The scan is forgiving: a line it cannot read is skipped.
    """
    keys: dict[str, _KeySpan] = {}
    tables: dict[str, tuple[int, int]] = {}
    table: list[str] = []
    i = 1 if text.startswith("\ufeff") else 0
    n = len(text)
    while i < n:
        i = _skip_blank(text, i, newlines=True)
        if i >= n:
            break
        if text[i] == "[":
            header_start = i
            double = text.startswith("[[", i)
            path, after = _read_key(text, i + (2 if double else 1))
            close = "]]" if double else "]"
            if path is not None and text.startswith(close, after):
                table = path
                tables.setdefault(".".join(path), (header_start, after + len(close)))
                i = after + len(close)
            else:
                i = _next_line(text, i)
            continue
        i = _read_pair(text, i, table, keys, tables)
    return keys, tables


def _read_pair(text: str, i: int, table: list[str], keys: dict[str, _KeySpan],
               tables: dict[str, tuple[int, int]]) -> int:
    """Read ``key = value`` at ``i`` under ``table``; return where reading stopped."""
    key_start = i
    path, after = _read_key(text, i)
    if path is None:
        return _next_line(text, i)
    equals = _skip_blank(text, after)
    if not text.startswith("=", equals):
        return _next_line(text, i)
    value_start = _skip_blank(text, equals + 1)
    full = [*table, *path]
    if text.startswith("{", value_start):
        value_end = _read_inline_table(text, value_start, full, keys, tables)
    else:
        value_end = _skip_value(text, value_start)
    keys.setdefault(".".join(full), _KeySpan(key_start, after, value_start, value_end))
    return value_end


def _read_inline_table(text: str, i: int, path: list[str], keys: dict[str, _KeySpan],
                       tables: dict[str, tuple[int, int]]) -> int:
    """Read ``{ a = 1, b = 2 }`` at ``i``, recording its keys under ``path``; return its end."""
    i += 1
    while i < len(text):
        i = _skip_blank(text, i, newlines=True)
        if text.startswith("}", i):
            return i + 1
        if text.startswith(",", i):
            i += 1
            continue
        before = i
        i = _read_pair(text, i, path, keys, tables)
        if i <= before:
            return i + 1
    return len(text)


def _read_key(text: str, i: int) -> tuple[list[str] | None, int]:
    """Read a (dotted, possibly quoted) key at ``i``; return its parts and the index after it."""
    parts: list[str] = []
    while True:
        i = _skip_blank(text, i)
        if text.startswith(('"', "'"), i):
            quote = text[i]
            close = i + 1
            while close < len(text) and text[close] != quote and text[close] != "\n":
                close += 2 if quote == '"' and text[close] == "\\" else 1
            if close >= len(text) or text[close] != quote:
                return None, i
            parts.append(text[i + 1: close])
            i = close + 1
        else:
            match = _BARE_KEY.match(text, i)
            if not match:
                return None, i
            parts.append(match.group())
            i = match.end()
        after = _skip_blank(text, i)
        if not text.startswith(".", after):
            return parts, i
        i = after + 1


def _skip_value(text: str, i: int) -> int:
    """Index just after the TOML value starting at ``i`` (string, array, inline table, scalar)."""
    n = len(text)
    for delimiter in ('"""', "'''"):
        if text.startswith(delimiter, i):
            j = i + 3
            while j < n:
                if delimiter[0] == '"' and text[j] == "\\":
                    j += 2
                    continue
                if text.startswith(delimiter, j):
                    end = j + 3
                    while end < n and end < j + 5 and text[end] == delimiter[0]:
                        end += 1
                    return end
                j += 1
            return n
    if i < n and text[i] in "\"'":
        quote = text[i]
        j = i + 1
        while j < n and text[j] != "\n":
            if quote == '"' and text[j] == "\\":
                j += 2
                continue
            if text[j] == quote:
                return j + 1
            j += 1
        return j
    if i < n and text[i] in "[{":
        depth = 0
        j = i
        while j < n:
            char = text[j]
            if char in "\"'":
                j = _skip_value(text, j)
                continue
            if char == "#":
                j = _next_line(text, j) - 1
            elif char in "[{":
                depth += 1
            elif char in "]}":
                depth -= 1
                if depth == 0:
                    return j + 1
            j += 1
        return n
    j = i
    while j < n and text[j] not in ",]}#\n":
        j += 1
    while j > i and text[j - 1] in " \t\r":
        j -= 1
    return j


def _skip_blank(text: str, i: int, *, newlines: bool = False) -> int:
    """Skip spaces and tabs (and, with ``newlines``, line breaks and comments)."""
    n = len(text)
    while i < n:
        char = text[i]
        if char in " \t" or (newlines and char in "\r\n"):
            i += 1
        elif newlines and char == "#":
            i = _next_line(text, i)
        else:
            break
    return i


def _next_line(text: str, i: int) -> int:
    """Index of the start of the line after the one holding ``i``."""
    newline = text.find("\n", i)
    return len(text) if newline < 0 else newline + 1
