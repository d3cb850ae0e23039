"""Long work off the UI thread: QRunnable workers on the global QThreadPool.

Only plain data crosses the thread boundary: arguments go in, a result object comes out
through ``finished``. A worker never touches widgets or models, and never uses the window's
:class:`~hunchbook.catalogue.Catalogue` (SQLite connections belong to their thread): it opens
its own from the path. Signals live on a separate QObject (a QRunnable is not one) created on
the UI thread, so their slots run there (queued).

Every worker ends with exactly one of ``finished(result)``, ``failed(message)`` or
``cancelled()``. ``failed`` carries one line: the message of a
:class:`~hunchbook.core.errors.HunchbookError` (bad rules, data, a catalogue refusal), or the
kind and message of an unexpected error (whose traceback goes to the log).
"""

from __future__ import annotations

import logging
import os
import threading
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.collector import collect_on_ui_thread

if TYPE_CHECKING:
    from hunchbook.core.stats import FirstPassStats
    from hunchbook.core.sweep import SweepRunner

_log = logging.getLogger("hunchbook.gui")

#: Workers started and not yet ended (kept so that Python does not collect them early).
_RUNNING: set[Worker] = set()


class WorkerSignals(QObject):
    """What a worker reports: ``started``, ``progress(done, total)``, perhaps
    ``confirm(estimate)`` (a question for a person, answered with :meth:`Worker.answer`), then
    one of ``finished(result)``, ``failed(message)``, ``cancelled``."""

    started = Signal()
    progress = Signal(int, int)
    confirm = Signal(object)
    finished = Signal(object)
    failed = Signal(str)
    cancelled = Signal()


class Worker(QRunnable):
    """Runs :meth:`work` on the thread pool and reports through :attr:`signals`.

    Subclasses implement ``work(self) -> object``; they call :meth:`report_progress` and
    poll :meth:`is_cancelled` (or pass it on as a cancel check).
    """

    def __init__(self) -> None:
        super().__init__()
        self.setAutoDelete(False)
        self.signals = WorkerSignals()
        self._cancel = threading.Event()
        self._answered = threading.Event()
        self._yes = False
        self.done = threading.Event()

    def start(self, pool: QThreadPool | None = None) -> None:
        """Queue the worker on ``pool`` (default: the global pool)."""
        collect_on_ui_thread()
        _RUNNING.add(self)
        (pool or QThreadPool.globalInstance()).start(self)

    def cancel(self) -> None:
        """Ask the work to stop at its next check (safe from any thread)."""
        self._cancel.set()

    def is_cancelled(self) -> bool:
        """Whether :meth:`cancel` was called."""
        return self._cancel.is_set()

    def ask(self, question: object) -> bool:
        """Emit ``confirm(question)`` and wait for :meth:`answer` (callable from the work); a
        no, or a cancel while waiting, cancels the work."""
        self._answered.clear()
        self.signals.confirm.emit(question)
        while not self._answered.wait(0.05):
            if self.is_cancelled():
                return False
        if not self._yes:
            self.cancel()
        return self._yes

    def answer(self, yes: bool) -> None:
        """Answer the question of :meth:`ask` (safe from any thread)."""
        self._yes = bool(yes)
        self._answered.set()

    def report_progress(self, done: int, total: int) -> None:
        """Emit ``progress(done, total)`` (callable from the work)."""
        self.signals.progress.emit(int(done), int(total))

    def work(self) -> object:
        """The work itself, run on a pool thread; returns the result."""
        return None

    def run(self) -> None:
        """QRunnable entry point: run :meth:`work` and emit how it ended."""
        try:
            self.signals.started.emit()
            try:
                result = self.work()
            except HunchbookError as exc:
                if self.is_cancelled():
                    self.signals.cancelled.emit()
                else:
                    self.signals.failed.emit(_first_line(str(exc)) or type(exc).__name__)
            except Exception as exc:  # an unexpected error: log it whole, report one line
                _log.exception("Worker %s failed", type(self).__name__)
                self.signals.failed.emit(f"{type(exc).__name__}: {_first_line(str(exc))}")
            else:
                if self.is_cancelled():
                    self.signals.cancelled.emit()
                else:
                    self.signals.finished.emit(result)
        finally:
            self.done.set()
            _RUNNING.discard(self)


class CallWorker(Worker):
    """Runs one function with its arguments (plain data in, plain data out)."""

    def __init__(self, function: Callable[..., Any], *args: Any, **kwargs: Any) -> None:
        super().__init__()
        self._call = (function, args, kwargs)

    def work(self) -> object:
        function, args, kwargs = self._call
        return function(*args, **kwargs)


class DemoDeskWorker(Worker):
    """Prepares a working copy of the demo desk in ``dest`` (built into the user cache first
    when this version has none, with progress); ``finished`` carries (catalogue, data)."""

    def __init__(self, dest: str | os.PathLike[str]) -> None:
        super().__init__()
        self.dest = Path(dest)

    def work(self) -> object:
        from hunchbook.demo.build import prepare_demo

        return prepare_demo(self.dest, progress=self.report_progress)


class RunIdeaWorker(Worker):
    """A quick run of an idea: :func:`hunchbook.services.run_idea` on its own catalogue
    connection; ``finished`` carries the :class:`~hunchbook.services.IdeaRun`.

    Parameters
    ----------
    catalogue_path
        The catalogue file (the worker opens and closes its own connection).
    idea_id, rule_text, data_folder, by
        As in :func:`~hunchbook.services.run_idea`.
    runner
        Where the sweep runs (default: :func:`~hunchbook.core.sweep.run_sweep`'s).
    """

    def __init__(self, catalogue_path: str | os.PathLike[str], idea_id: int, rule_text: str,
                 data_folder: str | os.PathLike[str], *, by: str,
                 runner: SweepRunner | None = None) -> None:
        super().__init__()
        self.catalogue_path = Path(catalogue_path)
        self.idea_id = idea_id
        self.rule_text = rule_text
        self.data_folder = Path(data_folder)
        self.by = by
        self.runner = runner

    def work(self) -> object:
        from hunchbook.catalogue import Catalogue
        from hunchbook.services import run_idea

        with Catalogue(self.catalogue_path, create=False) as catalogue:
            return run_idea(catalogue, self.idea_id, self.rule_text, self.data_folder,
                            by=self.by, runner=self.runner, progress=self.report_progress,
                            cancel=self.is_cancelled, confirm=self.ask)


def set_curves(rule_text: str, data_folder: str | os.PathLike[str],
               params: dict[str, float], boundary: str | None = None,
               sweep: FirstPassStats | None = None) -> tuple[dict[str, float], Any, Any]:
    """Run one parameter set of a rule file over a data folder, on the dates before the
    holdout ``boundary`` (``YYYY-MM-DD``; None: the whole history); returns
    ``(params, daily, verdict)`` with ``daily`` the set's daily portfolio P&L (for a results
    view's curves) and ``verdict`` the set judged as picked out of the run whose statistics
    are ``sweep`` (with all its trials, never as one; None without them)."""
    import datetime as dt

    from hunchbook.api import Study

    before = None if boundary is None else dt.date.fromisoformat(boundary)
    study = Study.from_text(rule_text, data_folder, before=before)
    result = study.run_set(study.parameter_sets(params)[0])
    daily = result.portfolio
    verdict = None
    if sweep is not None and len(daily) >= 3:
        from hunchbook.core.stats import judge_pick
        from hunchbook.core.verdict import decide

        verdict = decide(judge_pick(daily["gross_pnl"].to_numpy(), daily["cost"].to_numpy(),
                                    sweep))
    return dict(result.params), daily, verdict


def _first_line(text: str) -> str:
    return next((line.strip() for line in text.splitlines() if line.strip()), "")
