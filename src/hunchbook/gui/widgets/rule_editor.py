"""The spec editor: a form for a rule file side by side with the rule-file text, kept in sync.

Typing in the text re-reads it after a short pause and, when it is valid, refills the form;
changing the form rewrites the text through :func:`hunchbook.core.rules.dump_rules`, which keeps
the user's comments and layout. Errors are shown below the text and underlined where the parser
says they are (their span).
"""

from __future__ import annotations

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

from hunchbook.core.errors import RuleError, TextSpan
from hunchbook.core.rules import RuleSpec, dump_rules, parse_rules
from hunchbook.gui.widgets.rule_form import RuleForm
from hunchbook.gui.widgets.toml_highlighter import TomlHighlighter

#: Pause after the last keystroke before the text is re-read (milliseconds).
SETTLE_MS = 300
_OUT_OF_DATE = ("The text has an error, so these fields show its last valid version. Fix the "
                "text (see the message below it) to edit here again.")
_NO_RULES = "No valid rule text yet: write or load a rule file and the fields will follow it."
_NEVER_VALID = ("The text has an error, so these fields are empty. Fix the text (see the "
                "message below it) and the fields will follow it.")


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

        self.splitter = QSplitter(Qt.Orientation.Horizontal)  # the window keeps its place
        self.splitter.setObjectName("rulesSplitter")
        self.splitter.setChildrenCollapsible(False)
        self.splitter.addWidget(self.form)
        self.splitter.addWidget(self.text_edit)
        self.splitter.setStretchFactor(0, 4)
        self.splitter.setStretchFactor(1, 5)
        self.splitter.setSizes([420, 560])
        status = QHBoxLayout()  # the whole width: a message fits on one line
        status.addWidget(self.message, 1)
        status.addWidget(self.cursor_label)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter, 1)
        layout.addLayout(status)

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
        self.form.set_spec(None)  # another text: the last one's fields never stand for it
        self._reread(loaded=True)

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

    def _reread(self, *, loaded: bool = False) -> None:
        """Parse the text; refill the form when valid, else show and underline the error
        (``loaded``: the text was just loaded, so it has no last valid version to show)."""
        self._parse_pending = False
        try:
            spec = parse_rules(self._text)
        except RuleError as error:
            self._show_error(error)
            if not self._text.strip():
                self.form.set_spec(None)
                self.form.set_out_of_date(_NO_RULES)
            elif loaded:
                self.form.set_out_of_date(_NEVER_VALID)
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
        selections = []
        if error.span is not None:
            selections.append(self._underline(error.span))
        self.text_edit.setExtraSelections(selections)
        self._report(False, message)

    def _underline(self, span: TextSpan) -> QTextEdit.ExtraSelection:
        """A wavy underline over ``span``; an empty span (nothing to underline, such as a
        missing value at a line's end) marks its whole line instead."""
        start = self._document_position(span.line, span.column)
        end = self._document_position(span.end_line, span.end_column)
        cursor = QTextCursor(self.text_edit.document())
        cursor.setPosition(start)
        cursor.setPosition(max(end, start), QTextCursor.MoveMode.KeepAnchor)
        fmt = QTextCharFormat()
        fmt.setUnderlineStyle(QTextCharFormat.UnderlineStyle.WaveUnderline)
        fmt.setUnderlineColor(self._error_colour)
        background = QColor(self._error_colour)
        background.setAlpha(40)
        fmt.setBackground(background)
        if end <= start:
            fmt.setProperty(QTextFormat.Property.FullWidthSelection, True)
        selection = QTextEdit.ExtraSelection()
        selection.cursor = cursor
        selection.format = fmt
        return selection

    def _document_position(self, line: int, column: int) -> int:
        """The document position of a 1-based line and column of the rule text (columns count
        characters; Qt counts UTF-16 code units, and drops a byte-order mark on loading)."""
        document = self.text_edit.document()
        block = document.findBlockByNumber(line - 1)
        if not block.isValid():
            return document.characterCount() - 1
        return block.position() + _qt_length(block.text()[: max(column - 1, 0)])

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
    return _qt_length(text[:index])


def _qt_length(text: str) -> int:
    """The length of ``text`` in UTF-16 code units, as Qt counts it."""
    return len(text) + sum(1 for char in text if ord(char) > 0xFFFF)


def _error_colour(palette: QPalette) -> QColor:
    dark = palette.color(QPalette.ColorRole.Base).lightness() < 128
    return QColor("#ff7b72" if dark else "#c62828")
