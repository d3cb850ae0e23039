"""The interface of an idea section: one tab on the right of the window (Idea, Rules, Runs,
Journal, Review) showing one side of the selected idea.

A section is a widget subclassing :class:`IdeaSection`. The window makes one of each class listed
in :data:`hunchbook.gui.sections.registry.SECTIONS` (constructed with its parent only), adds it
as a tab and then talks to it through this interface alone:

window -> section
    :meth:`~IdeaSection.set_context` when the catalogue, the data folder or the user changes;
    :meth:`~IdeaSection.show_idea` when another idea is selected (``None``: none is);
    :meth:`~IdeaSection.idea_updated` when another section or a quick run wrote to the shown
    idea; :meth:`~IdeaSection.save_now` before the window closes or a quick run starts.
section -> window (signals)
    ``idea_changed(int)`` it wrote to this idea (the window refreshes the rest);
    ``message(str)`` a line for the status bar; ``error(str, str)`` an error dialog (title and
    one-line message); ``tab_changed(str, str)`` new tab text and tooltip;
    ``show_requested()`` bring this section to the front; ``idea_requested(int)`` show another
    idea (select it in the catalogue).

Adding a section takes one new module with a subclass and one line in the registry.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar

from PySide6.QtCore import Signal
from PySide6.QtWidgets import QWidget

from hunchbook.catalogue import Catalogue


def decline(_title: str, _question: str) -> bool:
    """The answer to a yes/no question when no window can ask it: no."""
    return False


@dataclass(frozen=True)
class SectionContext:
    """What every section works with (the window hands out a new one when any of it changes).

    Attributes
    ----------
    catalogue
        The open catalogue (the UI thread's connection), or None.
    user
        The name edits, reviews and runs are written under.
    data_folder
        The chosen data folder of price files, or None.
    markets
        The symbols of the data folder's market library (sorted).
    confirm
        Asks a yes/no question before something destructive (window-modal); True for yes.
    """

    catalogue: Catalogue | None = None
    user: str = ""
    data_folder: Path | None = None
    markets: tuple[str, ...] = ()
    confirm: Callable[[str, str], bool] = decline


class IdeaSection(QWidget):
    """Base of the idea sections (see the module docstring for the whole interface).

    Subclasses set :attr:`key` and :attr:`tab_title` and implement :meth:`show_idea`; they read
    :attr:`context` (and :attr:`catalogue`) and keep :attr:`idea_id` as the idea shown.

    Signals
    -------
    idea_changed(int)
        The section wrote to this idea.
    message(str)
        A line for the status bar.
    error(str, str)
        Show an error dialog with this title and one-line message.
    tab_changed(str, str)
        The section's tab text and tooltip.
    show_requested()
        Bring this section to the front (for example to show a rule error).
    idea_requested(int)
        Show this other idea (for example a member of the idea's family).
    """

    #: Key of the section (``--section``, :meth:`MainWindow.show_section`).
    key: ClassVar[str] = ""
    #: Text of its tab.
    tab_title: ClassVar[str] = ""

    idea_changed = Signal(int)
    message = Signal(str)
    error = Signal(str, str)
    tab_changed = Signal(str, str)
    show_requested = Signal()
    idea_requested = Signal(int)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.context = SectionContext()
        self.idea_id: int | None = None

    @property
    def catalogue(self) -> Catalogue | None:
        """The open catalogue, or None."""
        return self.context.catalogue

    def set_context(self, context: SectionContext) -> None:
        """Work with ``context`` from now on.

        With another catalogue, the section first leaves the idea it shows (``show_idea(None)``
        while the old catalogue is still open, so pending edits are kept there); otherwise the
        idea stays shown. Subclasses that follow the data folder or its markets extend this.
        """
        if context.catalogue is not self.context.catalogue:
            self.show_idea(None)
        self.context = context

    def __init_subclass__(cls, **kwargs: object) -> None:
        super().__init_subclass__(**kwargs)
        if cls.show_idea is IdeaSection.show_idea:  # checked once, when a section is written
            raise TypeError(f"{cls.__name__}: an idea section must define show_idea")

    def show_idea(self, idea_id: int | None) -> None:
        """Show this idea of the catalogue (``None``: clear the section). Every section
        defines it (checked when the class is created); this part keeps ``idea_id``."""
        self.idea_id = idea_id

    def idea_updated(self, idea_id: int) -> None:
        """Another section or a quick run wrote to the shown idea: show it anew."""
        self.show_idea(idea_id)

    def save_now(self) -> bool:
        """Write pending edits now; True when nothing is left unsaved (nothing is pending in a
        section that writes at once)."""
        return True
