"""The line above the sections: the idea's title, stage, last verdict, trials and author."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel, QWidget

from hunchbook.core.formats import plural
from hunchbook.gui.models import verdict_label
from hunchbook.store.records import Idea


class IdeaHeader(QLabel):
    """Rich-text header naming the shown idea (or saying none is selected)."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("ideaHeader")
        self.setTextFormat(Qt.TextFormat.RichText)
        self.setWordWrap(True)
        self.setContentsMargins(8, 6, 8, 2)

    def show_idea(self, idea: Idea | None) -> None:
        """Name ``idea`` with its stage, last verdict, trial count and author (None: none)."""
        if idea is None:
            self.setText("<span style='font-size:large'>No idea selected</span><br>"
                         "Pick an idea on the left, or write a new one (Ctrl+N).")
            return
        bits = [f"<b>{idea.stage}</b>", plural(idea.trial_count, "trial"),
                f"by {_html(idea.submitted_by)}"]
        if idea.last_verdict:
            bits.insert(1, f"last verdict <b>{_html(verdict_label(idea.last_verdict))}</b>")
        details = " \u00b7 ".join(bits)
        self.setText(f"<span style='font-size:x-large; font-weight:600'>{_html(idea.title)}"
                     f"</span><br>{details}")


def _html(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
