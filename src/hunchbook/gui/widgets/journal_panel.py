"""The Journal section: an idea's timeline (notes rendered from Markdown, automatic entries as
sentences, links opened in the browser), a note box and stage changes with a reason."""

from __future__ import annotations

from PySide6.QtCore import Qt, QUrl
from PySide6.QtGui import QDesktopServices, QTextCursor
from PySide6.QtWidgets import (
    QComboBox,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QPushButton,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.feedback import one_line
from hunchbook.gui.journal_html import timeline_html
from hunchbook.gui.sections.base import IdeaSection
from hunchbook.store.records import Entry
from hunchbook.store.vocab import TRANSITIONS

#: Stage changes that need a confirmation (they put an idea away).
DESTRUCTIVE_STAGES = ("shelved",)


class JournalPanel(IdeaSection):
    """The Journal section: timeline of one idea's journal (``entries``, shown in ``view``),
    with "Add note" (Markdown) and "Change stage" (shelving asks the context's ``confirm``
    first); ``idea_changed`` follows each entry written."""

    key = "journal"
    tab_title = "Journal"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.entries: list[Entry] = []
        self.view = QTextBrowser(self)
        self.view.setObjectName("journalView")
        self.view.setOpenLinks(False)  # links open in the browser, never inside the view
        self.view.anchorClicked.connect(self.open_link)

        self.note = QPlainTextEdit(self)
        self.note.setObjectName("noteEdit")
        self.note.setPlaceholderText("Write a note: what you saw, what you will try next\u2026 "
                                     "(Markdown: *italic*, **bold**, [link](https://\u2026))")
        self.note.setMaximumHeight(80)
        self.note.setTabChangesFocus(True)
        self.decision = QComboBox(self)
        self.decision.addItem("Note", "note")
        self.decision.addItem("Decision", "decision")
        self.add = QPushButton("Add to journal", self)
        self.add.setObjectName("addNoteButton")
        self.add.clicked.connect(self.add_note)

        self.stage = QComboBox(self)
        self.stage.setObjectName("stageChoice")
        self.reason = QLineEdit(self)
        self.reason.setObjectName("stageReason")
        self.reason.setPlaceholderText("Reason for the change (required)")
        self.move = QPushButton("Change stage", self)
        self.move.setObjectName("changeStageButton")
        self.move.clicked.connect(self.change_stage)
        self.current_stage = QLabel(self)

        notes = QGroupBox("Add to the journal", self)
        note_row = QHBoxLayout()
        note_row.addWidget(self.decision)
        note_row.addStretch(1)
        note_row.addWidget(self.add)
        notes_layout = QVBoxLayout(notes)
        notes_layout.addWidget(self.note)
        notes_layout.addLayout(note_row)
        stages = QGroupBox("Stage", self)
        stage_row = QHBoxLayout(stages)
        stage_row.addWidget(self.current_stage)
        stage_row.addWidget(QLabel("\u2192", self))
        stage_row.addWidget(self.stage)
        stage_row.addWidget(self.reason, 1)
        stage_row.addWidget(self.move)
        layout = QVBoxLayout(self)
        layout.addWidget(self.view, 1)
        layout.addWidget(notes)
        layout.addWidget(stages)
        self.setEnabled(False)

    def show_idea(self, idea_id: int | None) -> None:
        """Show an idea's journal and the stages it may move to (None clears)."""
        self.idea_id = idea_id
        if idea_id is None or self.catalogue is None:
            self.entries = []
            self.view.clear()
            self.setEnabled(False)
            return
        self.setEnabled(True)
        self.entries = self.catalogue.journal(idea_id)
        self.view.setHtml(timeline_html(self.entries))
        self.view.moveCursor(QTextCursor.MoveOperation.End)  # the newest entry in sight
        self.view.ensureCursorVisible()
        stage = self.catalogue.idea(idea_id).stage
        self.current_stage.setText(f"Now <b>{stage}</b>")
        self.stage.clear()
        for target in TRANSITIONS[stage]:
            if target != "tested":  # reached by recording a run
                self.stage.addItem(target, target)
        self.stage.setEnabled(self.stage.count() > 0)
        self.move.setEnabled(self.stage.count() > 0)

    def open_link(self, url: QUrl) -> None:
        """Open a link of a note in the desktop's browser (or mail program)."""
        QDesktopServices.openUrl(url)

    def add_note(self) -> bool:
        """Append the note box's text as a note or decision."""
        text = self.note.toPlainText().strip()
        if self.idea_id is None or self.catalogue is None:
            return False
        if not text:
            self.message.emit("Write the note first.")
            return False
        try:
            self.catalogue.add_entry(idea_id=self.idea_id, kind=self.decision.currentData(),
                                      text=text, by=self.context.user)
        except HunchbookError as exc:
            self.message.emit(f"Note not added: {one_line(exc)}")
            return False
        self.note.clear()
        self.show_idea(self.idea_id)
        self.message.emit("Added to the journal.")
        self.idea_changed.emit(self.idea_id)
        return True

    def change_stage(self) -> bool:
        """Move the idea to the chosen stage with the reason given (confirming shelving)."""
        target = self.stage.currentData()
        reason = self.reason.text().strip()
        if self.idea_id is None or self.catalogue is None or target is None:
            return False
        if not reason:
            self.message.emit("Give a reason for the stage change.")
            self.reason.setFocus(Qt.FocusReason.OtherFocusReason)
            return False
        if target in DESTRUCTIVE_STAGES and not self.context.confirm(
                "Shelve the idea?", "Shelve this idea? It leaves the active pipeline (it can "
                "be brought back as a draft later)."):
            return False
        try:
            self.catalogue.set_stage(self.idea_id, target, by=self.context.user, reason=reason)
        except HunchbookError as exc:
            self.message.emit(f"Stage not changed: {one_line(exc)}")
            return False
        self.reason.clear()
        self.show_idea(self.idea_id)
        self.message.emit(f"Moved to {target}.")
        self.idea_changed.emit(self.idea_id)
        return True
