"""A small section written the way a new one is added: one module with an ``IdeaSection``
subclass (the test registers it with one line)."""

from __future__ import annotations

from PySide6.QtWidgets import QLabel, QVBoxLayout, QWidget

from hunchbook.gui.sections.base import IdeaSection


class JournalCountSection(IdeaSection):
    """Says how many journal entries the shown idea has, and keeps what it was shown."""

    key = "count"
    tab_title = "Count"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.label = QLabel(self)
        self.shown: list[int | None] = []
        QVBoxLayout(self).addWidget(self.label)

    def show_idea(self, idea_id: int | None) -> None:
        """Count the idea's journal entries (None: no idea)."""
        self.idea_id = idea_id
        self.shown.append(idea_id)
        if idea_id is None or self.catalogue is None:
            self.label.setText("No idea")
            return
        count = len(self.catalogue.journal(idea_id))
        self.label.setText(f"{count} journal entries")
        self.tab_changed.emit(f"{self.tab_title} ({count})", f"{count} journal entries")
