"""The data folder check report: each market's price file checked on a worker thread, shown as
a table with a summary line and a button that copies the report as text."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import (
    QAbstractTableModel,
    QModelIndex,
    QObject,
    QPersistentModelIndex,
    QRunnable,
    Qt,
    QThreadPool,
    Signal,
)
from PySide6.QtGui import QColor, QGuiApplication, QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QHeaderView,
    QLabel,
    QProgressBar,
    QPushButton,
    QTableView,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.data_check import (
    ERROR,
    EXTRA,
    MISSING,
    OK,
    DataCheckReport,
    MarketCheck,
    check_data_folder,
    format_data_check,
    report_cells,
)
from hunchbook.gui.collector import collect_on_ui_thread

#: Column headers, in the order of :func:`~hunchbook.core.data_check.report_cells`.
HEADERS = ("Market", "File", "Rows", "Contracts", "First", "Last", "Status", "Message")
COL_STATUS = HEADERS.index("Status")
COL_MESSAGE = HEADERS.index("Message")
_NUMERIC = {HEADERS.index("Rows"), HEADERS.index("Contracts")}
#: Column headers of the quality findings table.
FINDING_HEADERS = ("Severity", "Market", "Check", "Rows", "Finding")
#: Status cell tints (translucent, so they read on light and dark palettes).
_TINTS = {OK: QColor(40, 170, 70, 60), ERROR: QColor(220, 40, 40, 70),
          MISSING: QColor(220, 40, 40, 70), EXTRA: QColor(230, 160, 20, 70)}

Index = QModelIndex | QPersistentModelIndex


def detail_text(check: MarketCheck) -> str:
    """What an ok market's message cell says: its continuous series and optional columns."""
    parts = []
    if check.series_days is not None:
        parts.append(f"continuous series of {check.series_days:,} days with the default roll")
    if check.rows is not None:
        parts.append(f"optional columns: {', '.join(check.columns) or 'none'}")
    return "; ".join(parts)


class DataCheckModel(QAbstractTableModel):
    """One row per market or price file of a :class:`DataCheckReport`."""

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._checks: tuple[MarketCheck, ...] = ()
        self._cells: list[tuple[str, ...]] = []

    def set_report(self, report: DataCheckReport | None) -> None:
        """Show a report (None: empty)."""
        self.beginResetModel()
        self._checks = () if report is None else report.markets
        self._cells = [report_cells(c) for c in self._checks]
        self.endResetModel()

    def check(self, row: int) -> MarketCheck:
        """The check shown on a row."""
        return self._checks[row]

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._checks)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(HEADERS)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole:
            return HEADERS[section]
        return None

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid() or index.row() >= len(self._checks):
            return None
        check, column = self._checks[index.row()], index.column()
        text = self._cells[index.row()][column]
        if column == COL_MESSAGE and not text:
            text = detail_text(check)
        if role == Qt.ItemDataRole.DisplayRole:
            return text
        if role == Qt.ItemDataRole.ToolTipRole and column == COL_MESSAGE:
            return text or None
        if role == Qt.ItemDataRole.BackgroundRole and column == COL_STATUS:
            return _TINTS[check.status]
        if role == Qt.ItemDataRole.ForegroundRole and column == COL_MESSAGE and check.status == OK:
            return QGuiApplication.palette().color(QPalette.ColorRole.PlaceholderText)
        if role == Qt.ItemDataRole.TextAlignmentRole and column in _NUMERIC:
            return Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        return None


class _CheckSignals(QObject):
    """Signals of a check worker (a QRunnable is not a QObject)."""

    progress = Signal(int, int)
    returned = Signal(object)
    errored = Signal(str)


class _CheckWorker(QRunnable):
    """Runs :func:`check_data_folder` off the UI thread; only the folder path goes in and only
    the (frozen) report comes out."""

    def __init__(self, folder: str) -> None:
        super().__init__()
        self.setAutoDelete(False)  # the dialog holds it until it reports
        self.folder = folder
        self.signals = _CheckSignals()

    def run(self) -> None:
        try:
            report = check_data_folder(self.folder, progress=self.signals.progress.emit)
        except Exception as err:  # a bug, not bad data (problems are in the report): tell the UI
            self.signals.errored.emit(f"{type(err).__name__}: {err}")
            return
        self.signals.returned.emit(report)


class DataCheckDialog(QDialog):
    """Check a data folder on a worker and show the report; Copy report puts it as text on
    the clipboard."""

    #: Emitted with the report when a check has finished.
    check_finished = Signal(object)

    def __init__(self, folder: Path, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("dataCheckDialog")
        self.setWindowTitle(f"Data folder check \u2014 {Path(folder).name}")
        self._folder = Path(folder)
        self.report: DataCheckReport | None = None
        self._worker: _CheckWorker | None = None

        heading = QLabel(f"<b>{self._folder}</b>", self)
        heading.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.summary_label = QLabel(self)
        self.summary_label.setObjectName("summaryLabel")
        self.summary_label.setWordWrap(True)
        self.summary_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.progress_bar = QProgressBar(self)
        self.progress_bar.setTextVisible(True)

        self.model = DataCheckModel(self)
        self.table = QTableView(self)
        self.table.setObjectName("dataCheckTable")
        self.table.setModel(self.model)
        self.table.setAlternatingRowColors(True)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setWordWrap(False)
        self.table.verticalHeader().setVisible(False)
        rows = self.table.verticalHeader()
        rows.setSectionResizeMode(QHeaderView.ResizeMode.Fixed)
        rows.setDefaultSectionSize(self.table.fontMetrics().height() + 10)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(COL_MESSAGE, QHeaderView.ResizeMode.Stretch)

        self.findings_table = QTableWidget(0, len(FINDING_HEADERS), self)
        self.findings_table.setObjectName("dataQualityTable")
        self.findings_table.setHorizontalHeaderLabels(FINDING_HEADERS)
        self.findings_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.findings_table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.findings_table.verticalHeader().setVisible(False)
        found_header = self.findings_table.horizontalHeader()
        found_header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        found_header.setSectionResizeMode(len(FINDING_HEADERS) - 1,
                                          QHeaderView.ResizeMode.Stretch)
        self.findings_table.hide()

        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, self)
        self.copy_button = QPushButton("Copy report", self)
        self.rerun_button = QPushButton("Check again", self)
        for button in (self.copy_button, self.rerun_button):
            button.setAutoDefault(False)
            self.buttons.addButton(button, QDialogButtonBox.ButtonRole.ActionRole)
        self.buttons.rejected.connect(self.reject)
        self.copy_button.clicked.connect(self.copy_report)
        self.rerun_button.clicked.connect(self.start_check)

        layout = QVBoxLayout(self)
        layout.addWidget(heading)
        layout.addWidget(self.summary_label)
        layout.addWidget(self.progress_bar)
        layout.addWidget(self.table, 1)
        layout.addWidget(self.findings_table, 1)
        layout.addWidget(self.buttons)
        self.resize(1100, 400)
        self.start_check()

    def is_running(self) -> bool:
        """Whether a check is under way."""
        return self._worker is not None

    def start_check(self) -> None:
        """Check the folder again on the global thread pool (ignored while one runs)."""
        if self._worker is not None:
            return
        worker = _CheckWorker(str(self._folder))
        worker.signals.progress.connect(self._on_progress)
        worker.signals.returned.connect(self._on_returned)
        worker.signals.errored.connect(self._on_errored)
        self._worker = worker
        self.summary_label.setText("Checking the market library and price files\u2026")
        self.progress_bar.setRange(0, 0)
        self.progress_bar.show()
        self.copy_button.setEnabled(False)
        self.rerun_button.setEnabled(False)
        collect_on_ui_thread()
        QThreadPool.globalInstance().start(worker)

    def copy_report(self) -> None:
        """Put the report, as plain text, on the clipboard."""
        if self.report is not None:
            QGuiApplication.clipboard().setText(format_data_check(self.report))

    def _on_progress(self, done: int, total: int) -> None:
        self.progress_bar.setRange(0, total)
        self.progress_bar.setValue(done)
        self.progress_bar.setFormat(f"{done} of {total} files")

    def _on_returned(self, report: DataCheckReport) -> None:
        self._worker = None
        self.report = report
        self.model.set_report(report)
        self._show_findings(report)
        self.progress_bar.hide()
        self.summary_label.setText(f"<b>{_escape(report.summary)}</b>")
        self.summary_label.setToolTip(report.problem or None)
        self.copy_button.setEnabled(True)
        self.rerun_button.setEnabled(True)
        self.check_finished.emit(report)

    def _show_findings(self, report: DataCheckReport) -> None:
        """The quality checks' findings, one row each (hidden when there are none)."""
        findings = report.findings
        self.findings_table.setRowCount(len(findings))
        for row, finding in enumerate(findings):
            cells = (finding.severity, finding.market, finding.name, finding.rows,
                     finding.message)
            for column, text in enumerate(cells):
                item = QTableWidgetItem(text)
                item.setToolTip(text)
                if column == 0:
                    item.setBackground(_TINTS[ERROR if finding.severity == ERROR else EXTRA])
                self.findings_table.setItem(row, column, item)
        self.findings_table.setVisible(bool(findings))

    def _on_errored(self, message: str) -> None:
        self._worker = None
        self.progress_bar.hide()
        self.summary_label.setText(
            f"<b>The check stopped with an internal error:</b> {_escape(message)}")
        self.rerun_button.setEnabled(True)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
