"""The idea sections the window shows, in tab order (Ctrl+1, Ctrl+2, ... follow it).

To add a section, write a module with an :class:`~hunchbook.gui.sections.base.IdeaSection`
subclass and list the class here.
"""

from __future__ import annotations

from hunchbook.gui.sections.base import IdeaSection
from hunchbook.gui.sections.rules import RulesSection
from hunchbook.gui.widgets.idea_form import IdeaForm
from hunchbook.gui.widgets.journal_panel import JournalPanel
from hunchbook.gui.widgets.review_panel import ReviewPanel
from hunchbook.gui.widgets.runs_panel import RunsPanel

SECTIONS: list[type[IdeaSection]] = [IdeaForm, RulesSection, RunsPanel, JournalPanel, ReviewPanel]


def section_names() -> tuple[str, ...]:
    """The registered sections' keys, in tab order."""
    return tuple(section.key for section in SECTIONS)
