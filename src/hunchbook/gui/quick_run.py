"""Quick runs: the Rules section's text run over the data folder on a worker, with progress and
Cancel in the window's status bar, then recorded on the idea and shown in its Runs section."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QObject, Signal
from PySide6.QtWidgets import (
    QLabel,
    QMessageBox,
    QProgressBar,
    QPushButton,
    QStatusBar,
    QStyle,
)

from hunchbook.core.formats import plural
from hunchbook.gui.actions import make_action
from hunchbook.gui.charts.run_figures import verdict_text
from hunchbook.gui.preregistration import offer_amendment, run_refusal
from hunchbook.gui.workers import RunIdeaWorker
from hunchbook.starter import STARTER_HINT, is_starter
from hunchbook.store.vocab import RUN_ADVICE, RUNNABLE_STAGES

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class QuickRunner(QObject):
    """Starts, follows and cancels the window's quick run (one at a time).

    Attributes
    ----------
    run_action, cancel_action
        "Quick run" (Ctrl+R) and "Cancel run" (Esc) for the menus and toolbar.
    progress_label, progress, cancel_button
        Shown in the status bar while a run goes (see :meth:`add_to_status_bar`).

    Signals
    -------
    started()
        A quick run went to its worker.
    finished(int)
        A quick run was recorded (its run id) and the window shows it.
    failed(str)
        A quick run stopped with this one-line message (nothing recorded).
    cancelled()
        A quick run was cancelled (nothing recorded).
    """

    started = Signal()
    finished = Signal(int)
    failed = Signal(str)
    cancelled = Signal()

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self._window = window
        self._worker: RunIdeaWorker | None = None
        self.refusal_box: QMessageBox | None = None
        pix = QStyle.StandardPixmap
        self.run_action = make_action(
            window, "Quick run", self.start, "Ctrl+R",
            "Run the rules over the data folder and record the run", pix.SP_MediaPlay)
        self.cancel_action = make_action(
            window, "Cancel run", self.cancel, "Esc",
            "Stop the running quick run (nothing is recorded)", pix.SP_MediaStop)
        self.cancel_action.setEnabled(False)
        self.progress_label = QLabel(window)
        self.progress = QProgressBar(window)
        self.progress.setObjectName("runProgress")
        self.progress.setMaximumWidth(220)
        self.progress.setFormat("%v / %m sets")
        self.cancel_button = QPushButton("Cancel", window)
        self.cancel_button.setObjectName("cancelRunButton")
        self.cancel_button.clicked.connect(self.cancel)

    def add_to_status_bar(self, bar: QStatusBar) -> None:
        """Put the progress line, bar and Cancel button into ``bar`` (hidden until a run)."""
        for widget in (self.progress_label, self.progress, self.cancel_button):
            bar.addPermanentWidget(widget)
            widget.hide()

    def is_running(self) -> bool:
        """Whether a quick run is going."""
        return self._worker is not None

    def start(self) -> RunIdeaWorker | None:
        """Run the Rules section's text over the data folder on a worker and record the run.

        Refuses (with a dialog) when the rules have an error or are still the unedited
        starter template, the idea is not accepted for testing, no data folder is chosen, or
        the run would lie outside the pre-registration in force (the dialog offers to amend
        it with a reason).
        """
        window = self._window
        idea_id, catalogue = window.current_idea_id(), window.catalogue
        if self._worker is not None:
            window.status_message("A quick run is already going.")
            return None
        if idea_id is None or catalogue is None:
            window.show_error("No idea selected", "Select an accepted idea to run.")
            return None
        window.save_sections()
        if not window.rules.check():
            return None
        if is_starter(window.rules.text()):
            window.show_section("rules")
            window.show_error("Rules not written yet", STARTER_HINT[0].upper() + STARTER_HINT[1:]
                              + " (Ctrl+S), then press Ctrl+R.")
            return None
        idea = catalogue.idea(idea_id)
        if idea.stage not in RUNNABLE_STAGES:
            window.show_error("Not ready to run",
                              f"This idea is '{idea.stage}'; quick runs are for ideas that are "
                              f"{', '.join(RUNNABLE_STAGES)}. {RUN_ADVICE[idea.stage]}")
            return None
        if window.data_folder is None:
            window.show_error("No data folder", "Choose a data folder first (Data \u25b8 Data "
                              "folder\u2026), or drop one onto the window.")
            return None
        refusal = run_refusal(catalogue, idea.id, window.rules.text())
        if refusal is not None:
            window.status_message(refusal)
            self.refusal_box = offer_amendment(window, idea.id, window.rules.text(), refusal)
            self.failed.emit(refusal)
            return None
        # a Dask cluster chosen under File > Run sweeps on...; else this computer's runner
        runner = window.sweep_settings.runner() or window.sweep_runner
        worker = RunIdeaWorker(catalogue.path, idea.id, window.rules.text(),
                               window.data_folder, by=window.user, runner=runner)
        worker.signals.progress.connect(self._progress)
        worker.signals.confirm.connect(self._confirm)
        worker.signals.finished.connect(self._done)
        worker.signals.failed.connect(self._failed)
        worker.signals.cancelled.connect(self._cancelled)
        self._worker = worker
        self._set_running(True, idea.title)
        worker.start()
        self.started.emit()
        return worker

    def cancel(self) -> None:
        """Ask the quick run to stop (nothing is recorded)."""
        if self._worker is not None:
            self._worker.cancel()
            self.progress_label.setText("Cancelling\u2026")
            self.cancel_button.setEnabled(False)

    def update_actions(self) -> None:
        """Enable Quick run when an idea is shown and nothing runs; Cancel while it runs."""
        running = self._worker is not None
        self.run_action.setEnabled(not running and self._window.current_idea_id() is not None)
        self.cancel_action.setEnabled(running)

    def _set_running(self, running: bool, title: str = "") -> None:
        for widget in (self.progress_label, self.progress, self.cancel_button):
            widget.setVisible(running)
        self.cancel_button.setEnabled(running)
        self.progress.setRange(0, 0)
        self.progress_label.setText(f"Running \u201c{title}\u201d" if running else "")
        self.update_actions()

    def _progress(self, done: int, total: int) -> None:
        self.progress.setRange(0, max(total, 1))
        self.progress.setValue(done)

    def _confirm(self, estimate: Any) -> None:
        """Ask before a long or large sweep (the worker waits for the answer)."""
        worker = self._worker
        if worker is None:
            return
        answer = QMessageBox.question(
            self._window, "Run a large sweep?",
            f"This sweep: {estimate.describe()}.\n\nEvery set runs and counts as a trial. "
            "Run it now?", QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
            QMessageBox.StandardButton.No)
        worker.answer(answer == QMessageBox.StandardButton.Yes)

    def _end(self) -> RunIdeaWorker | None:
        worker, self._worker = self._worker, None
        self._set_running(False)
        return worker

    def _done(self, result: Any) -> None:
        window = self._window
        worker = self._end()
        run_id = int(result.run_id)
        idea_id = worker.idea_id if worker is not None else window.current_idea_id()
        assert window.catalogue is not None and idea_id is not None
        run = window.catalogue.run(run_id)
        label = verdict_text(run).label
        window.refresh_idea(idea_id)  # the Runs section lists the new run, the rules are saved
        if idea_id == window.current_idea_id():
            window.show_section("runs")
        sets = plural(len(result.summary.sets), "set")
        window.status_message(f"Run {run_id} recorded (rule revision "
                              f"{result.revision_number}, {sets}, "
                              f"in-sample up to {result.boundary}): {label}."
                              + _changes(result.summary))
        self.finished.emit(run_id)

    def _failed(self, message: str) -> None:
        self._end()
        self._window.show_error("The quick run stopped", message)
        self.failed.emit(message)

    def _cancelled(self) -> None:
        self._end()
        self._window.status_message("Quick run cancelled; nothing was recorded.")
        self.cancelled.emit()


def _changes(summary: Any) -> str:
    """The line saying which markets' data changed since the idea's last run ("" when none)."""
    changes = summary.data_changes
    return "" if changes is None else " " + changes.sentence()
