"""The holdout's two dialogs: confirming an idea's one unlocking (who, which revision, which
set, which dates) and moving the catalogue's boundary (a date and a reason, both required)."""

from __future__ import annotations

import datetime as dt
from typing import TYPE_CHECKING

from PySide6.QtCore import QDate
from PySide6.QtWidgets import (
    QDateEdit,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QPlainTextEdit,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core import formats
from hunchbook.core.presenter import format_params
from hunchbook.store.records import HoldoutBoundary

if TYPE_CHECKING:  # the services (and the engine) load when a holdout is unlocked
    from hunchbook.services import HoldoutPlan


def _dates(plan: HoldoutPlan) -> str:
    if plan.held_out_days is None:
        return f"from {plan.boundary} to the end of the data"
    return f"{plan.first_held} to {plan.last_held} ({plan.held_out_days:,} days)"


class UnlockDialog(QDialog):
    """Asks a person to confirm unlocking an idea's held-out years (Cancel is the default)."""

    def __init__(self, plan: HoldoutPlan, *, title: str, user: str,
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("unlockHoldoutDialog")
        self.setWindowTitle("Unlock the held-out years")
        self.setMinimumWidth(480)
        self.plan = plan
        intro = QLabel(f"Run the pre-registered chosen set of \u201c{title}\u201d once on its "
                       "held-out years? This is done once for this idea: it is journalled, and "
                       "every later run of the idea will say \u201cHoldout already seen\u201d.")
        intro.setWordWrap(True)
        form = QFormLayout()
        self.facts = {
            "Who": user,
            "Rules": f"revision {plan.revision_number} (of run {plan.run_id})",
            "Chosen set": format_params(plan.chosen_params),
            "Held-out dates": _dates(plan),
        }
        for label, text in self.facts.items():
            value = QLabel(text)
            value.setWordWrap(True)
            form.addRow(f"{label}:", value)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Cancel)
        self.unlock_button = self.buttons.addButton(
            "Unlock once", QDialogButtonBox.ButtonRole.AcceptRole)
        self.unlock_button.setObjectName("confirmUnlockButton")
        self.unlock_button.setAutoDefault(False)
        self.buttons.button(QDialogButtonBox.StandardButton.Cancel).setDefault(True)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(intro)
        layout.addLayout(form)
        layout.addWidget(self.buttons)


class BoundaryDialog(QDialog):
    """Shows the catalogue's holdout boundary and moves it: a new date and, required, the
    reason (both journalled)."""

    def __init__(self, current: HoldoutBoundary | None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("holdoutBoundaryDialog")
        self.setWindowTitle("Holdout boundary")
        self.setMinimumWidth(480)
        self.current = current
        now = (f"Now: {current.boundary}, set by {current.set_by} on "
               f"{formats.date(current.set_at)}: {current.reason}" if current is not None else
               "No boundary yet: the first quick run sets the default, which holds out the "
               "last 20 % of the data folder's common history.")
        self.now = QLabel(now)
        self.now.setWordWrap(True)
        self.date = QDateEdit()
        self.date.setObjectName("boundaryDate")
        self.date.setCalendarPopup(True)
        self.date.setDisplayFormat("yyyy-MM-dd")
        start = current.boundary if current is not None else dt.date.today()
        self.date.setDate(QDate(start.year, start.month, start.day))
        self.reason = QPlainTextEdit()
        self.reason.setObjectName("boundaryReason")
        self.reason.setPlaceholderText("Why the boundary moves (required; journalled)")
        self.reason.setFixedHeight(72)
        note = QLabel("Runs see only the dates before the boundary. An idea whose runs saw "
                      "dates on or after a new, earlier boundary can no longer unlock its "
                      "holdout.")
        note.setWordWrap(True)
        form = QFormLayout()
        form.addRow("New boundary:", self.date)
        form.addRow("Reason:", self.reason)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Cancel)
        self.set_button = self.buttons.addButton("Set boundary",
                                                 QDialogButtonBox.ButtonRole.AcceptRole)
        self.set_button.setObjectName("setBoundaryButton")
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        self.date.dateChanged.connect(self._update)
        self.reason.textChanged.connect(self._update)
        layout = QVBoxLayout(self)
        layout.addWidget(self.now)
        layout.addLayout(form)
        layout.addWidget(note)
        layout.addWidget(self.buttons)
        self._update()

    def boundary(self) -> dt.date:
        """The date chosen."""
        return dt.date.fromisoformat(self.date.date().toString("yyyy-MM-dd"))

    def reason_text(self) -> str:
        """The reason typed, without surrounding blanks."""
        return self.reason.toPlainText().strip()

    def _update(self) -> None:
        same = self.current is not None and self.boundary() == self.current.boundary
        self.set_button.setEnabled(bool(self.reason_text()) and not same)
