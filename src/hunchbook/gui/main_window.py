"""Hunchbook's main window: the catalogue on the left, the selected idea in sections on the
right (Idea, Rules, Runs, Journal, Review), quick runs on a worker with progress and Cancel.

The window owns the UI thread's :class:`~hunchbook.catalogue.Catalogue`; panels read and
write through it and tell the window what changed, and the window refreshes the rest. Long
work (quick runs, a set's curves) runs on :mod:`hunchbook.gui.workers`, which open their
own catalogue connection.
"""

from __future__ import annotations

import os
import tomllib
import zipfile
from collections.abc import Iterable
from pathlib import Path
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QByteArray, QSettings, Qt, QThreadPool, QUrl, Signal
from PySide6.QtGui import (
    QAction,
    QCloseEvent,
    QDesktopServices,
    QDragEnterEvent,
    QDropEvent,
    QKeySequence,
)
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFileDialog,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QMainWindow,
    QProgressBar,
    QPushButton,
    QSplitter,
    QStyle,
    QTabWidget,
    QToolBar,
    QVBoxLayout,
    QWidget,
)

from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import HunchbookError, RuleError
from hunchbook.core.markets import read_market_library
from hunchbook.core.prices import LIBRARY_FILE
from hunchbook.core.rules import parse_rules
from hunchbook.gui import feedback
from hunchbook.gui.charts.run_figures import verdict_text
from hunchbook.gui.feedback import one_line
from hunchbook.gui.models import verdict_label
from hunchbook.gui.widgets.catalogue_panel import CataloguePanel
from hunchbook.gui.widgets.data_check import DataCheckDialog
from hunchbook.gui.widgets.idea_form import IdeaForm
from hunchbook.gui.widgets.journal_panel import JournalPanel
from hunchbook.gui.widgets.market_editor import MarketLibraryDialog
from hunchbook.gui.widgets.review_panel import ReviewPanel
from hunchbook.gui.widgets.rule_editor import RuleEditor
from hunchbook.gui.widgets.runs_panel import RunsPanel
from hunchbook.gui.workers import CallWorker, RunIdeaWorker, Worker, set_curves
from hunchbook.store.records import Idea
from hunchbook.store.vocab import RUNNABLE_STAGES

if TYPE_CHECKING:
    from hunchbook.core.sweep import SweepRunner

#: Section names, in tab order (``--section`` takes these).
SECTIONS = ("idea", "rules", "runs", "journal", "review")
#: Where settings are kept (organisation and application name of QSettings).
SETTINGS_SCOPE = ("hunchbook", "hunchbook")
#: Largest TOML file read to decide what a dropped file is (bytes).
MAX_DROPPED_TOML = 1_048_576


def starter_rules(idea: Idea) -> str:
    """A first rule file for an idea that has none yet: its title and markets, a small grid
    and a simple trend signal to edit."""
    title = idea.title.replace("\\", "\\\\").replace('"', '\\"')
    markets = ", ".join(f'"{m}"' for m in idea.markets)
    note = "" if markets else "# Name the markets this idea trades, e.g. [\"CRUDE\"].\n"
    return (f"# A starting point: edit the signal and the grid, then press Ctrl+R.\n"
            f'name = "{title}"\n{note}markets = [{markets}]\n\n'
            "[parameters]\nn = [20, 60, 120]\n\n"
            "[signal]\nposition = \"sign(close - mean(close, n))\"\n\n"
            "[roll]\ndays_before_expiry = 5\nadjust = \"difference\"\n")


def classify_drop(path: str | os.PathLike[str]) -> tuple[str, Path] | None:
    """What a dropped path is: ``("rules", file)``, ``("data", folder)``, ``("bundle", file)``
    or None (not something the window takes).

    A folder, a CSV file (its folder) and a market library file (its folder) choose the data
    folder; a TOML file with a ``[signal]`` table is a rule file; a zip archive is an idea
    bundle.
    """
    p = Path(path)
    if p.is_dir():
        return ("data", p)
    if not p.is_file():
        return None
    suffix = p.suffix.lower()
    if suffix == ".csv":
        return ("data", p.parent)
    if suffix == ".zip" or zipfile.is_zipfile(p):
        return ("bundle", p)
    if suffix == ".toml" and p.stat().st_size <= MAX_DROPPED_TOML:
        try:
            doc = tomllib.loads(p.read_text(encoding="utf-8-sig"))
        except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
            return None
        if isinstance(doc.get("signal"), dict):
            return ("rules", p)
        if p.name == LIBRARY_FILE:
            return ("data", p.parent)
    return None


class NewIdeaDialog(QDialog):
    """Ask for a new idea's title and hypothesis (the rest is filled in the Idea section)."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("newIdeaDialog")
        self.setWindowTitle("New idea")
        self.title = QLineEdit(self)
        self.title.setObjectName("newTitle")
        self.title.setPlaceholderText("A short name, e.g. 'Carry in grains'")
        self.hypothesis = QLineEdit(self)
        self.hypothesis.setObjectName("newHypothesis")
        self.hypothesis.setPlaceholderText("What you expect to happen, in one sentence")
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                        | QDialogButtonBox.StandardButton.Cancel, self)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        ok.setText("Write it down")
        ok.setEnabled(False)

        def update() -> None:
            ok.setEnabled(bool(self.title.text().strip() and self.hypothesis.text().strip()))

        self.title.textChanged.connect(update)
        self.hypothesis.textChanged.connect(update)
        form = QFormLayout(self)
        form.addRow("Title", self.title)
        form.addRow("Hypothesis", self.hypothesis)
        form.addRow(self.buttons)
        self.resize(520, self.sizeHint().height())


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
        Where quick-run sweeps run (default: :func:`~hunchbook.core.sweep.run_sweep`'s).
    user
        The name edits, reviews and runs are written under (default:
        :func:`~hunchbook.gui.feedback.current_user`).

    Signals
    -------
    run_started()
        A quick run went to its worker.
    run_finished(int)
        A quick run was recorded (its run id) and the window shows it.
    run_failed(str)
        A quick run stopped with this one-line message (nothing recorded).
    run_cancelled()
        A quick run was cancelled (nothing recorded).
    curves_shown(dict)
        A parameter set's curves were added to the results.
    """

    run_started = Signal()
    run_finished = Signal(int)
    run_failed = Signal(str)
    run_cancelled = Signal()
    curves_shown = Signal(dict)

    def __init__(self, *, remember: bool = True, keep_layout: bool = True,
                 runner: SweepRunner | None = None, user: str | None = None,
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("hunchbookMainWindow")
        self.setWindowTitle("Hunchbook")
        self.setAcceptDrops(True)
        self.remember = remember
        self.keep_layout = keep_layout
        self.runner = runner
        self.user = user or feedback.current_user()
        self.catalogue: Catalogue | None = None
        self.data_folder: Path | None = None
        self.library: list[str] = []
        self.last_error: str | None = None
        self._idea_id: int | None = None
        self._run_worker: RunIdeaWorker | None = None
        self._curve_worker: Worker | None = None
        self._rules_saved_text = ""
        self._rule_drafts: dict[int, str] = {}

        self._build_sections()
        self._build_actions()
        self._build_status_bar()
        self._show_idea(None)
        if keep_layout:
            self.restore_layout()

    # -- construction ---------------------------------------------------------------------
    def _build_sections(self) -> None:
        self.catalogue_panel = CataloguePanel(self)
        self.catalogue_panel.idea_selected.connect(self._idea_chosen)

        self.header = QLabel(self)
        self.header.setObjectName("ideaHeader")
        self.header.setTextFormat(Qt.TextFormat.RichText)
        self.header.setWordWrap(True)
        self.header.setContentsMargins(8, 6, 8, 2)

        self.idea_form = IdeaForm(self)
        self.idea_form.idea_saved.connect(self._idea_changed)
        self.idea_form.message.connect(self.status_message)

        self.rule_editor = RuleEditor(self)
        self.rule_editor.validity_changed.connect(self._rules_validity)
        self.rule_editor.text_changed.connect(self._rules_edited)
        self.rule_editor.save_requested.connect(lambda _text: self.save_rules())
        self.rule_status = QLabel(self)
        self.rule_status.setObjectName("ruleStatus")
        self.rule_status.setWordWrap(True)
        self.rule_status.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.revision_label = QLabel(self)
        self.revision_label.setObjectName("revisionLabel")
        self.rules_page = rules_page = QWidget(self)
        rules_bar = QHBoxLayout()
        rules_bar.addWidget(self.rule_status, 1)
        rules_bar.addWidget(self.revision_label)
        rules_layout = QVBoxLayout(rules_page)
        rules_layout.setContentsMargins(0, 0, 0, 0)
        rules_layout.addWidget(self.rule_editor, 1)
        rules_layout.addLayout(rules_bar)

        self.runs_panel = RunsPanel(self)
        self.runs_panel.results.set_requested.connect(self.show_set_curves)

        self.journal_panel = JournalPanel(self._confirm, self)
        self.journal_panel.idea_changed.connect(self._idea_changed)
        self.journal_panel.message.connect(self.status_message)
        self.review_panel = ReviewPanel(self)
        self.review_panel.idea_changed.connect(self._idea_changed)
        self.review_panel.message.connect(self.status_message)

        self.sections = QTabWidget(self)
        self.sections.setObjectName("sections")
        self.sections.setDocumentMode(True)
        for page, name in ((self.idea_form, "Idea"), (rules_page, "Rules"),
                           (self.runs_panel, "Runs"), (self.journal_panel, "Journal"),
                           (self.review_panel, "Review")):
            self.sections.addTab(page, name)

        right = QWidget(self)
        right_layout = QVBoxLayout(right)
        right_layout.setContentsMargins(0, 0, 0, 0)
        right_layout.setSpacing(0)
        right_layout.addWidget(self.header)
        right_layout.addWidget(self.sections, 1)

        self.splitter = QSplitter(Qt.Orientation.Horizontal, self)
        self.splitter.setObjectName("mainSplitter")
        self.splitter.addWidget(self.catalogue_panel)
        self.splitter.addWidget(right)
        self.splitter.setStretchFactor(0, 0)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setSizes([600, 840])
        self.splitter.setChildrenCollapsible(False)
        self.setCentralWidget(self.splitter)

    def _build_actions(self) -> None:
        style = self.style()
        icon = style.standardIcon
        pix = QStyle.StandardPixmap

        def action(text: str, slot: Any, shortcut: Any = None, tip: str = "",
                   pixmap: QStyle.StandardPixmap | None = None) -> QAction:
            act = QAction(text, self)
            if shortcut is not None:
                act.setShortcut(QKeySequence(shortcut))
            if pixmap is not None:
                act.setIcon(icon(pixmap))
            act.setStatusTip(tip)
            name = text.rstrip(".\u2026").replace("&&", "&")
            act.setToolTip(f"{name} ({act.shortcut().toString()})" if shortcut is not None
                           else tip or name)
            act.triggered.connect(lambda _checked=False: slot())
            return act

        self.new_idea_action = action("New idea\u2026", self.open_new_idea_dialog,
                                      QKeySequence.StandardKey.New, "Write down a new idea",
                                      pix.SP_FileIcon)
        self.quick_run_action = action("Quick run", self.quick_run, "Ctrl+R",
                                       "Run the rules over the data folder and record the run",
                                       pix.SP_MediaPlay)
        self.cancel_action = action("Cancel run", self.cancel_run, "Esc",
                                    "Stop the running quick run (nothing is recorded)",
                                    pix.SP_MediaStop)
        self.cancel_action.setEnabled(False)
        self.find_action = action("Find", self.catalogue_panel.focus_search,
                                  QKeySequence.StandardKey.Find, "Search the catalogue")
        self.save_rules_action = action("Save rules", self.save_rules,
                                        QKeySequence.StandardKey.Save,
                                        "Keep the rules as the idea's next revision",
                                        pix.SP_DialogSaveButton)
        self.data_folder_action = action("Data folder\u2026", self.choose_data_folder, None,
                                         "Choose the folder of price files and market library",
                                         pix.SP_DirOpenIcon)
        self.market_library_action = action("Market library\u2026",
                                            self.open_market_library, None,
                                            "Edit the data folder's market library")
        self.check_data_action = action("Check data\u2026", self.open_data_check, None,
                                        "Check the data folder's price files",
                                        pix.SP_DialogApplyButton)
        self.export_report_action = action("Export report\u2026", self.choose_report_path,
                                           None, "Write the shown run as an HTML report",
                                           pix.SP_FileDialogDetailedView)
        self.export_pnl_action = action("Export P&&L CSV\u2026", self.choose_pnl_path, None,
                                        "Write the shown run's daily P&L as CSV")
        self.export_bundle_action = action("Export idea bundle\u2026",
                                           self.choose_bundle_export_path, None,
                                           "Write the idea with its history to a bundle file")
        self.import_bundle_action = action("Import bundle\u2026", self.choose_bundle_to_import,
                                           None, "Add an idea bundle to the catalogue")
        self.open_catalogue_action = action("Open catalogue\u2026", self.choose_catalogue,
                                            QKeySequence.StandardKey.Open,
                                            "Open or create a catalogue file")
        self.quit_action = action("Quit", self.close, QKeySequence.StandardKey.Quit)

        menu = self.menuBar()
        file_menu = menu.addMenu("&File")
        for act in (self.new_idea_action, self.open_catalogue_action, None,
                    self.import_bundle_action, self.export_bundle_action,
                    self.export_report_action, self.export_pnl_action, None, self.quit_action):
            file_menu.addSeparator() if act is None else file_menu.addAction(act)
        idea_menu = menu.addMenu("&Idea")
        for act in (self.quick_run_action, self.cancel_action, self.save_rules_action,
                    self.find_action):
            idea_menu.addAction(act)
        data_menu = menu.addMenu("&Data")
        for act in (self.data_folder_action, self.market_library_action,
                    self.check_data_action):
            data_menu.addAction(act)
        view_menu = menu.addMenu("&View")
        for n, name in enumerate(SECTIONS):
            act = action(name.capitalize(), lambda s=name: self.show_section(s), f"Ctrl+{n + 1}",
                         f"Show the {name} section")
            view_menu.addAction(act)

        toolbar = QToolBar("Main", self)
        toolbar.setObjectName("mainToolbar")
        toolbar.setMovable(False)
        toolbar.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
        for act in (self.new_idea_action, self.quick_run_action, self.save_rules_action, None,
                    self.data_folder_action, self.check_data_action, None,
                    self.export_report_action):
            toolbar.addSeparator() if act is None else toolbar.addAction(act)
        self.addToolBar(toolbar)

    def _build_status_bar(self) -> None:
        bar = self.statusBar()
        self.data_label = QLabel(self)
        self.data_label.setObjectName("dataFolderLabel")
        self.progress_label = QLabel(self)
        self.progress = QProgressBar(self)
        self.progress.setObjectName("runProgress")
        self.progress.setMaximumWidth(220)
        self.progress.setFormat("%v / %m sets")
        self.cancel_button = QPushButton("Cancel", self)
        self.cancel_button.setObjectName("cancelRunButton")
        self.cancel_button.clicked.connect(self.cancel_run)
        for widget in (self.progress_label, self.progress, self.cancel_button):
            bar.addPermanentWidget(widget)
            widget.hide()
        bar.addPermanentWidget(self.data_label)
        self.user_label = QLabel(f"Working as {self.user}", self)
        self.user_label.setObjectName("userLabel")
        bar.addPermanentWidget(self.user_label)
        self._show_data_folder()

    # -- catalogue and data folder --------------------------------------------------------
    def open_catalogue(self, path: str | os.PathLike[str]) -> bool:
        """Open (or create) a catalogue file and show its ideas."""
        try:
            catalogue = Catalogue(path)
        except HunchbookError as exc:
            self.show_error("Cannot open the catalogue", one_line(exc))
            return False
        self.idea_form.save_now()
        if self.catalogue is not None:
            self.catalogue.close()
        self.catalogue = catalogue
        self._rule_drafts.clear()
        self.idea_form.set_context(catalogue, self.user)
        self.journal_panel.set_context(catalogue, self.user)
        self.review_panel.set_context(catalogue, self.user)
        self.runs_panel.set_context(catalogue)
        self.catalogue_panel.set_catalogue(catalogue)
        self._show_idea(None)
        self.setWindowTitle(f"Hunchbook \u2014 {catalogue.path.name}")
        if self.remember:
            self._settings().setValue("catalogue/last", str(catalogue.path))
        count = self.catalogue_panel.model.rowCount()
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
                self._settings().setValue("data/last", str(self.data_folder))
        self.idea_form.set_market_choices(self.library)
        self.rule_editor.set_market_choices(self.library)
        self._show_data_folder()

    # -- ideas and sections ---------------------------------------------------------------
    def current_idea_id(self) -> int | None:
        """The idea shown on the right, if any."""
        return self._idea_id

    def select_idea(self, idea_id: int) -> bool:
        """Select an idea in the catalogue table and show it."""
        return self.catalogue_panel.select_idea(idea_id)

    def show_section(self, name: str) -> None:
        """Show one of :data:`SECTIONS`."""
        self.sections.setCurrentIndex(SECTIONS.index(name))

    def current_section(self) -> str:
        """The section shown."""
        return SECTIONS[self.sections.currentIndex()]

    def open_new_idea_dialog(self) -> NewIdeaDialog | None:
        """Ask for a new idea's title and hypothesis (window-modal; the idea is written when
        the dialog is accepted)."""
        if not self._need_catalogue():
            return None
        dialog = NewIdeaDialog(self)
        dialog.accepted.connect(lambda: self.create_idea(dialog.title.text(),
                                                         dialog.hypothesis.text()))
        dialog.finished.connect(dialog.deleteLater)
        dialog.open()
        return dialog

    def create_idea(self, title: str, hypothesis: str) -> int | None:
        """Write a new draft idea, select it and open its Idea section."""
        if not self._need_catalogue():
            return None
        assert self.catalogue is not None
        try:
            idea_id = self.catalogue.add_idea(title=title.strip(),
                                              hypothesis=hypothesis.strip(),
                                              submitted_by=self.user)
        except HunchbookError as exc:
            self.show_error("Idea not written", one_line(exc))
            return None
        self.catalogue_panel.reload()
        self.select_idea(idea_id)
        self.show_section("idea")
        self.status_message(f"Idea {idea_id} written down as a draft.")
        return idea_id

    def _idea_chosen(self, idea_id: int) -> None:
        if idea_id >= 0 and idea_id != self._idea_id:
            self._show_idea(idea_id)

    def _show_idea(self, idea_id: int | None) -> None:
        self._keep_rule_draft()
        self.idea_form.show_idea(idea_id)
        self._idea_id = idea_id
        self.journal_panel.show_idea(idea_id)
        self.review_panel.show_idea(idea_id)
        self.runs_panel.show_idea(idea_id)
        self._load_rules(idea_id)
        self._show_header()
        self.save_rules_action.setEnabled(idea_id is not None)
        self.export_bundle_action.setEnabled(idea_id is not None)
        self._update_run_actions()

    def _idea_changed(self, idea_id: int) -> None:
        """Something wrote to the idea: refresh its row, header and the other sections."""
        self.catalogue_panel.refresh_idea(idea_id)
        if idea_id == self._idea_id:
            self._show_header()
            self.journal_panel.show_idea(idea_id)
            self.review_panel.show_idea(idea_id)
            if self.sender() is not self.idea_form:
                self.idea_form.show_idea(idea_id)

    def _show_header(self) -> None:
        if self._idea_id is None or self.catalogue is None:
            self.header.setText("<span style='font-size:large'>No idea selected</span><br>"
                                "Pick an idea on the left, or write a new one (Ctrl+N).")
            self.sections.setEnabled(False)
            return
        self.sections.setEnabled(True)
        idea = self.catalogue.idea(self._idea_id)
        bits = [f"<b>{idea.stage}</b>", f"{idea.trial_count} trial(s)",
                f"by {_html(idea.submitted_by)}"]
        if idea.last_verdict:
            bits.insert(1, f"last verdict <b>{_html(verdict_label(idea.last_verdict))}</b>")
        details = " \u00b7 ".join(bits)
        self.header.setText(f"<span style='font-size:x-large; font-weight:600'>"
                            f"{_html(idea.title)}</span><br>{details}")
        review = self.sections.indexOf(self.review_panel)
        self.sections.setTabText(review, "Review \u25cf" if idea.stage == "submitted"
                                 else "Review")

    # -- rules ----------------------------------------------------------------------------
    def _load_rules(self, idea_id: int | None) -> None:
        if idea_id is None or self.catalogue is None:
            self._rules_saved_text = ""
            self.rule_editor.set_text("")
            self.revision_label.setText("")
            self.rule_status.setText("")
            return
        revision = self.catalogue.latest_revision(idea_id)
        self._rules_saved_text = revision.text if revision is not None else ""
        text = self._rule_drafts.get(idea_id)
        if text is None:
            text = (revision.text if revision is not None
                    else starter_rules(self.catalogue.idea(idea_id)))
        self.rule_editor.set_text(text)
        self._show_revision()
        self._rules_validity(self.rule_editor.error_message() is None,
                             self.rule_editor.error_message() or "")

    def _keep_rule_draft(self) -> None:
        if self._idea_id is None:
            return
        text = self.rule_editor.text()
        if text != self._rules_saved_text and text.strip():
            self._rule_drafts[self._idea_id] = text
        else:
            self._rule_drafts.pop(self._idea_id, None)

    def _rules_edited(self, _text: str) -> None:
        self._show_revision()

    def _rules_validity(self, valid: bool, message: str) -> None:
        self.rule_status.setText("" if valid else f"\u26a0 Rule error: {message}")
        index = self.sections.indexOf(self.rules_page)
        self.sections.setTabText(index, "Rules" if valid else "Rules \u26a0")
        self.sections.setTabToolTip(index, "" if valid else message)

    def _show_revision(self) -> None:
        if self._idea_id is None or self.catalogue is None:
            return
        revisions = self.catalogue.revisions(self._idea_id)
        changed = self.rule_editor.text() != self._rules_saved_text
        if not revisions:
            text = "Not saved yet (a starting point to edit)."
        else:
            text = f"Revision {revisions[-1].number}, saved {revisions[-1].saved_at[:10]}"
            text += " \u2014 edited, not saved" if changed else ""
        self.revision_label.setText(text)

    def save_rules(self) -> int | None:
        """Keep the Rules editor's text as the idea's next revision; returns its number."""
        if self._idea_id is None or self.catalogue is None:
            return None
        if not self._rules_are_valid():
            return None
        try:
            revision = self.catalogue.save_rules(self._idea_id, self.rule_editor.text(),
                                                 by=self.user)
        except HunchbookError as exc:
            self.show_error("Rules not saved", one_line(exc))
            return None
        self._rules_saved_text = revision.text
        self._rule_drafts.pop(self._idea_id, None)
        self._show_revision()
        self._idea_changed(self._idea_id)
        self.status_message(f"Rules saved as revision {revision.number}.")
        return revision.number

    def _rules_are_valid(self) -> bool:
        """Check the editor's text now (typing may not have settled); show the error if any."""
        try:
            parse_rules(self.rule_editor.text())
        except RuleError as exc:
            self.show_section("rules")
            self._rules_validity(False, str(exc))
            self.show_error("The rules have an error", str(exc))
            return False
        return True

    def load_rule_file(self, path: str | os.PathLike[str]) -> bool:
        """Put a rule file's text into the Rules editor of the current idea (not saved)."""
        if self._idea_id is None:
            self.show_error("No idea selected", "Select an idea before loading a rule file.")
            return False
        try:
            text = Path(path).read_text(encoding="utf-8-sig")
        except (OSError, UnicodeDecodeError) as exc:
            self.show_error("Rule file not read", f"{path}: {one_line(exc)}")
            return False
        self.rule_editor.set_text(text)
        self.show_section("rules")
        self.status_message(f"Loaded {Path(path).name} into the rules (not saved yet).")
        return True

    # -- quick run ------------------------------------------------------------------------
    def is_running(self) -> bool:
        """Whether a quick run is going."""
        return self._run_worker is not None

    def quick_run(self) -> RunIdeaWorker | None:
        """Run the Rules editor's text over the data folder on a worker and record the run.

        Refuses (with a dialog) when the rules have an error, the idea is not accepted for
        testing, or no data folder is chosen.
        """
        if self._run_worker is not None:
            self.status_message("A quick run is already going.")
            return None
        if self._idea_id is None or self.catalogue is None:
            self.show_error("No idea selected", "Select an accepted idea to run.")
            return None
        self.idea_form.save_now()
        if not self._rules_are_valid():
            return None
        idea = self.catalogue.idea(self._idea_id)
        if idea.stage not in RUNNABLE_STAGES:
            self.show_error("Not ready to run",
                            f"This idea is '{idea.stage}'; quick runs are for ideas that are "
                            f"{', '.join(RUNNABLE_STAGES)} (submit it for review first).")
            return None
        if self.data_folder is None:
            self.show_error("No data folder", "Choose a data folder first (Data \u25b8 Data "
                            "folder\u2026), or drop one onto the window.")
            return None
        worker = RunIdeaWorker(self.catalogue.path, idea.id, self.rule_editor.text(),
                               self.data_folder, by=self.user, runner=self.runner)
        worker.signals.progress.connect(self._run_progress)
        worker.signals.finished.connect(self._run_done)
        worker.signals.failed.connect(self._run_failed)
        worker.signals.cancelled.connect(self._run_was_cancelled)
        self._run_worker = worker
        self._set_running(True, idea.title)
        worker.start()
        self.run_started.emit()
        return worker

    def cancel_run(self) -> None:
        """Ask the quick run to stop (nothing is recorded)."""
        if self._run_worker is not None:
            self._run_worker.cancel()
            self.progress_label.setText("Cancelling\u2026")
            self.cancel_button.setEnabled(False)

    def _set_running(self, running: bool, title: str = "") -> None:
        for widget in (self.progress_label, self.progress, self.cancel_button):
            widget.setVisible(running)
        self.cancel_button.setEnabled(running)
        self.progress.setRange(0, 0)
        self.progress_label.setText(f"Running \u201c{title}\u201d" if running else "")
        self._update_run_actions()

    def _update_run_actions(self) -> None:
        running = self._run_worker is not None
        self.quick_run_action.setEnabled(not running and self._idea_id is not None)
        self.cancel_action.setEnabled(running)

    def _run_progress(self, done: int, total: int) -> None:
        self.progress.setRange(0, max(total, 1))
        self.progress.setValue(done)

    def _end_run(self) -> RunIdeaWorker | None:
        worker, self._run_worker = self._run_worker, None
        self._set_running(False)
        return worker

    def _run_done(self, result: Any) -> None:
        worker = self._end_run()
        run_id = int(result.run_id)
        idea_id = worker.idea_id if worker is not None else self._idea_id
        assert self.catalogue is not None and idea_id is not None
        run = self.catalogue.run(run_id)
        label = verdict_text(run).label
        self.catalogue_panel.refresh_idea(idea_id)
        if idea_id == self._idea_id:
            self._rule_drafts.pop(idea_id, None)
            self._rules_saved_text = self.rule_editor.text()
            self.idea_form.show_idea(idea_id)
            self.journal_panel.show_idea(idea_id)
            self.review_panel.show_idea(idea_id)
            self.runs_panel.show_idea(idea_id, run_id=run_id)
            self._show_header()
            self._show_revision()
            self.show_section("runs")
        self.status_message(f"Run {run_id} recorded (rule revision {result.revision_number}, "
                            f"{len(result.summary.sets)} sets): {label}.")
        self.run_finished.emit(run_id)

    def _run_failed(self, message: str) -> None:
        self._end_run()
        self.show_error("The quick run stopped", message)
        self.run_failed.emit(message)

    def _run_was_cancelled(self) -> None:
        self._end_run()
        self.status_message("Quick run cancelled; nothing was recorded.")
        self.run_cancelled.emit()

    # -- one set's curves -----------------------------------------------------------------
    def show_set_curves(self, params: dict) -> CallWorker | None:
        """Compute one parameter set of the shown run on a worker and overlay its curves."""
        run = self.runs_panel.current_run()
        if run is None or self.catalogue is None:
            return None
        folder = self.data_folder or (run.result.data_folder if run.result else None)
        if not folder:
            self.status_message("Choose a data folder to see that set's curves.")
            return None
        rule_text = self.catalogue.revision(run.revision_id).text
        worker = CallWorker(set_curves, rule_text, folder, dict(params))
        run_id = run.id

        def shown(result: tuple[dict, Any]) -> None:
            current = self.runs_panel.current_run()
            if current is not None and current.id == run_id:
                self.runs_panel.results.show_set_curves(result[0], result[1])
                self.status_message("Showing set " + ", ".join(
                    f"{k}={v:g}" for k, v in result[0].items()) + " (dashed).")
                self.curves_shown.emit(result[0])

        worker.signals.finished.connect(shown)
        worker.signals.failed.connect(
            lambda message: self.status_message(f"That set's curves: {message}"))
        self._curve_worker = worker
        self.status_message("Computing that set's curves\u2026")
        worker.start()
        return worker

    # -- dialogs: data --------------------------------------------------------------------
    def choose_data_folder(self) -> None:
        """Ask for the data folder."""
        start = str(self.data_folder or Path.home())
        folder = QFileDialog.getExistingDirectory(self, "Data folder", start)
        if folder:
            self.set_data_folder(folder)
            self.status_message(f"Data folder: {folder}")

    def open_market_library(self) -> QDialog | None:
        """Edit the data folder's market library (window-modal)."""
        if self.data_folder is None:
            self.show_error("No data folder", "Choose a data folder first; its market "
                            "library is markets.toml inside it.")
            return None
        dialog = MarketLibraryDialog(self.data_folder / LIBRARY_FILE, self)
        dialog.finished.connect(lambda _result: self.set_data_folder(self.data_folder))
        dialog.open()
        return dialog

    def open_data_check(self) -> QDialog | None:
        """Check the data folder's files (window-modal; the check runs on a worker)."""
        if self.data_folder is None:
            self.show_error("No data folder", "Choose a data folder to check first.")
            return None
        dialog = DataCheckDialog(self.data_folder, self)
        dialog.open()
        return dialog

    # -- exports and imports --------------------------------------------------------------
    def export_report(self, path: str | os.PathLike[str]) -> bool:
        """Write the shown run as a self-contained HTML report."""
        run = self._shown_run()
        if run is None or self.catalogue is None:
            return False
        try:
            self.runs_panel.results.export_html(
                path, idea=self.catalogue.idea(run.idea_id), run=run,
                rule_text=self.catalogue.revision(run.revision_id).text)
        except (HunchbookError, OSError) as exc:
            self.show_error("Report not written", one_line(exc))
            return False
        self.status_message(f"Report written to {path}.")
        return True

    def export_pnl_csv(self, path: str | os.PathLike[str]) -> bool:
        """Write the shown run's daily P&L (gross, cost, net) as CSV."""
        run = self._shown_run()
        if run is None or run.daily_pnl is None:
            return False
        try:
            run.daily_pnl.to_csv(path, index_label="date", lineterminator="\n")
        except OSError as exc:
            self.show_error("P&L not written", one_line(exc))
            return False
        self.status_message(f"Daily P&L of run {run.id} written to {path}.")
        return True

    def export_bundle(self, path: str | os.PathLike[str]) -> bool:
        """Write the current idea with its history to a bundle file (replacing the file)."""
        if self._idea_id is None or self.catalogue is None:
            return False
        try:
            self.catalogue.export_bundle(self._idea_id, path, overwrite=True)
        except (HunchbookError, OSError) as exc:
            self.show_error("Bundle not written", one_line(exc))
            return False
        self.status_message(f"Idea bundle written to {path}.")
        return True

    def import_bundle(self, path: str | os.PathLike[str], *, ask: bool = True) -> int | None:
        """Import an idea bundle (after confirmation when ``ask``); returns the idea id."""
        if not self._need_catalogue():
            return None
        assert self.catalogue is not None
        if ask and not self._confirm("Import bundle?",
                                     f"Import the idea bundle {Path(path).name} into this "
                                     "catalogue? Records already present are skipped; nothing "
                                     "is overwritten."):
            return None
        try:
            report = self.catalogue.import_bundle(path, by=self.user)
        except (HunchbookError, OSError) as exc:
            self.show_error("Bundle not imported", one_line(exc))
            return None
        self.catalogue_panel.reload()
        self.select_idea(report.idea_id)
        added = sum(report.added.values())
        what = "new idea" if report.created else "idea already in the catalogue"
        conflicts = f"; {len(report.conflicts)} difference(s) kept as they were" \
            if report.conflicts else ""
        self.status_message(f"Imported {Path(path).name}: {what}, {added} record(s) added"
                            f"{conflicts}.")
        return report.idea_id

    def choose_report_path(self) -> None:
        """Ask where to write the HTML report of the shown run."""
        run = self._shown_run()
        if run is not None:
            path = self._save_path("Export report", f"run-{run.id}.html", "HTML (*.html)")
            if path and self.export_report(path):
                QDesktopServices.openUrl(QUrl.fromLocalFile(path))

    def choose_pnl_path(self) -> None:
        """Ask where to write the shown run's daily P&L."""
        run = self._shown_run()
        if run is not None:
            path = self._save_path("Export P&L", f"run-{run.id}-pnl.csv", "CSV (*.csv)")
            if path:
                self.export_pnl_csv(path)

    def choose_bundle_export_path(self) -> None:
        """Ask where to write the current idea's bundle."""
        if self._idea_id is not None:
            path = self._save_path("Export idea bundle", f"idea-{self._idea_id}.zip",
                                   "Idea bundle (*.zip)")
            if path:
                self.export_bundle(path)

    def choose_bundle_to_import(self) -> None:
        """Ask for a bundle file to import."""
        path, _ = QFileDialog.getOpenFileName(self, "Import bundle", str(Path.home()),
                                              "Idea bundle (*.zip)")
        if path:
            self.import_bundle(path)

    def choose_catalogue(self) -> None:
        """Ask for a catalogue file to open (a new name creates one)."""
        start = str(self.catalogue.path if self.catalogue is not None else Path.home())
        path, _ = QFileDialog.getSaveFileName(
            self, "Open or create a catalogue", start, "Catalogue (*.sqlite);;All files (*)",
            options=QFileDialog.Option.DontConfirmOverwrite)
        if path:
            self.open_catalogue(path)

    def _save_path(self, title: str, name: str, filter_: str) -> str:
        path, _ = QFileDialog.getSaveFileName(self, title, str(Path.home() / name), filter_)
        return path

    def _shown_run(self) -> Any:
        run = self.runs_panel.current_run()
        if run is None:
            self.show_error("No run shown", "Open the Runs section and choose a run first.")
        return run

    # -- drag and drop --------------------------------------------------------------------
    def dragEnterEvent(self, event: QDragEnterEvent) -> None:  # noqa: N802
        """Accept files and folders."""
        if event.mimeData().hasUrls() and any(u.isLocalFile() for u in event.mimeData().urls()):
            event.acceptProposedAction()
        else:
            event.ignore()

    def dropEvent(self, event: QDropEvent) -> None:  # noqa: N802
        """Load what was dropped (see :meth:`handle_dropped_paths`)."""
        paths = [u.toLocalFile() for u in event.mimeData().urls() if u.isLocalFile()]
        event.acceptProposedAction()
        self.handle_dropped_paths(paths)

    def handle_dropped_paths(self, paths: Iterable[str | os.PathLike[str]]) -> None:
        """Rule files go to the Rules editor, folders and CSV files choose the data folder,
        bundles are imported after confirmation."""
        for path in paths:
            kind = classify_drop(path)
            if kind is None:
                self.status_message(f"{Path(path).name}: not a rule file, data folder, price "
                                    "file or idea bundle.")
            elif kind[0] == "rules":
                self.load_rule_file(kind[1])
            elif kind[0] == "data":
                self.set_data_folder(kind[1])
                self.status_message(f"Data folder: {kind[1]}")
            else:
                self.import_bundle(kind[1])

    # -- messages, settings, closing ------------------------------------------------------
    def status_message(self, text: str) -> None:
        """Show a line in the status bar."""
        self.statusBar().showMessage(text, 15000)

    def show_error(self, title: str, message: str) -> None:
        """An error dialog with one clear line (window-modal, not blocking)."""
        self.last_error = one_line(message)
        self.status_message(self.last_error)
        feedback.show_error(self, title, message)

    def _confirm(self, title: str, question: str) -> bool:
        return feedback.confirm(self, title, question)

    def _need_catalogue(self) -> bool:
        if self.catalogue is None:
            self.show_error("No catalogue", "Open a catalogue first (File \u25b8 Open "
                            "catalogue\u2026).")
            return False
        return True

    def _show_data_folder(self) -> None:
        if self.data_folder is None:
            self.data_label.setText("No data folder")
            self.data_label.setToolTip("Data \u25b8 Data folder\u2026, or drop a folder here")
        else:
            markets = f"{len(self.library)} markets" if self.library else "no market library"
            self.data_label.setText(f"Data: {self.data_folder.name} ({markets})")
            self.data_label.setToolTip(str(self.data_folder))

    def _settings(self) -> QSettings:
        return QSettings(QSettings.defaultFormat(), QSettings.Scope.UserScope, *SETTINGS_SCOPE)

    def remembered_paths(self) -> tuple[Path | None, Path | None]:
        """The last catalogue and data folder kept in the settings."""
        settings = self._settings()
        catalogue, data = settings.value("catalogue/last"), settings.value("data/last")
        return (Path(catalogue) if catalogue else None, Path(data) if data else None)

    def has_saved_layout(self) -> bool:
        """Whether the settings hold a window geometry from an earlier session."""
        return self._settings().contains("window/geometry")

    def restore_layout(self) -> None:
        """Restore window geometry, toolbar state and splitter positions."""
        settings = self._settings()
        for key, restore in (("window/geometry", self.restoreGeometry),
                             ("window/state", self.restoreState),
                             ("window/splitter", self.splitter.restoreState),
                             ("window/runs_splitter", self.runs_panel.splitter.restoreState)):
            value = settings.value(key)
            if isinstance(value, QByteArray):
                restore(value)

    def save_layout(self) -> None:
        """Keep window geometry, toolbar state and splitter positions."""
        settings = self._settings()
        settings.setValue("window/geometry", self.saveGeometry())
        settings.setValue("window/state", self.saveState())
        settings.setValue("window/splitter", self.splitter.saveState())
        settings.setValue("window/runs_splitter", self.runs_panel.splitter.saveState())
        settings.sync()

    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802
        """Save edits and layout; stop a running quick run (nothing recorded)."""
        if self._run_worker is not None:
            if not self._confirm("Stop the run?", "A quick run is going. Stop it and quit? "
                                 "Nothing of it will be recorded."):
                event.ignore()
                return
            self._run_worker.cancel()
        self.idea_form.save_now()
        if self.keep_layout:
            self.save_layout()
        QThreadPool.globalInstance().waitForDone(10_000)
        if self.catalogue is not None:
            self.catalogue.close()
            self.catalogue = None
        super().closeEvent(event)


def _html(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
