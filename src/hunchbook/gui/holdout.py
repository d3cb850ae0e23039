"""The window's holdout: "Unlock holdout…" (Idea menu, and the button beside a run's results)
and "Holdout boundary…" (Data menu).

Unlocking reads the data folder's held-out dates on a worker, asks the person to confirm (who,
the rule revision, the chosen set, the dates), then runs
:func:`hunchbook.services.unlock_holdout` on a worker; nothing of it runs on the UI thread.
Each worker opens its own catalogue connection (see :mod:`hunchbook.gui.workers`).
"""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QObject, Signal

from hunchbook.core.errors import HunchbookError
from hunchbook.gui.actions import make_action
from hunchbook.gui.feedback import one_line
from hunchbook.gui.widgets.holdout_dialogs import BoundaryDialog, UnlockDialog
from hunchbook.gui.widgets.holdout_panel import UNLOCK_TEXT
from hunchbook.gui.workers import CallWorker

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow
    from hunchbook.services import HoldoutPlan


def plan_unlock(catalogue_path: str | os.PathLike[str], idea_id: int,
                data_folder: str | os.PathLike[str]) -> HoldoutPlan:
    """What unlocking the idea's holdout would run, with the held-out dates of the data
    folder (on a worker: its own catalogue connection)."""
    from hunchbook.catalogue import Catalogue
    from hunchbook.services import holdout_plan

    with Catalogue(catalogue_path, create=False) as catalogue:
        return holdout_plan(catalogue, idea_id, data_folder)


def unlock(catalogue_path: str | os.PathLike[str], idea_id: int,
           data_folder: str | os.PathLike[str], by: str) -> Any:
    """Unlock the idea's holdout (on a worker: its own catalogue connection); returns the
    :class:`~hunchbook.store.records.HoldoutView`."""
    from hunchbook.catalogue import Catalogue
    from hunchbook.services import unlock_holdout

    with Catalogue(catalogue_path, create=False) as catalogue:
        return unlock_holdout(catalogue, idea_id, data_folder, by=by)


class HoldoutActions(QObject):
    """Unlocking an idea's held-out years and moving the catalogue's boundary.

    Attributes
    ----------
    unlock_action, boundary_action
        "Unlock holdout…" and "Holdout boundary…" for the menus.
    dialog
        The confirmation or boundary dialog last opened (for tests), or None.

    Signals
    -------
    unlocked(int)
        The idea's held-out years were unlocked and recorded (its id).
    failed(str)
        Unlocking stopped with this one-line message (nothing recorded).
    boundary_set(str)
        The catalogue's boundary was moved to this date (``YYYY-MM-DD``).
    """

    unlocked = Signal(int)
    failed = Signal(str)
    boundary_set = Signal(str)

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self._window = window
        self._worker: CallWorker | None = None
        self.dialog: UnlockDialog | BoundaryDialog | None = None
        self.unlock_action = make_action(
            window, UNLOCK_TEXT, self.unlock, None,
            "Run the idea's chosen set once on its held-out years (journalled, once per idea)")
        self.boundary_action = make_action(
            window, "Holdout boundary\u2026", self.open_boundary_dialog, None,
            "See or move the catalogue's holdout boundary (a reason is required)")

    def is_running(self) -> bool:
        """Whether an unlocking (or the reading of its dates) is going."""
        return self._worker is not None

    def update_actions(self) -> None:
        """Enable unlocking when an idea is shown and nothing is going."""
        self.unlock_action.setEnabled(self._worker is None
                                      and self._window.current_idea_id() is not None)
        self.boundary_action.setEnabled(self._window.catalogue is not None)

    def unlock(self) -> CallWorker | None:
        """Unlock the shown idea's held-out years: read their dates on a worker, then ask for
        confirmation (:attr:`dialog`); refused with a dialog saying why when it cannot be."""
        window = self._window
        idea_id, catalogue = window.current_idea_id(), window.catalogue
        if self._worker is not None:
            window.status_message("The holdout is being unlocked already.")
            return None
        if idea_id is None or catalogue is None:
            window.show_error("No idea selected", "Select an idea with a run first.")
            return None
        problem = catalogue.unlock_problem(idea_id)
        if problem is not None:
            window.show_error("Holdout not unlocked", problem[0].upper() + problem[1:] + ".")
            return None
        if window.data_folder is None:
            window.show_error("No data folder", "Choose the data folder the idea's runs were "
                              "made on first (Data \u25b8 Data folder\u2026).")
            return None
        title = catalogue.idea(idea_id).title
        worker = CallWorker(plan_unlock, catalogue.path, idea_id, window.data_folder)
        worker.signals.finished.connect(lambda plan: self._confirm(plan, title))
        worker.signals.failed.connect(self._failed)
        return self._start(worker, "Reading the held-out dates\u2026")

    def _start(self, worker: CallWorker, message: str) -> CallWorker:
        self._worker = worker
        self.update_actions()
        self._window.status_message(message)
        worker.start()
        return worker

    def _end(self) -> None:
        self._worker = None
        self.update_actions()

    def _confirm(self, plan: HoldoutPlan, title: str) -> None:
        self._end()
        window = self._window
        dialog = UnlockDialog(plan, title=title, user=window.user, parent=window)
        dialog.accepted.connect(lambda: self._run(plan, title))
        dialog.finished.connect(dialog.deleteLater)
        self.dialog = dialog
        dialog.open()

    def _run(self, plan: HoldoutPlan, title: str) -> None:
        window = self._window
        if window.catalogue is None or window.data_folder is None:
            return
        worker = CallWorker(unlock, window.catalogue.path, plan.idea_id, window.data_folder,
                            window.user)
        worker.signals.finished.connect(self._done)
        worker.signals.failed.connect(self._failed)
        self._start(worker, f"Unlocking the held-out years of \u201c{title}\u201d\u2026")

    def _done(self, view: Any) -> None:
        self._end()
        window = self._window
        window.refresh_idea(view.idea_id)
        if view.idea_id == window.current_idea_id():
            window.show_section("runs")
        f = view.figures
        window.status_message(f"Held-out years of idea {view.idea_id} unlocked: net Sharpe "
                              f"{f.net_sharpe:.2f} held out against {f.in_sample_net_sharpe:.2f} "
                              "in-sample (journalled).")
        self.unlocked.emit(view.idea_id)

    def _failed(self, message: str) -> None:
        self._end()
        self._window.show_error("Holdout not unlocked", message)
        self.failed.emit(message)

    def open_boundary_dialog(self) -> BoundaryDialog | None:
        """Show the catalogue's holdout boundary and move it (window-modal; a reason is
        required, and the change is journalled)."""
        catalogue = self._window.need_catalogue()
        if catalogue is None:
            return None
        dialog = BoundaryDialog(catalogue.holdout_boundary(), self._window)
        dialog.accepted.connect(lambda: self.set_boundary(dialog))
        dialog.finished.connect(dialog.deleteLater)
        self.dialog = dialog
        dialog.open()
        return dialog

    def set_boundary(self, dialog: BoundaryDialog) -> bool:
        """Write the boundary the dialog holds, with its reason."""
        window = self._window
        if window.catalogue is None:
            return False
        try:
            setting = window.catalogue.set_holdout_boundary(
                dialog.boundary(), by=window.user, reason=dialog.reason_text())
        except HunchbookError as exc:
            window.show_error("Boundary not set", one_line(exc))
            return False
        idea_id = window.current_idea_id()
        if idea_id is not None:
            window.refresh_idea(idea_id)
        window.status_message(f"Holdout boundary set to {setting.boundary} (journalled).")
        self.boundary_set.emit(setting.boundary.isoformat())
        return True


__all__ = ["HoldoutActions", "plan_unlock", "unlock"]
