"""Two runs side by side (of one idea or of two): figures, verdict checks, both net equity
curves overlaid and the line-by-line difference of their rule files
(:func:`hunchbook.core.compare.compare_runs`); and the dialog that picks a run of any idea to
compare with."""

from __future__ import annotations

import html
from collections.abc import Sequence

from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QFont, QFontDatabase, QPalette
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QTabWidget,
    QTextEdit,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core import formats
from hunchbook.core.compare import CheckPair, DiffLine, FigurePair, RunComparison
from hunchbook.core.presenter import FigureRow, format_value
from hunchbook.gui.charts.compare_equity import CompareEquityChart
from hunchbook.gui.widgets.read_only_table import read_only
from hunchbook.gui.widgets.verdict_banner import STATUS_MARKS, banner_colours, mix_colours
from hunchbook.store.records import RunLine, RunRecord

#: Hue of each kind of diff line (mixed into the view's background).
DIFF_HUES = {"removed": QColor(192, 52, 52), "added": QColor(38, 140, 74),
             "hunk": QColor(44, 112, 196), "file": QColor(128, 128, 128)}
#: Figure table columns.
FIGURE_HEADERS = ("Figure", "A gross", "A net", "B gross", "B net")
#: Check table columns.
CHECK_HEADERS = ("Check", "A", "A figure", "B", "B figure")


def _item(text: str, *, tip: str = "", align_right: bool = False) -> QTableWidgetItem:
    item = QTableWidgetItem(text)
    item.setFlags(Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable)
    if tip:
        item.setToolTip(tip)
    if align_right:
        item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
    return item


def _table(headers: tuple[str, ...]) -> QTableWidget:
    table = read_only(QTableWidget(0, len(headers)), select_rows=True)
    table.setHorizontalHeaderLabels(list(headers))
    table.verticalHeader().setDefaultSectionSize(table.fontMetrics().height() + 8)
    table.setFocusPolicy(Qt.FocusPolicy.StrongFocus)  # its rows can be picked with the keyboard
    header = table.horizontalHeader()
    header.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
    for column in range(1, len(headers)):
        header.setSectionResizeMode(column, QHeaderView.ResizeMode.ResizeToContents)
    return table


def _cells(row: FigureRow | None) -> tuple[str, str]:
    if row is None:
        return "", ""
    gross = "" if row.gross is None else format_value(row.gross, row.kind)
    return gross, format_value(row.net, row.kind)


class CompareDialog(QDialog):
    """Two runs side by side.

    Attributes
    ----------
    comparison
        The :class:`~hunchbook.core.compare.RunComparison` shown.
    figures, checks
        The figures and checks tables; ``equity`` the overlaid curves; ``diff`` the rule
        files' difference (coloured lines).
    """

    def __init__(self, comparison: RunComparison, runs: tuple[RunRecord, RunRecord],
                 titles: tuple[str, str], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("compareDialog")
        self.setWindowTitle(f"Compare {comparison.names[0]} with {comparison.names[1]}")
        self.comparison = comparison
        self.resize(1200, 820)
        heads = QHBoxLayout()
        for side, name, run, title, outcome, label in zip(
                ("A", "B"), comparison.names, runs, titles, comparison.outcomes,
                comparison.labels, strict=True):
            heads.addWidget(self._head(f"{side}: {name}", run, title, outcome, label), 1)
        self.figures = _table(FIGURE_HEADERS)
        self.figures.setObjectName("compareFigures")
        self._fill_figures()
        self.equity = CompareEquityChart()
        currency = runs[0].result.currency if runs[0].result else ""
        self.equity.set_runs(runs[0].daily_pnl, runs[1].daily_pnl,
                             names=(f"A: {comparison.names[0]}", f"B: {comparison.names[1]}"),
                             currency=currency)
        self.checks = _table(CHECK_HEADERS)
        self.checks.setObjectName("compareChecks")
        self._fill_checks()
        self.diff = QTextEdit()
        self.diff.setObjectName("compareDiff")
        self.diff.setReadOnly(True)
        self.diff.setLineWrapMode(QTextEdit.LineWrapMode.NoWrap)
        self.diff.setHtml(self.diff_html(self.palette()))
        self.tabs = QTabWidget()
        self.tabs.addTab(self.diff, "Rule files (line by line)")
        self.tabs.addTab(self.checks, "Verdict checks")

        top = QSplitter(Qt.Orientation.Horizontal)
        top.addWidget(self.figures)
        top.addWidget(self.equity)
        top.setSizes([520, 680])
        body = QSplitter(Qt.Orientation.Vertical)
        body.addWidget(top)
        body.addWidget(self.tabs)
        body.setSizes([430, 330])
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addLayout(heads)
        layout.addWidget(body, 1)
        layout.addWidget(buttons)

    def _head(self, name: str, run: RunRecord, title: str, outcome: str,
              label: str) -> QLabel:
        background, stripe, text = banner_colours(outcome, self.palette())
        head = QLabel(f"<b>{html.escape(name)}</b>"
                      f"<br>{html.escape(title)}<br><span style='font-size:14pt; "
                      f"color:{text.name()}'><b>{html.escape(label)}</b></span>"
                      f" &nbsp; recorded {html.escape(formats.date(run.recorded_at))} by "
                      f"{html.escape(run.recorded_by)}")
        head.setTextFormat(Qt.TextFormat.RichText)
        head.setWordWrap(True)
        head.setStyleSheet(f"QLabel {{ background: {background.name()}; border-left: 6px "
                           f"solid {stripe.name()}; padding: 6px 10px; border-radius: 4px; }}")
        return head

    def _fill_figures(self) -> None:
        sections = (("Chosen set over its whole history", self.comparison.performance),
                    ("How far to trust it (days all sets share)", self.comparison.statistics))
        bold = QFont(self.font())
        bold.setBold(True)
        for heading, pairs in sections:
            row = self.figures.rowCount()
            self.figures.insertRow(row)
            title = _item(heading)
            title.setFont(bold)
            self.figures.setItem(row, 0, title)
            self.figures.setSpan(row, 0, 1, len(FIGURE_HEADERS))
            for pair in pairs:
                self._figure_row(pair)

    def _figure_row(self, pair: FigurePair) -> None:
        row = self.figures.rowCount()
        self.figures.insertRow(row)
        self.figures.setItem(row, 0, _item(pair.label, tip=pair.note))
        for column, text in enumerate((*_cells(pair.a), *_cells(pair.b)), start=1):
            self.figures.setItem(row, column, _item(text, tip=pair.note, align_right=True))

    def _fill_checks(self) -> None:
        for pair in self.comparison.checks:
            self._check_row(pair)

    def _check_row(self, pair: CheckPair) -> None:
        row = self.checks.rowCount()
        self.checks.insertRow(row)
        self.checks.setItem(row, 0, _item(pair.name))
        for column, check in ((1, pair.a), (3, pair.b)):
            if check is None:
                self.checks.setItem(row, column, _item("\u2013", tip="No such check"))
                self.checks.setItem(row, column + 1, _item(""))
                continue
            mark, hue = STATUS_MARKS.get(check.status, ("?", QColor(128, 128, 128)))
            status = _item(f"{mark} {check.status}", tip=check.finding)
            status.setForeground(hue)
            self.checks.setItem(row, column, status)
            self.checks.setItem(row, column + 1, _item(check.figure, tip=check.finding))

    def diff_html(self, palette: QPalette) -> str:
        """The rule files' difference as coloured HTML lines (in this palette)."""
        if self.comparison.same_rules:
            return "<p>The two runs ran the same rule file, character for character.</p>"
        base = palette.color(QPalette.ColorRole.Base)
        dark = base.lightnessF() < 0.5
        family = QFontDatabase.systemFont(QFontDatabase.SystemFont.FixedFont).family()
        lines = [self._diff_line(line, base, dark) for line in self.comparison.diff]
        return (f"<div style=\"font-family: '{html.escape(family)}'; white-space: pre\">"
                + "".join(lines) + "</div>")

    @staticmethod
    def _diff_line(line: DiffLine, base: QColor, dark: bool) -> str:
        hue = DIFF_HUES.get(line.kind)
        text = html.escape(line.unified()) or "&nbsp;"
        if hue is None:
            return f"<div>{text}</div>"
        background = mix_colours(base, hue, 0.35 if dark else 0.18)
        weight = "bold" if line.kind in ("file", "hunk") else "normal"
        return (f'<div style="background-color: {background.name()}; font-weight: {weight}">'
                f"{text}</div>")


class RunPickerDialog(QDialog):
    """Choose one run of any idea (the filter matches the idea's title, the run number or its
    verdict)."""

    def __init__(self, runs: Sequence[RunLine], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Compare with a run")
        self.setObjectName("runPicker")
        self.resize(720, 420)
        self.filter = QLineEdit()
        self.filter.setPlaceholderText("Filter by idea title, run number or verdict")
        self.filter.textChanged.connect(self._filter)
        self.table = _table(("Idea", "Run", "Recorded", "Revision", "Verdict"))
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        for run in sorted(runs, key=lambda r: r.id, reverse=True):
            row = self.table.rowCount()
            self.table.insertRow(row)
            texts = (run.idea_title, str(run.id), formats.date(run.recorded_at),
                     str(run.revision_number), run.verdict_label)
            for column, text in enumerate(texts):
                item = _item(text)
                item.setData(Qt.ItemDataRole.UserRole, run.id)
                self.table.setItem(row, column, item)
        self.table.itemDoubleClicked.connect(lambda _item: self.accept())
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(self.filter)
        layout.addWidget(self.table, 1)
        layout.addWidget(buttons)
        if self.table.rowCount():
            self.table.selectRow(0)

    def chosen(self) -> int | None:
        """The run id chosen, if any."""
        row = self.table.currentRow()
        item = self.table.item(row, 0) if row >= 0 else None
        return None if item is None else int(item.data(Qt.ItemDataRole.UserRole))

    def _filter(self, text: str) -> None:
        words = text.lower().split()
        for row in range(self.table.rowCount()):
            line = " ".join(self.table.item(row, c).text().lower()
                            for c in range(self.table.columnCount()))
            self.table.setRowHidden(row, not all(w in line for w in words))
