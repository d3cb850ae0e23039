"""The held-out years above a run's charts: locked (where the boundary stands, and the
"Unlock holdout…" button), or what the idea's one look at them found beside the in-sample
figures, who looked and when."""

from __future__ import annotations

from html import escape

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import QFrame, QHBoxLayout, QLabel, QPushButton, QVBoxLayout, QWidget

from hunchbook.core import formats
from hunchbook.core.presenter import (
    HOLDOUT_HEADERS,
    FigureRow,
    format_params,
    format_value,
    holdout_rows,
)
from hunchbook.store.records import HoldoutView, RunRecord

#: The button's text (also the Idea menu's action).
UNLOCK_TEXT = "Unlock holdout\u2026"


def _label(name: str) -> QLabel:
    label = QLabel()
    label.setObjectName(name)
    label.setTextFormat(Qt.TextFormat.PlainText)
    label.setWordWrap(True)
    label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    return label


class HoldoutPanel(QFrame):
    """What is known of the held-out years of the shown run's idea, in a few lines.

    Attributes
    ----------
    status, finding
        Where the boundary stands or who unlocked the years and when; the consistency test
        in words.
    figures
        The held-out figures, each with its in-sample value where it has one (see
        :meth:`cells`).
    unlock_button
        "Unlock holdout…", shown while the years are locked (disabled, with the reason as
        its tooltip, when they cannot be unlocked now).

    Signals
    -------
    unlock_requested()
        The button was pressed.
    """

    unlock_requested = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("holdoutPanel")
        self.setFrameShape(QFrame.Shape.StyledPanel)
        self.setAutoFillBackground(True)
        self.setBackgroundRole(QPalette.ColorRole.AlternateBase)
        self.status = _label("holdoutStatus")
        self.figures = _label("holdoutFigures")
        self.figures.setTextFormat(Qt.TextFormat.RichText)  # bold labels; values escaped
        self._cells: dict[tuple[str, str], str] = {}
        self.finding = _label("holdoutFinding")
        self.unlock_button = QPushButton(UNLOCK_TEXT)
        self.unlock_button.setObjectName("unlockHoldoutButton")
        self.unlock_button.clicked.connect(self.unlock_requested)
        lines = QVBoxLayout()
        lines.setSpacing(4)
        for widget in (self.status, self.figures, self.finding):
            lines.addWidget(widget)
        layout = QHBoxLayout(self)
        layout.setContentsMargins(8, 4, 8, 4)
        layout.addLayout(lines, 1)
        layout.addWidget(self.unlock_button, 0, Qt.AlignmentFlag.AlignVCenter)
        self.show_state(None, None, None)

    def show_state(self, run: RunRecord | None, view: HoldoutView | None,
                   problem: str | None) -> None:
        """Show the holdout of ``run``'s idea: ``view`` its unlocking (None: still locked) and
        ``problem`` why it cannot be unlocked now (None: it can). No run: nothing shown."""
        self.setVisible(run is not None)
        boundary = run.result.holdout_boundary if run is not None and run.result else None
        self.figures.setVisible(view is not None)
        self.finding.setVisible(view is not None)
        self.unlock_button.setVisible(run is not None and view is None and boundary is not None)
        self.unlock_button.setEnabled(problem is None)
        self.unlock_button.setToolTip(
            problem[0].upper() + problem[1:] + "." if problem else
            "Run the chosen set once on the held-out years; journalled, once per idea")
        if view is not None:
            f = view.figures
            also = ("" if run is None or view.run_id == run.id else
                    f" These figures continue run {view.run_id}, not the run shown.")
            self.status.setText(
                f"Held-out years {f.first_date} to {f.last_date}, unlocked by {view.seen_by} "
                f"on {formats.moment(view.seen_at)}: rule revision "
                f"{view.revision_number}, set {format_params(view.chosen_params)} (run "
                f"{view.run_id}).{also}")
            self._fill(holdout_rows(f, run.result.currency if run and run.result else ""))
            self.finding.setText(f.finding())
        elif boundary is None:
            self.status.setText("This run saw the whole history: nothing was held out of it.")
        else:
            self.status.setText(f"Held-out years locked: this run saw only the dates before "
                                f"{boundary} (the dashed line). They can be unlocked once for "
                                "this idea.")

    def cells(self) -> dict[tuple[str, str], str]:
        """The figures shown, by (column, figure label): columns are :data:`HOLDOUT_HEADERS`
        (a figure without an in-sample value has no in-sample cell)."""
        return dict(self._cells)

    def _fill(self, rows: list[FigureRow]) -> None:
        self._cells, parts = {}, []
        for row in rows:
            held = format_value(row.net, row.kind)
            self._cells[(HOLDOUT_HEADERS[1], row.label)] = held
            if row.gross is None:
                parts.append(f"<b>{escape(row.label)}</b> {escape(held)}")
                continue
            before = format_value(row.gross, row.kind)
            self._cells[(HOLDOUT_HEADERS[0], row.label)] = before
            parts.append(f"<b>{escape(row.label)}</b> {escape(held)} held out, "
                         f"{escape(before)} in-sample")
        self.figures.setText(" \u00b7 ".join(parts))
