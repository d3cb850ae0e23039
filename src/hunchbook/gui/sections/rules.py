"""The Rules section: the spec editor on the idea's latest rule revision, a line for its error
and a label for the revision; Ctrl+S keeps the text as the next revision.

Text edited and not saved is kept per idea while another idea is shown (until the catalogue
changes). An idea without rules starts from the starter template in ``resources/``.
"""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtWidgets import QHBoxLayout, QLabel, QVBoxLayout, QWidget

from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError, RuleError
from hunchbook.core.rules import parse_rules
from hunchbook.gui.feedback import one_line
from hunchbook.gui.sections.base import IdeaSection, SectionContext
from hunchbook.gui.widgets.rule_editor import RuleEditor
from hunchbook.starter import starter_rules as _starter_text
from hunchbook.store.records import Idea


def starter_rules(idea: Idea) -> str:
    """A first rule file for an idea that has none yet: its title and markets, a small grid
    and a simple trend signal to edit (see :mod:`hunchbook.starter`)."""
    return _starter_text(idea.title, idea.markets)


class RulesSection(IdeaSection):
    """The spec editor of the shown idea, its error line and revision label."""

    key = "rules"
    tab_title = "Rules"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._saved_text = ""
        self._drafts: dict[int, str] = {}
        self.editor = RuleEditor(self)
        self.editor.validity_changed.connect(self._show_validity)
        self.editor.text_changed.connect(lambda _text: self._show_revision())
        self.editor.save_requested.connect(lambda _text: self.save())
        self.revision_label = QLabel(self)
        self.revision_label.setObjectName("revisionLabel")
        bar = QHBoxLayout()
        bar.addStretch(1)
        bar.addWidget(self.revision_label)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.editor, 1)
        layout.addLayout(bar)

    def set_context(self, context: SectionContext) -> None:
        """As the base; another catalogue also forgets the unsaved texts, and the form offers
        the data folder's markets."""
        new_catalogue = context.catalogue is not self.catalogue
        markets_changed = context.markets != self.context.markets
        super().set_context(context)
        if new_catalogue:
            self._drafts.clear()
        if markets_changed:
            self.editor.set_market_choices(list(context.markets))

    def show_idea(self, idea_id: int | None) -> None:
        """Load the idea's unsaved text, else its latest revision, else the starter rules."""
        self._keep_draft()
        self.idea_id = idea_id
        if idea_id is None or self.catalogue is None:
            self._saved_text = ""
            self.editor.set_text("")
            self.revision_label.setText("")
            return
        revision = self.catalogue.latest_revision(idea_id)
        self._saved_text = revision.text if revision is not None else ""
        text = self._drafts.get(idea_id)
        if text is None:
            text = (revision.text if revision is not None
                    else starter_rules(self.catalogue.idea(idea_id)))
        self.editor.set_text(text)
        self._show_revision()
        error = self.editor.error_message()
        self._show_validity(error is None, error or "")

    def idea_updated(self, idea_id: int) -> None:
        """The idea was written elsewhere (a quick run keeps the rules it ran as a revision):
        the text counts as saved when it is the latest revision; the edits stay."""
        if self.catalogue is None or idea_id != self.idea_id:
            return
        revision = self.catalogue.latest_revision(idea_id)
        self._saved_text = revision.text if revision is not None else ""
        if self.editor.text() == self._saved_text:
            self._drafts.pop(idea_id, None)
        self._show_revision()

    def text(self) -> str:
        """The rule text in the editor."""
        return self.editor.text()

    def check(self) -> bool:
        """Read the editor's text now (typing may not have settled); on an error, show it
        here and in a dialog and ask to be shown. True when the rules are valid."""
        try:
            parse_rules(self.editor.text())
        except RuleError as exc:
            self.show_requested.emit()
            self._show_validity(False, str(exc))
            self.error.emit("The rules have an error", str(exc))
            return False
        return True

    def save(self) -> int | None:
        """Keep the editor's text as the idea's next revision; returns its number (None when
        nothing was saved)."""
        if self.idea_id is None or self.catalogue is None or not self.check():
            return None
        try:
            revision = self.catalogue.save_rules(self.idea_id, self.editor.text(),
                                                 by=self.context.user)
        except HunchbookError as exc:
            self.error.emit("Rules not saved", one_line(exc))
            return None
        self._saved_text = revision.text
        self._drafts.pop(self.idea_id, None)
        self._show_revision()
        self.idea_changed.emit(self.idea_id)
        self.message.emit(f"Rules saved as revision {revision.number}.")
        return revision.number

    def load_file(self, path: str | os.PathLike[str]) -> bool:
        """Put a rule file's text into the editor (not saved) and ask to be shown."""
        if self.idea_id is None:
            self.error.emit("No idea selected", "Select an idea before loading a rule file.")
            return False
        try:
            text = Path(path).read_text(encoding="utf-8-sig")
        except (OSError, UnicodeDecodeError) as exc:
            self.error.emit("Rule file not read", f"{path}: {one_line(exc)}")
            return False
        self.editor.set_text(text)
        self.show_requested.emit()
        self.message.emit(f"Loaded {Path(path).name} into the rules (not saved yet).")
        return True

    def _keep_draft(self) -> None:
        if self.idea_id is None:
            return
        text = self.editor.text()
        if text != self._saved_text and text.strip():
            self._drafts[self.idea_id] = text
        else:
            self._drafts.pop(self.idea_id, None)

    def _show_validity(self, valid: bool, message: str) -> None:
        # the editor shows the message under the text; the tab carries the mark and tooltip
        self.tab_changed.emit(self.tab_title if valid else f"{self.tab_title} \u26a0",
                              "" if valid else message)

    def _show_revision(self) -> None:
        if self.idea_id is None or self.catalogue is None:
            return
        revisions = self.catalogue.revisions(self.idea_id)
        changed = self.editor.text() != self._saved_text
        if not revisions:
            text = "Not saved yet (a starting point to edit)."
        else:
            text = f"Revision {revisions[-1].number}, saved {formats.date(revisions[-1].saved_at)}"
            text += " \u2014 edited, not saved" if changed else ""
        self.revision_label.setText(text)
