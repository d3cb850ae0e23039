"""Item model of a figures table: one row per figure, gross and net columns."""

from __future__ import annotations

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt

from hunchbook.gui.charts.run_figures import FigureRow, format_value

#: Columns.
COL_LABEL, COL_GROSS, COL_NET = range(3)
HEADERS = ("Figure", "Gross", "Net")
#: Role holding a value cell's number (float or None), unformatted.
ValueRole = Qt.ItemDataRole.UserRole + 1

Index = QModelIndex | QPersistentModelIndex


class FiguresModel(QAbstractTableModel):
    """Read-only table of :class:`FigureRow` rows; display text formatted, numbers in
    ``ValueRole``, each figure's explanation as its tooltip."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self._rows: list[FigureRow] = []

    def set_rows(self, rows: list[FigureRow]) -> None:
        """Replace every row."""
        self.beginResetModel()
        self._rows = list(rows)
        self.endResetModel()

    def rows(self) -> list[FigureRow]:
        """The rows shown."""
        return list(self._rows)

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802 (Qt override)
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(HEADERS)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole):
        if orientation == Qt.Orientation.Horizontal and role == Qt.ItemDataRole.DisplayRole \
                and 0 <= section < len(HEADERS):
            return HEADERS[section]
        return None

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole):
        if not index.isValid() or not 0 <= index.row() < len(self._rows):
            return None
        row, col = self._rows[index.row()], index.column()
        value = row.gross if col == COL_GROSS else row.net if col == COL_NET else None
        if role == Qt.ItemDataRole.DisplayRole:
            if col == COL_LABEL:
                return row.label
            if col == COL_GROSS and row.gross is None and row.net is not None:
                return ""
            return format_value(value, row.kind)
        if role == ValueRole and col != COL_LABEL:
            return value
        if role == Qt.ItemDataRole.ToolTipRole:
            return row.note or None
        if role == Qt.ItemDataRole.TextAlignmentRole and col != COL_LABEL:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None
