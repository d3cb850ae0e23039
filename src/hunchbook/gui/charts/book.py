"""The run against the book: its correlation with each promoted idea and with their book, as
horizontal bars, with the threshold above which the verdict warns."""

from __future__ import annotations

import math

import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QFontMetrics

from hunchbook.core.book import BookComparison
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    set_title,
    style_plot,
    with_alpha,
)

#: Thickness of one bar.
BAR = 0.6


class BookChart(pg.PlotWidget):
    """One bar per promoted idea (``idea N``) and one for the book when it holds two ideas or
    more, from -1 to 1; bars above the threshold (the dashed line) in the warning colour, the
    book's in the accent colour."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent)
        self.setMinimumWidth(120)  # it fits a narrow column: the title is short
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        item.invertY(True)
        item.showGrid(x=True, y=False, alpha=self.theme.grid_alpha)
        item.setMouseEnabled(x=False, y=False)
        item.hideButtons()
        item.addLine(x=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 140)))
        self.threshold = pg.InfiniteLine(angle=90, pen=pg.mkPen(
            self.theme.foreground, width=1.5, style=Qt.PenStyle.DashLine))
        item.addItem(self.threshold)
        self.bar_item = pg.BarGraphItem(x0=[], y=[], width=[], height=BAR, pen=pg.mkPen(None))
        item.addItem(self.bar_item)
        self.labels: list[str] = []
        self.values: list[float | None] = []
        self.has_data = False
        set_title(self, "Correlation of daily net P&L", self.theme)
        set_axis_label(self, "bottom", "Correlation, -1 to 1", self.theme)

    def set_comparison(self, book: BookComparison | None) -> None:
        """Show a run's comparison (None, or no promoted idea: nothing)."""
        rows: list[tuple[str, float | None, bool]] = []
        if book is not None:
            rows = [(f"idea {c.idea_id}", _finite(c.correlation), False) for c in book.ideas]
            if book.book_ideas >= 2:  # with one idea the book is that idea
                rows.append(("book", _finite(book.book_correlation), True))
        self.labels = [label for label, _, _ in rows]
        self.values = [value for _, value, _ in rows]
        self.has_data = bool(rows)
        limit = book.threshold if book is not None else 1.0
        brushes = [self.theme.drawdown if v is not None and v > limit else
                   self.theme.accent if is_book else self.theme.net for _, v, is_book in rows]
        self.bar_item.setOpts(x0=[0.0] * len(rows), y=list(range(len(rows))),
                              width=[v or 0.0 for v in self.values], height=BAR,
                              brushes=brushes)
        self.threshold.setValue(limit)
        self.threshold.setVisible(book is not None)
        axis = self.getPlotItem().getAxis("left")
        axis.setTicks([list(enumerate(self.labels)), []])
        metrics = QFontMetrics(axis.font())
        axis.setWidth(max((metrics.horizontalAdvance(t) for t in self.labels), default=20) + 14)
        set_title(self, "Correlation of daily net P&L" if book is None else
                  f"Correlation (warning above {book.threshold:.2f})", self.theme)
        self.getPlotItem().setRange(xRange=(-1.0, 1.0), yRange=(-0.6, max(len(rows), 1) - 0.4),
                                    padding=0.02)

    def bar_widths(self) -> list[float]:
        """The bar lengths as drawn (row order)."""
        return list(map(float, self.bar_item.opts["width"]))

    def clear_data(self) -> None:
        """Show nothing."""
        self.set_comparison(None)


def _finite(value: float) -> float | None:
    return value if math.isfinite(value) else None
