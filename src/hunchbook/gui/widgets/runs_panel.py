"""The Runs section: an idea's run history with verdicts and pre-registration flags; the chosen
run's results below (with the idea's held-out years), where a heatmap click overlays that
parameter set's curves (computed on a worker, on the dates before the run's holdout
boundary). Two selected runs, or the shown one and a run of any idea, open side by side
(:mod:`hunchbook.gui.compare`)."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QItemSelectionModel, QModelIndex, Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QScrollArea,
    QSplitter,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.feedback import one_line
from hunchbook.gui.models import ID_ROLE, RunTableModel
from hunchbook.gui.sections.base import IdeaSection
from hunchbook.gui.workers import CallWorker, set_curves
from hunchbook.store.records import Idea, RunRecord
from hunchbook.store.vocab import RUN_ADVICE

if TYPE_CHECKING:
    from hunchbook.gui.widgets.compare_dialog import CompareDialog, RunPickerDialog
    from hunchbook.gui.widgets.results_view import ResultsView

#: Gap between the compare buttons and the runs table (pixels).
BUTTON_GAP = 4

#: Where in the window each stage's next step is taken (beside :data:`RUN_ADVICE`), shown
#: for an idea without runs.
WINDOW_STEPS: dict[str, str] = {
    "draft": "Rules section: write the rules and save them (Ctrl+S). Journal section: "
             "<i>Change stage</i> to <i>submitted</i>.",
    "submitted": "Review section: someone other than the author answers the checklist and "
                 "accepts or returns it.",
    "returned": "Review section: read the comments. Change the idea or its rules, then "
                "Journal section: <i>Change stage</i> to <i>submitted</i>.",
    "accepted": "Press <b>Ctrl+R</b> (Idea \u25b8 Quick run) to run its rules on the data "
                "folder.",
    "tested": "Press <b>Ctrl+R</b> to run its rules again.",
    "promoted": "Press <b>Ctrl+R</b> to run its rules again.",
    "shelved": "Journal section: <i>Change stage</i> to <i>draft</i>.",
}


def next_step_html(idea: Idea) -> str:
    """What an idea without runs needs next, as the Runs section shows it."""
    return (f"<h3>No runs yet</h3><p>This idea is <b>{idea.stage}</b>. "
            f"{RUN_ADVICE.get(idea.stage, '')}</p>"
            f"<p>{WINDOW_STEPS.get(idea.stage, '')}</p>")


class RunsPanel(IdeaSection):
    """The Runs section: run history table (newest first) over a :class:`ResultsView` of the
    chosen run (built when an idea is first shown: its charts load pyqtgraph and pandas, which
    the window's start leaves out).

    Signals
    -------
    run_shown(int)
        The results of this run are now shown.
    curves_shown(dict)
        A parameter set's curves were added to the results.
    unlock_requested()
        The results' holdout strip asked to unlock the idea's held-out years.
    """

    key = "runs"
    tab_title = "Runs"

    run_shown = Signal(int)
    curves_shown = Signal(dict)
    unlock_requested = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._title = ""
        self._run: RunRecord | None = None
        self._run_ids: set[int] = set()
        self._curve_worker: CallWorker | None = None
        self.model = RunTableModel(self)
        self.table = QTableView(self)
        self.table.setObjectName("runTable")
        self.table.setModel(self.model)
        self.table.setSortingEnabled(True)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.table.setAlternatingRowColors(True)
        self.table.setShowGrid(False)
        self.table.setWordWrap(False)
        self.table.verticalHeader().hide()
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(RunTableModel.VERDICT, QHeaderView.ResizeMode.Stretch)
        header.setHighlightSections(False)
        self.table.sortByColumn(RunTableModel.RUN, Qt.SortOrder.DescendingOrder)
        self.table.selectionModel().currentRowChanged.connect(self._current_changed)
        self.table.selectionModel().selectionChanged.connect(
            lambda *_: self._update_compare())
        self.compare_button = QPushButton("Compare the two selected runs", self)
        self.compare_button.setObjectName("compareButton")
        self.compare_button.setToolTip("Select two runs (Ctrl+click) and see them side by "
                                       "side: figures, checks, curves and rule files")
        self.compare_button.clicked.connect(self.compare_selected)
        self.compare_any_button = QPushButton("Compare with a run of any idea\u2026", self)
        self.compare_any_button.setObjectName("compareAnyButton")
        self.compare_any_button.clicked.connect(self.compare_with_any)
        self.compare_dialog: CompareDialog | None = None
        self.empty = QLabel("No runs yet. Write the rules, then press Ctrl+R for a quick run.",
                            self)
        self.empty.setObjectName("noRunsLabel")
        self.empty.setAlignment(Qt.AlignmentFlag.AlignCenter)
        # an idea without runs: what to do next instead of an empty results frame
        self.next_step = QLabel(self)
        self.next_step.setObjectName("nextStepPage")
        self.next_step.setTextFormat(Qt.TextFormat.RichText)
        self.next_step.setWordWrap(True)
        self.next_step.setAlignment(Qt.AlignmentFlag.AlignHCenter | Qt.AlignmentFlag.AlignTop)
        self.next_step.setContentsMargins(24, 48, 24, 24)
        self._results: ResultsView | None = None
        # the results' charts need room: on a small screen they scroll instead of forcing a
        # tall window
        self.results_area = QScrollArea(self)
        self.results_area.setObjectName("resultsArea")
        self.results_area.setWidgetResizable(True)
        self.results_area.setFrameShape(QFrame.Shape.NoFrame)

        self.top = top = QWidget(self)
        top_layout = QVBoxLayout(top)
        top_layout.setContentsMargins(0, 0, 0, 0)
        top_layout.setSpacing(BUTTON_GAP)
        buttons = QHBoxLayout()
        buttons.addStretch(1)
        buttons.addWidget(self.compare_button)
        buttons.addWidget(self.compare_any_button)
        top_layout.addLayout(buttons)
        top_layout.addWidget(self.table)
        top_layout.addWidget(self.empty)
        self.splitter = QSplitter(Qt.Orientation.Vertical, self)
        self.splitter.setObjectName("runsSplitter")
        self.splitter.addWidget(top)
        self.splitter.addWidget(self.results_area)
        self.splitter.setStretchFactor(0, 0)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setSizes([130, 700])
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)
        layout.addWidget(self.next_step, 1)
        self.show_idea(None)

    @property
    def results(self) -> ResultsView:
        """The chosen run's results (built on first use)."""
        if self._results is None:
            from hunchbook.gui.widgets.results_view import ResultsView

            self._results = ResultsView(self)
            self._results.set_requested.connect(self.show_set_curves)
            self._results.holdout.unlock_requested.connect(self.unlock_requested)
            self.results_area.setWidget(self._results)
        return self._results

    def show_idea(self, idea_id: int | None) -> None:
        """List an idea's runs and show the newest."""
        self.idea_id = idea_id
        runs = [] if idea_id is None or self.catalogue is None else self.catalogue.runs(idea_id)
        idea = (self.catalogue.idea(idea_id)
                if idea_id is not None and self.catalogue is not None else None)
        self._title = "" if idea is None else idea.title
        self._run_ids = {r.id for r in runs}
        self.model.set_runs(runs)
        self._update_compare()
        self.table.setVisible(bool(runs))
        self.empty.setVisible(not runs)
        waiting = not runs and idea is not None
        self.splitter.setVisible(not waiting)
        self.next_step.setVisible(waiting)
        if idea is not None and waiting:
            self.next_step.setText(next_step_html(idea))
        rows = self.table.verticalHeader().defaultSectionSize() * min(max(len(runs), 1), 6)
        height = (self.table.horizontalHeader().sizeHint().height() + rows
                  + 2 * self.table.frameWidth() + 2 + self.compare_button.sizeHint().height()
                  + BUTTON_GAP)
        total = sum(self.splitter.sizes()) or 800
        self.splitter.setSizes([height, max(total - height, 100)])
        if not runs:
            self._run = None
            if idea_id is not None or self._results is not None:
                self.results.clear()
            return
        self.select_run(max(r.id for r in runs))

    def select_run(self, run_id: int) -> bool:
        """Choose a run in the history (its results are shown)."""
        row = self.model.row_of(run_id)
        if row < 0:
            return False
        self.table.selectionModel().setCurrentIndex(
            self.model.index(row, 0), QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows)
        if self._run is None or self._run.id != run_id:
            self._show_run(run_id)
        return True

    def idea_updated(self, idea_id: int) -> None:
        """The idea was written elsewhere: when its runs changed (a quick run recorded one),
        list them anew and show the newest; otherwise the chosen run stays."""
        if self.catalogue is not None and idea_id == self.idea_id and \
                {r.id for r in self.catalogue.runs(idea_id)} != self._run_ids:
            self.show_idea(idea_id)
        elif self._run is not None:
            self._show_holdout()

    def current_run(self) -> RunRecord | None:
        """The run whose results are shown (daily P&L decoded), if any."""
        return self._run

    def selected_run_ids(self) -> list[int]:
        """The runs selected in the table, oldest first."""
        rows = {i.row() for i in self.table.selectionModel().selectedRows()}
        return sorted(int(self.model.index(r, 0).data(ID_ROLE)) for r in rows)

    def compare_selected(self) -> CompareDialog | None:
        """Open the two selected runs side by side (the older as A)."""
        ids = self.selected_run_ids()
        if len(ids) != 2:
            self.message.emit("Select two runs to compare (Ctrl+click the second).")
            return None
        return self.compare(*ids)

    def compare_with_any(self) -> RunPickerDialog | None:
        """Ask for a run of any idea and open it beside the shown run (window-modal)."""
        if self.catalogue is None or self._run is None:
            return None
        from hunchbook.gui.compare import run_picker

        picker = run_picker(self.catalogue, self)
        shown = self._run.id
        picker.accepted.connect(lambda: picker.chosen() is not None
                                and self.compare(shown, int(picker.chosen())))
        picker.open()
        return picker

    def compare(self, first: int, second: int) -> CompareDialog | None:
        """Open two runs side by side (A: ``first``; not modal)."""
        if self.catalogue is None:
            return None
        from hunchbook.gui.compare import comparison_dialog  # charts: loaded when first used

        try:
            dialog = comparison_dialog(self.catalogue, first, second, self)
        except HunchbookError as exc:
            self.error.emit("Runs not compared", one_line(exc))
            return None
        self.compare_dialog = dialog
        dialog.show()
        return dialog

    def _update_compare(self) -> None:
        count = len(self.table.selectionModel().selectedRows())
        self.compare_button.setEnabled(count == 2)
        self.compare_any_button.setEnabled(self.model.rowCount() > 0)

    def _current_changed(self, current: QModelIndex, previous: QModelIndex) -> None:
        if current.isValid():
            self._show_run(int(current.data(ID_ROLE)))

    def _show_run(self, run_id: int) -> None:
        if self.catalogue is None:
            return
        self._run = self.catalogue.run(run_id)
        self.results.show_run(self._run, title=self._title)
        self._show_holdout()
        self.run_shown.emit(run_id)

    def _show_holdout(self) -> None:
        """Show the idea's held-out years beside the shown run."""
        if self.catalogue is None or self._run is None:
            return
        idea_id = self._run.idea_id
        self.results.show_holdout(self.catalogue.holdout_view(idea_id),
                                  self.catalogue.unlock_problem(idea_id))

    def show_set_curves(self, params: dict) -> CallWorker | None:
        """Compute one parameter set of the shown run on a worker and overlay its curves
        (over the chosen data folder, else the one the run was made on)."""
        run = self._run
        if run is None or self.catalogue is None:
            return None
        folder = self.context.data_folder or (run.result.data_folder if run.result else None)
        if not folder:
            self.message.emit("Choose a data folder to see that set's curves.")
            return None
        rule_text = self.catalogue.revision(run.revision_id).text
        boundary = run.result.holdout_boundary if run.result else None
        sweep = run.result.statistics if run.result else None
        worker = CallWorker(set_curves, rule_text, folder, dict(params), boundary, sweep)
        run_id = run.id

        def shown(result: tuple[dict, Any, Any]) -> None:
            if self._run is not None and self._run.id == run_id:
                self.results.show_set_curves(result[0], result[1], verdict=result[2])
                self.message.emit("Showing set " + ", ".join(
                    f"{k}={v:g}" for k, v in result[0].items()) + " (dashed).")
                self.curves_shown.emit(result[0])

        worker.signals.finished.connect(shown)
        worker.signals.failed.connect(
            lambda message: self.message.emit(f"That set's curves: {message}"))
        self._curve_worker = worker
        self.message.emit("Computing that set's curves\u2026")
        worker.start()
        return worker
