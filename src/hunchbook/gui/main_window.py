"""Hunchbook's main window: the catalogue on the left, the selected idea in sections on the
right (those of :mod:`hunchbook.gui.sections.registry`), quick runs on a worker with progress
and Cancel (:mod:`hunchbook.gui.quick_run`), exports (:mod:`hunchbook.gui.exports`).

The window owns the UI thread's :class:`~hunchbook.catalogue.Catalogue` and hands it to every
section in a :class:`~hunchbook.gui.sections.base.SectionContext`; a section that writes to the
idea says so, and the window refreshes the catalogue row, the header and the other sections.
Long work runs on :mod:`hunchbook.gui.workers`, which open their own catalogue connection.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from functools import partial
from pathlib import Path
from typing import TYPE_CHECKING, cast

from PySide6.QtCore import Qt, QThreadPool, QTimer
from PySide6.QtGui import QCloseEvent, QKeySequence, QShowEvent
from PySide6.QtWidgets import (
    QFileDialog,
    QLabel,
    QMainWindow,
    QSplitter,
    QStyle,
    QTabWidget,
    QToolBar,
    QVBoxLayout,
    QWidget,
)

from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import HunchbookError
from hunchbook.core.markets import LIBRARY_FILE, read_market_library
from hunchbook.gui import feedback, window_settings
from hunchbook.gui.actions import make_action
from hunchbook.gui.data_menu import DataMenu
from hunchbook.gui.desk_settings import DeskSettings
from hunchbook.gui.drops import DropHandler
from hunchbook.gui.exports import Exports
from hunchbook.gui.feedback import one_line
from hunchbook.gui.holdout import HoldoutActions
from hunchbook.gui.quick_run import QuickRunner
from hunchbook.gui.sections import registry
from hunchbook.gui.sections.base import IdeaSection, SectionContext
from hunchbook.gui.sections.rules import RulesSection
from hunchbook.gui.sweep_settings import SweepSettings
from hunchbook.gui.widgets.catalogue_panel import CataloguePanel
from hunchbook.gui.widgets.desk_dialog import open_desk_dialog
from hunchbook.gui.widgets.idea_header import IdeaHeader
from hunchbook.gui.widgets.new_idea import NewIdeaDialog
from hunchbook.gui.widgets.runs_panel import RunsPanel

if TYPE_CHECKING:
    from hunchbook.core.sweep import SweepRunner


#: The idea's least width when the window shares its width out (a kept layout aside): the
#: results and the rules need it.
IDEA_MIN_WIDTH = 880


class MainWindow(QMainWindow):
    """The desktop window.

    Parameters
    ----------
    remember
        Keep the catalogue and data folder chosen in the settings (the demo does not).
    keep_layout
        Restore the window layout from the settings and save it on closing (screenshots
        do not, so that they always look the same).
    runner
        The sweep runner of quick runs (default: the one chosen under *File ▸ Run sweeps
        on…*, see :mod:`hunchbook.gui.sweep_settings`; the ``hunchbook`` command gives a
        :class:`~hunchbook.core.warm_pool.WarmPool` for sweeps on this computer).
    user
        The name edits, reviews and runs are written under (default:
        :func:`~hunchbook.gui.feedback.current_user`).

    Attributes
    ----------
    quick_run
        The :class:`~hunchbook.gui.quick_run.QuickRunner` (its signals tell how runs end).
    exports
        The :class:`~hunchbook.gui.exports.Exports` of runs and ideas.
    desk_settings
        The :class:`~hunchbook.gui.desk_settings.DeskSettings` (one-person desk).
    sweep_settings
        The :class:`~hunchbook.gui.sweep_settings.SweepSettings` (where sweeps run).
    data_menu, drops
        The :class:`~hunchbook.gui.data_menu.DataMenu` and the
        :class:`~hunchbook.gui.drops.DropHandler`.
    rules, runs
        The Rules and Runs sections (quick runs, drops and exports use them).
    """

    def __init__(self, *, remember: bool = True, keep_layout: bool = True,
                 runner: SweepRunner | None = None, user: str | None = None,
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("hunchbookMainWindow")
        self.setWindowTitle("Hunchbook")
        self.remember = remember
        self.keep_layout = keep_layout
        self.sweep_runner = runner
        self.user = user or feedback.current_user()
        self.catalogue: Catalogue | None = None
        self.data_folder: Path | None = None
        self.library: list[str] = []
        self.last_error: str | None = None
        self._idea_id: int | None = None

        self._build_sections()
        self.quick_run = QuickRunner(self)
        self.holdout = HoldoutActions(self)
        self.runs.unlock_requested.connect(self.holdout.unlock)
        self.exports = Exports(self)
        self.desk_settings = DeskSettings(self)
        self.sweep_settings = SweepSettings(self)
        self.data_menu = DataMenu(self)
        self.drops = DropHandler(self)
        self._build_actions()
        self._build_status_bar()
        self._show_idea(None)
        if keep_layout:
            self.restore_layout()

    # -- construction ---------------------------------------------------------------------
    def _build_sections(self) -> None:
        self.catalogue_panel = CataloguePanel(self)
        self.catalogue_panel.idea_selected.connect(self._idea_chosen)
        self.catalogue_panel.set_user(self.user)
        self.header = IdeaHeader(self)

        self.tabs = QTabWidget(self)
        self.tabs.setObjectName("sections")
        self.tabs.setDocumentMode(True)
        self._sections: list[IdeaSection] = []
        for section_type in registry.SECTIONS:
            section = section_type(self)
            section.idea_changed.connect(partial(self.refresh_idea, source=section))
            section.message.connect(self.status_message)
            section.error.connect(self.show_error)
            section.tab_changed.connect(partial(self._set_tab, section))
            section.show_requested.connect(partial(self.show_section, section.key))
            section.idea_requested.connect(self.select_idea)
            self.tabs.addTab(section, section.tab_title)
            self._sections.append(section)
        self.rules = cast(RulesSection, self.section("rules"))
        self.runs = cast(RunsPanel, self.section("runs"))

        right = QWidget(self)
        right_layout = QVBoxLayout(right)
        right_layout.setContentsMargins(0, 0, 0, 0)
        right_layout.setSpacing(0)
        right_layout.addWidget(self.header)
        right_layout.addWidget(self.tabs, 1)
        self.splitter = QSplitter(Qt.Orientation.Horizontal, self)
        self.splitter.setObjectName("mainSplitter")
        self.splitter.addWidget(self.catalogue_panel)
        self.splitter.addWidget(right)
        self.splitter.setStretchFactor(0, 1)  # a wider window widens the idea twice as much
        self.splitter.setStretchFactor(1, 2)
        self.splitter.setSizes([600, 840])
        self._splitter_fitted = False
        self.splitter.setChildrenCollapsible(False)
        self.setCentralWidget(self.splitter)

    def _build_actions(self) -> None:
        pix = QStyle.StandardPixmap
        std = QKeySequence.StandardKey
        self.new_idea_action = make_action(self, "New idea\u2026", self.open_new_idea_dialog,
                                           std.New, "Write down a new idea", pix.SP_FileIcon)
        self.find_action = make_action(self, "Find", self.catalogue_panel.focus_search,
                                       std.Find, "Search the catalogue")
        self.save_rules_action = make_action(self, "Save rules", self.rules.save, std.Save,
                                             "Keep the rules as the idea's next revision",
                                             pix.SP_DialogSaveButton)
        open_catalogue_action = make_action(self, "Open catalogue\u2026",
                                            self.choose_catalogue, std.Open,
                                            "Open or create a catalogue file")
        quit_action = make_action(self, "Quit", self.close, std.Quit)
        self.desk_action = make_action(
            self, "Desk\u2026", partial(open_desk_dialog, self), "Ctrl+D",
            "Ideas tested and promoted, and each promotion's Sharpe ratio haircut for them",
            pix.SP_FileDialogInfoView)
        run, ex, data = self.quick_run, self.exports, self.data_menu

        menus = (("&File", (self.new_idea_action, open_catalogue_action,
                            self.desk_settings.action, self.sweep_settings.action, None,
                            ex.import_action,
                            ex.bundle_action, ex.report_action, ex.pack_action, ex.pnl_action,
                            None,
                            quit_action)),
                 ("&Idea", (run.run_action, run.cancel_action, self.save_rules_action,
                            self.find_action, None, self.holdout.unlock_action)),
                 ("&Data", (data.folder_action, data.library_action, data.check_action,
                            data.import_action, None,
                            self.holdout.boundary_action)),
                 ("&View", (self.desk_action, None, *(
                     make_action(self, s.tab_title, partial(self.show_section, s.key),
                                 f"Ctrl+{n}" if n < 10 else None, f"Show the {s.key} section")
                     for n, s in enumerate(self._sections, start=1)))))
        for title, actions in menus:
            menu = self.menuBar().addMenu(title)
            for act in actions:
                menu.addSeparator() if act is None else menu.addAction(act)
        toolbar = QToolBar("Main", self)
        toolbar.setObjectName("mainToolbar")
        toolbar.setMovable(False)
        toolbar.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
        for act in (self.new_idea_action, run.run_action, self.save_rules_action, None,
                    data.folder_action, data.check_action, None, ex.report_action, None,
                    self.desk_action):
            toolbar.addSeparator() if act is None else toolbar.addAction(act)
        self.addToolBar(toolbar)

    def _build_status_bar(self) -> None:
        bar = self.statusBar()
        self.quick_run.add_to_status_bar(bar)
        bar.addPermanentWidget(self.data_menu.label)
        self.user_label = QLabel(f"Working as {self.user}", self)
        self.user_label.setObjectName("userLabel")
        bar.addPermanentWidget(self.user_label)
        self.data_menu.show_folder(None, 0)

    # -- catalogue, data folder and the sections' context ---------------------------------
    def open_catalogue(self, path: str | os.PathLike[str]) -> bool:
        """Open (or create) a catalogue file and show its ideas."""
        try:
            catalogue = Catalogue(path)
        except HunchbookError as exc:
            self.show_error("Cannot open the catalogue", one_line(exc))
            return False
        self.save_sections()  # pending edits go to the catalogue they belong to
        old, self.catalogue = self.catalogue, catalogue
        self._hand_out_context()  # the sections leave the old catalogue's idea first
        if old is not None:
            old.close()
        self.catalogue_panel.set_catalogue(catalogue)
        self._show_idea(None)
        self.setWindowTitle(f"Hunchbook \u2014 {catalogue.path.name}")
        if self.remember:
            window_settings.remember_path(window_settings.LAST_CATALOGUE, catalogue.path)
        count = self.catalogue_panel.idea_count()
        self.status_message(f"Opened {catalogue.path} ({count} ideas).")
        return True

    def set_data_folder(self, folder: str | os.PathLike[str] | None) -> None:
        """Use this folder's price files and market library for runs and the markets picker."""
        self.data_folder = None if folder is None else Path(folder)
        self.library = []
        if self.data_folder is not None:
            try:
                self.library = sorted(read_market_library(self.data_folder / LIBRARY_FILE))
            except HunchbookError as exc:
                self.status_message(f"Market library not read: {one_line(exc)}")
            if self.remember:
                window_settings.remember_path(window_settings.LAST_DATA, self.data_folder)
        self._hand_out_context()
        self.data_menu.show_folder(self.data_folder, len(self.library))

    def _hand_out_context(self) -> None:
        context = SectionContext(catalogue=self.catalogue, user=self.user,
                                 data_folder=self.data_folder, markets=tuple(self.library),
                                 confirm=self.confirm)
        for section in self._sections:
            section.set_context(context)

    # -- ideas and sections ---------------------------------------------------------------
    def current_idea_id(self) -> int | None:
        """The idea shown on the right, if any."""
        return self._idea_id

    def select_idea(self, idea_id: int) -> bool:
        """Select an idea in the catalogue table and show it."""
        return self.catalogue_panel.select_idea(idea_id)

    def section(self, name: str) -> IdeaSection:
        """The section called ``name`` (KeyError when none is registered under it)."""
        for section in self._sections:
            if section.key == name:
                return section
        raise KeyError(f"no section {name!r}; the sections are "
                       f"{', '.join(s.key for s in self._sections)}")

    def show_section(self, name: str) -> None:
        """Bring the section called ``name`` to the front."""
        self.tabs.setCurrentWidget(self.section(name))

    def current_section(self) -> str:
        """The name of the section in front."""
        return cast(IdeaSection, self.tabs.currentWidget()).key

    def save_sections(self) -> bool:
        """Write every section's pending edits now; True when nothing is left unsaved."""
        return all([section.save_now() for section in self._sections])

    def open_new_idea_dialog(self) -> NewIdeaDialog | None:
        """Ask for a new idea's title and hypothesis (window-modal; the idea is written when
        the dialog is accepted)."""
        if self.need_catalogue() is None:
            return None
        dialog = NewIdeaDialog(self, tuple(self.library))
        dialog.accepted.connect(lambda: self.create_idea(dialog.title.text(),
                                                         dialog.hypothesis.text(),
                                                         dialog.markets()))
        dialog.finished.connect(dialog.deleteLater)
        dialog.open()
        return dialog

    def create_idea(self, title: str, hypothesis: str,
                    markets: Sequence[str] = ()) -> int | None:
        """Write a new draft idea (trading ``markets``: its starter rules name them), select
        it and open its Idea section."""
        catalogue = self.need_catalogue()
        if catalogue is None:
            return None
        try:
            idea_id = catalogue.add_idea(title=title.strip(), hypothesis=hypothesis.strip(),
                                         submitted_by=self.user, markets=list(markets))
        except HunchbookError as exc:
            self.show_error("Idea not written", one_line(exc))
            return None
        self.catalogue_panel.reload()
        self.select_idea(idea_id)
        self.show_section("idea")
        self.status_message(f"Idea {idea_id} written down as a draft.")
        return idea_id

    def refresh_idea(self, idea_id: int, source: IdeaSection | None = None) -> None:
        """Something wrote to an idea: refresh its catalogue row and, when it is shown, the
        header and every section but ``source`` (the one that wrote)."""
        self.catalogue_panel.refresh_idea(idea_id)
        if idea_id == self._idea_id:
            self._show_header()
            for section in self._sections:
                if section is not source:
                    section.idea_updated(idea_id)

    def _idea_chosen(self, idea_id: int) -> None:
        if idea_id >= 0 and idea_id != self._idea_id:
            self._show_idea(idea_id)

    def _show_idea(self, idea_id: int | None) -> None:
        self._idea_id = idea_id
        for section in self._sections:
            section.show_idea(idea_id)
        self._show_header()
        self.save_rules_action.setEnabled(idea_id is not None)
        self.exports.bundle_action.setEnabled(idea_id is not None)
        self.quick_run.update_actions()
        self.holdout.update_actions()
        self.desk_settings.update_actions()

    def _set_tab(self, section: IdeaSection, text: str, tooltip: str) -> None:
        index = self.tabs.indexOf(section)
        self.tabs.setTabText(index, text)
        self.tabs.setTabToolTip(index, tooltip)

    def _show_header(self) -> None:
        idea = (self.catalogue.idea(self._idea_id)
                if self._idea_id is not None and self.catalogue is not None else None)
        self.header.show_idea(idea)
        self.tabs.setEnabled(idea is not None)

    def choose_catalogue(self) -> None:
        """Ask for a catalogue file to open (a new name creates one)."""
        start = str(self.catalogue.path if self.catalogue is not None else Path.home())
        path, _ = QFileDialog.getSaveFileName(
            self, "Open or create a catalogue", start, "Catalogue (*.sqlite);;All files (*)",
            options=QFileDialog.Option.DontConfirmOverwrite)
        if path:
            self.open_catalogue(path)

    # -- messages, settings, closing ------------------------------------------------------
    def status_message(self, text: str) -> None:
        """Show a line in the status bar."""
        self.statusBar().showMessage(text, 15000)

    def show_error(self, title: str, message: str) -> None:
        """An error dialog with one clear line (window-modal, not blocking)."""
        self.last_error = one_line(message)
        self.status_message(self.last_error)
        feedback.show_error(self, title, message)

    def confirm(self, title: str, question: str) -> bool:
        """Ask a yes/no question (blocking); True for yes."""
        return feedback.confirm(self, title, question)

    def need_catalogue(self) -> Catalogue | None:
        """The open catalogue; without one, an error dialog says to open one first."""
        if self.catalogue is None:
            self.show_error("No catalogue", "Open a catalogue first (File \u25b8 Open "
                            "catalogue\u2026).")
        return self.catalogue

    def remembered_paths(self) -> tuple[Path | None, Path | None]:
        """The last catalogue and data folder kept in the settings."""
        return window_settings.remembered_paths()

    def has_saved_layout(self) -> bool:
        """Whether the settings hold a window geometry from an earlier session."""
        return window_settings.has_saved_layout()

    def _splitters(self) -> tuple[tuple[str, QSplitter], ...]:
        return (("window/splitter", self.splitter), ("window/runs_splitter", self.runs.splitter),
                ("window/rules_splitter", self.rules.editor.splitter))

    def showEvent(self, event: QShowEvent) -> None:  # noqa: N802 (Qt override)
        """On first showing, put the splitters where the kept layout has them, or share the
        width between catalogue and idea."""
        super().showEvent(event)
        if not self._splitter_fitted:
            self._splitter_fitted = True
            if self.keep_layout:  # the splitters' places again once the window is laid out
                QTimer.singleShot(0, partial(window_settings.restore_splitters,
                                             self._splitters()))
            if not (self.keep_layout and window_settings.has_saved_splitter("window/splitter")):
                self.fit_splitter()

    def fit_splitter(self) -> None:
        """Give the catalogue the width its columns want, as far as the idea keeps
        :data:`IDEA_MIN_WIDTH` (a narrower catalogue leaves out spare columns), and the idea
        the rest."""
        total = sum(self.splitter.sizes()) or self.width()
        least = self.catalogue_panel.minimumSizeHint().width()
        left = max(least, min(self.catalogue_panel.wanted_width(), total - IDEA_MIN_WIDTH))
        self.splitter.setSizes([left, max(total - left, 1)])

    def restore_layout(self) -> None:
        """Restore window geometry, toolbar state and splitter positions."""
        window_settings.restore_layout(self, self._splitters())

    def save_layout(self) -> None:
        """Keep window geometry, toolbar state and splitter positions."""
        window_settings.save_layout(self, self._splitters())

    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802
        """Save edits and layout; stop a running quick run (nothing recorded)."""
        if self.quick_run.is_running():
            if not self.confirm("Stop the run?", "A quick run is going. Stop it and quit? "
                                "Nothing of it will be recorded."):
                event.ignore()
                return
            self.quick_run.cancel()
        self.save_sections()
        if self.keep_layout:
            self.save_layout()
        QThreadPool.globalInstance().waitForDone(10_000)
        if self.catalogue is not None:
            catalogue, self.catalogue = self.catalogue, None
            self._hand_out_context()  # the sections let go of the catalogue before it closes
            catalogue.close()
        super().closeEvent(event)
