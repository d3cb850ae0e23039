"""The chosen set against its capital in the results view: where the capital came from, why the
two Sharpe ratios differ, the year-by-year table and the *Monthly returns…* dialog."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QFont
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core.presenter import (
    Table,
    capital_sentence,
    monthly_table,
    year_table,
)
from hunchbook.gui.widgets.book_panel import TableModel
from hunchbook.gui.widgets.read_only_table import read_only
from hunchbook.store.records import RunRecord

#: Heading of the year-by-year table.
YEAR_HEADING = "Year by year (net of costs)"
#: Said instead of the monthly table when the run kept no daily P&L.
NO_DAILY = "This run kept no daily P&L: no monthly returns to show."


def _table_view(model: TableModel) -> QTableView:
    view = read_only(QTableView())
    view.setModel(model)
    view.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
    return view


def _note() -> QLabel:
    label = QLabel()
    label.setWordWrap(True)
    label.setTextFormat(Qt.TextFormat.PlainText)
    return label


def monthly_returns_table(run: RunRecord) -> Table | None:
    """The run's chosen set month by month (None: no result or no daily P&L kept)."""
    daily = run.daily_pnl
    if run.result is None or daily is None or "net_pnl" not in daily:
        return None
    from hunchbook.core.capital_figures import monthly_returns  # pandas: loaded when shown

    figures = run.result.capital
    capital = None if figures is None else figures.capital
    return monthly_table(monthly_returns(daily["net_pnl"], capital), capital,
                         run.result.currency)


class MonthlyDialog(QDialog):
    """The chosen set's net returns month by month (in % of capital when the run has one)."""

    def __init__(self, run: RunRecord, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Monthly returns of run {run.id}")
        self.model = TableModel(self)
        table = monthly_returns_table(run)
        layout = QVBoxLayout(self)
        self.note = _note()
        layout.addWidget(self.note)
        if table is None:
            self.note.setText(NO_DAILY)
        else:
            self.model.set_table(table)
            self.note.setText(f"Net P&L per calendar month in {table.columns[-1].label[7:-1]}; "
                              "Total is the year's sum.")
            self.view = _table_view(self.model)
            layout.addWidget(self.view)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        layout.addWidget(buttons)
        self.resize(960, 360)


class CapitalTables(QWidget):
    """The capital sentence, the year table and the monthly button."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.run: RunRecord | None = None
        self.dialog: MonthlyDialog | None = None
        self.capital_note = _note()
        self.capital_note.setObjectName("capitalNote")
        heading = QLabel(YEAR_HEADING)
        font = QFont(heading.font())
        font.setBold(True)
        heading.setFont(font)
        self.monthly_button = QPushButton("Monthly returns…")
        self.monthly_button.setToolTip("The chosen set's net returns month by month")
        self.monthly_button.clicked.connect(self.show_monthly)
        self.model = TableModel(self)
        self.table = _table_view(self.model)
        head = QHBoxLayout()
        head.setContentsMargins(0, 0, 0, 0)
        head.addWidget(heading, 1)
        head.addWidget(self.monthly_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.capital_note)
        layout.addLayout(head)
        layout.addWidget(self.table)
        self.show_run(None)

    def show_run(self, run: RunRecord | None) -> None:
        """Show a recorded run's figures against capital and its years (None: nothing)."""
        self.run = run
        result = None if run is None else run.result
        self.capital_note.setText("" if result is None else capital_sentence(result))
        table = year_table(result) if result is not None else Table("Year", (), ())
        self.model.set_table(table)
        self.table.resizeRowsToContents()
        rows = sum(self.table.rowHeight(r) for r in range(self.model.rowCount()))
        self.table.setFixedHeight(rows + self.table.horizontalHeader().sizeHint().height()
                                  + self.table.horizontalScrollBar().sizeHint().height()
                                  + 2 * self.table.frameWidth())  # room for a scroll bar
        self.monthly_button.setEnabled(run is not None and run.daily_pnl is not None)
        self.setVisible(result is not None)

    def show_monthly(self) -> None:
        """Open the *Monthly returns…* dialog of the shown run."""
        if self.run is None:
            return
        self.dialog = MonthlyDialog(self.run, self)
        self.dialog.show()


__all__ = ["NO_DAILY", "YEAR_HEADING", "CapitalTables", "MonthlyDialog",
           "monthly_returns_table"]
