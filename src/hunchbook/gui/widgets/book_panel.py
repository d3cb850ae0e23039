"""The run against the book in the results view: a small table of correlations with the promoted
ideas and their book, the book's Sharpe ratio without and with the run, and the bar chart."""

from __future__ import annotations

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QFont, QResizeEvent
from PySide6.QtWidgets import (
    QHeaderView,
    QLabel,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.book import BookComparison
from hunchbook.core.book_presenter import (
    BOOK_FIGURES,
    BOOK_HEADING,
    book_notes,
    book_rows,
    book_table,
    threshold_sentence,
)
from hunchbook.core.presenter import Table, format_value
from hunchbook.gui.charts.book import BookChart
from hunchbook.gui.widgets.read_only_table import read_only
from hunchbook.store.records import RunRecord

#: Shown for a run recorded before runs were compared with the book.
NOT_COMPARED = ("This run was not compared with the promoted ideas (it was recorded before "
                "the comparison existed). Run the idea again to see it.")
#: Height of the bar chart in the view: room for the title and axis, and per bar (pixels).
CHART_FRAME, CHART_ROW = 66, 26

Index = QModelIndex | QPersistentModelIndex


def unit_below(label: str) -> str:
    """A column label with its unit on a second line (``Net P&L (USD)`` -> ``Net P&L`` over
    ``(USD)``), so that a column is as narrow as its figures."""
    head, sep, unit = label.partition(" (")
    return f"{head}\n({unit}" if sep else label


class TableModel(QAbstractTableModel):
    """Read-only item model of a presenter :class:`~hunchbook.core.presenter.Table`: the name
    column, then the value columns formatted by kind, each column's note as its tooltip; rows in
    ``bold`` are shown in a bold font."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.table = Table("", (), ())
        self.bold: frozenset[int] = frozenset()

    def set_table(self, table: Table, bold: frozenset[int] = frozenset()) -> None:
        """Replace the table."""
        self.beginResetModel()
        self.table, self.bold = table, bold
        self.endResetModel()

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802 (Qt override)
        return 0 if parent.isValid() else len(self.table.rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else 1 + len(self.table.columns)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole):
        if orientation != Qt.Orientation.Horizontal or not 0 <= section <= len(
                self.table.columns):
            return None
        column = self.table.columns[section - 1] if section else None
        if role == Qt.ItemDataRole.DisplayRole:
            return self.table.head if column is None else unit_below(column.label)
        if role == Qt.ItemDataRole.ToolTipRole and column is not None:
            return column.note or None
        return None

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole):
        if not index.isValid() or not 0 <= index.row() < len(self.table.rows):
            return None
        name, values = self.table.rows[index.row()]
        col = index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            if col == 0:
                return name
            return format_value(values[col - 1], self.table.columns[col - 1].kind)
        if role == Qt.ItemDataRole.ToolTipRole:
            return name if col == 0 else self.table.columns[col - 1].note or None
        if role == Qt.ItemDataRole.FontRole and index.row() in self.bold:
            font = QFont()
            font.setBold(True)
            return font
        if role == Qt.ItemDataRole.TextAlignmentRole and col:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None


class BookPanel(QWidget):
    """The shown run against the book: heading, table, Sharpe line, notes and ``chart`` (the
    :class:`BookChart` of the view's :class:`~hunchbook.gui.charts.result_charts.ResultCharts`,
    placed here)."""

    def __init__(self, chart: BookChart, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.heading = QLabel(BOOK_HEADING)
        font = QFont(self.heading.font())
        font.setBold(True)
        self.heading.setFont(font)
        self.model = TableModel(self)
        self.table = read_only(QTableView())
        self.table.setModel(self.model)
        self.table.setTextElideMode(Qt.TextElideMode.ElideRight)
        self.table.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
        self.sharpe = QLabel()
        self.sharpe.setWordWrap(True)
        self.sharpe.setToolTip(" ".join(f.note for f in BOOK_FIGURES))
        self.notes = QLabel()
        self.notes.setWordWrap(True)
        self.notes.setTextFormat(Qt.TextFormat.PlainText)
        self.chart = chart
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(4)
        for widget in (self.heading, self.table, self.sharpe, self.chart, self.notes):
            layout.addWidget(widget)
        self.book: BookComparison | None = None

    def hasHeightForWidth(self) -> bool:  # noqa: N802 (Qt override)
        """False: the panel's wrapped lines would make the whole scrolled column take its
        preferred heights (the sweep chart below would grow past the window); the panel sets
        its own height from its width instead (:meth:`resizeEvent`)."""
        return False

    def resizeEvent(self, event: QResizeEvent) -> None:  # noqa: N802 (Qt override)
        """Keep the height the wrapped lines need at this width."""
        super().resizeEvent(event)
        self._fit_height()

    def _fit_height(self) -> None:
        layout = self.layout()
        height = layout.heightForWidth(self.width()) if self.width() > 0 else -1
        if height > 0 and height != self.minimumHeight():
            self.setMinimumHeight(height)

    def show_run(self, run: RunRecord | None) -> None:
        """Show a run's comparison (None: no run, the panel is hidden)."""
        self.setVisible(run is not None)
        book = run.result.book if run is not None and run.result is not None else None
        self.book = book
        table = book_table(book) if book is not None else Table("", (), ())
        bold = frozenset() if book is None else frozenset(
            i for i, (_, values) in enumerate(table.rows)
            if values[0] is not None and values[0] > book.threshold)
        self.model.set_table(table, bold)
        header = self.table.horizontalHeader()
        for col in range(1, self.model.columnCount()):
            header.setSectionResizeMode(col, QHeaderView.ResizeMode.ResizeToContents)
        self.table.resizeRowsToContents()
        rows = sum(self.table.rowHeight(r) for r in range(self.model.rowCount()))
        self.table.setFixedHeight(rows + header.sizeHint().height() + 2 * self.table.frameWidth())
        self.table.setVisible(bool(table.rows))
        self.sharpe.setText(_sharpe_text(book))
        self.sharpe.setVisible(book is not None and book.book_ideas > 0)
        self.chart.setFixedHeight(CHART_FRAME + CHART_ROW * max(len(self.chart.labels), 2))
        self.chart.setVisible(self.chart.has_data)
        notes = NOT_COMPARED if book is None else " ".join(
            [*book_notes(book), *([threshold_sentence(book)] if book.ideas else [])])
        self.notes.setText(notes)
        self.table.setToolTip(None if book is None else threshold_sentence(book))
        self._fit_height()


def _sharpe_text(book: BookComparison | None) -> str:
    """The book's Sharpe ratio without and with the run, in one line."""
    if book is None or not book.book_ideas:
        return ""
    before, after, change = (format_value(r.net, r.kind) for r in book_rows(book))
    return (f"Book Sharpe {before} without this run, {after} with it at equal risk "
            f"(change {change}).")
