"""The Desk dialog (View menu, Ctrl+D): how many ideas the desk tested, its runs, trials and
promotions per period, and each promoted idea's Sharpe ratio haircut for the ideas tested
(Bonferroni, Holm, BHY; see :mod:`hunchbook.desk`), with the expected false promotions and a
plain explanation. The figures are computed on a worker (its own catalogue connection)."""

from __future__ import annotations

import html
from pathlib import Path
from typing import TYPE_CHECKING

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QFont, QGuiApplication
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.verdict import CAUTION
from hunchbook.desk import (
    EXPLANATIONS,
    PERIOD_HEADERS,
    PROMOTED_HEADERS,
    DeskReport,
    evidence_note,
    false_note,
    format_desk,
    headline,
    load_desk_report,
    period_cells,
    promoted_cells,
    total_cells,
)
from hunchbook.gui.workers import CallWorker
from hunchbook.store.desk import PERIODS

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow


class DeskDialog(QDialog):
    """The desk's multiple testing for the catalogue file ``path``.

    Attributes
    ----------
    report
        The :class:`~hunchbook.desk.DeskReport` shown (None until the worker has finished).
    period_box, period_table, promoted_table
        The period choice and the two tables.

    Signals
    -------
    report_shown(object)
        The figures of a period are shown (the report).
    """

    report_shown = Signal(object)

    def __init__(self, path: Path, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("deskDialog")
        self.setWindowTitle(f"Desk \u2014 {Path(path).name}")
        self._path = Path(path)
        self.report: DeskReport | None = None
        self._worker: CallWorker | None = None

        self.headline = QLabel(self)
        self.headline.setObjectName("deskHeadline")
        self.headline.setWordWrap(True)
        self.period_box = QComboBox(self)
        self.period_box.addItems([f"By {p}" for p in PERIODS])
        self.period_box.currentIndexChanged.connect(self.refresh)
        top = QHBoxLayout()
        top.addWidget(self.headline, 1)
        top.addWidget(self.period_box)

        self.period_table = _table(self, "deskPeriodTable", PERIOD_HEADERS, stretch=None)
        self.promoted_label = QLabel(self)
        self.promoted_label.setWordWrap(True)
        self.promoted_table = _table(self, "deskPromotedTable", PROMOTED_HEADERS, stretch=0)
        self.notes = QLabel(self)
        self.notes.setObjectName("deskNotes")
        self.notes.setWordWrap(True)
        self.notes.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        explained = "".join(f"<li><b>{html.escape(name)}</b>: {html.escape(text)}</li>"
                            for name, text in EXPLANATIONS)
        self.explanation = QLabel(f"<ul style='margin-left:-20px'>{explained}</ul>", self)
        self.explanation.setWordWrap(True)
        caution = QLabel(f"<small>Harvey &amp; Liu (2015), \u201cBacktesting\u201d, Journal of "
                         f"Portfolio Management 42(1). {html.escape(CAUTION)}</small>", self)
        caution.setWordWrap(True)

        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, self)
        self.copy_button = QPushButton("Copy report", self)
        self.copy_button.setAutoDefault(False)
        self.buttons.addButton(self.copy_button, QDialogButtonBox.ButtonRole.ActionRole)
        self.buttons.rejected.connect(self.reject)
        self.copy_button.clicked.connect(self.copy_report)

        layout = QVBoxLayout(self)
        layout.addLayout(top)
        layout.addWidget(self.period_table, 1)
        layout.addWidget(self.promoted_label)
        layout.addWidget(self.promoted_table, 1)
        layout.addWidget(self.notes)
        layout.addWidget(self.explanation)
        layout.addWidget(caution)
        layout.addWidget(self.buttons)
        self.resize(1000, 640)
        self.refresh()

    def period(self) -> str:
        """The period chosen (``year``, ``quarter`` or ``month``)."""
        return PERIODS[max(self.period_box.currentIndex(), 0)]

    def is_running(self) -> bool:
        """Whether the figures are being computed."""
        return self._worker is not None

    def refresh(self) -> None:
        """Compute the figures for the chosen period on a worker (ignored while one runs)."""
        if self._worker is not None:
            return
        worker = CallWorker(load_desk_report, self._path, self.period())
        worker.signals.finished.connect(self._show)
        worker.signals.failed.connect(self._failed)
        self._worker = worker
        self.headline.setText("Counting the desk's ideas, trials and promotions\u2026")
        self.period_box.setEnabled(False)
        self.copy_button.setEnabled(False)
        worker.start()

    def copy_report(self) -> None:
        """Put the report, as plain text, on the clipboard."""
        if self.report is not None:
            QGuiApplication.clipboard().setText(format_desk(self.report))

    def _show(self, report: DeskReport) -> None:
        self._worker = None
        self.period_box.setEnabled(True)
        self.period_box.setFocus()  # disabled while counting, it had lost the focus
        if report.summary.period != self.period():  # the period changed while it ran
            self.refresh()
            return
        self.report = report
        self.headline.setText(f"<b>{html.escape(headline(report))}</b>")
        rows = [period_cells(p) for p in report.summary.periods]
        _fill(self.period_table, [*rows, total_cells(report)], bold_last=True)
        if report.promoted:
            self.promoted_label.setText(
                f"<b>Promoted ideas</b>: Sharpe ratio haircut for M = {report.tests:,} ideas "
                "tested (haircut in brackets; hover for the adjusted p-values)")
        else:
            self.promoted_label.setText("<b>No idea has been promoted yet</b>: nothing to "
                                        "haircut.")
        _fill(self.promoted_table, [promoted_cells(p) for p in report.promoted])
        first = len(PROMOTED_HEADERS) - 3  # the three haircut columns
        for row, item in enumerate(report.promoted):
            for column in range(len(PROMOTED_HEADERS)):
                tip = item.problem or ""
                if item.haircut is not None and column >= first:
                    tip = (f"adjusted p-value "
                           f"{item.haircut.adjustments[column - first].p_value:.4f}")
                self.promoted_table.item(row, column).setToolTip(tip)
        self.notes.setText(f"{html.escape(evidence_note(report))}<br>"
                           f"<b>{html.escape(false_note(report))}</b>")
        self.copy_button.setEnabled(True)
        self.report_shown.emit(report)

    def _failed(self, message: str) -> None:
        self._worker = None
        self.period_box.setEnabled(True)
        self.headline.setText(f"<b>The desk figures could not be read:</b> "
                              f"{html.escape(message)}")


def open_desk_dialog(window: MainWindow) -> DeskDialog | None:
    """Open the Desk dialog on the window's catalogue (window-modal; figures on a worker)."""
    catalogue = window.need_catalogue()
    if catalogue is None:
        return None
    dialog = DeskDialog(catalogue.path, window)
    dialog.finished.connect(dialog.deleteLater)
    dialog.open()
    return dialog


def _table(parent: QWidget, name: str, headers: tuple[str, ...],
           stretch: int | None) -> QTableWidget:
    """A read-only table, columns as wide as their contents (column ``stretch`` takes the rest
    of the width)."""
    table = QTableWidget(0, len(headers), parent)
    table.setObjectName(name)
    table.setHorizontalHeaderLabels(list(headers))
    table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    table.setAlternatingRowColors(True)
    table.verticalHeader().setVisible(False)
    header = table.horizontalHeader()
    header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
    if stretch is not None:
        header.setSectionResizeMode(stretch, QHeaderView.ResizeMode.Stretch)
    return table


def _fill(table: QTableWidget, rows: list[tuple[str, ...]], *, bold_last: bool = False) -> None:
    table.setRowCount(len(rows))
    right = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
    for r, cells in enumerate(rows):
        for c, text in enumerate(cells):
            item = QTableWidgetItem(text)
            if c:
                item.setTextAlignment(right)
            if bold_last and r == len(rows) - 1:
                font = QFont(item.font())
                font.setBold(True)
                item.setFont(font)
            table.setItem(r, c, item)
