"""Cost sensitivity: the chosen set's net Sharpe ratio as the assumed costs are scaled."""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import Qt

from hunchbook.gui.charts.axes import SHARPE_LABEL
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    set_title,
    style_plot,
    with_alpha,
)

#: The cost axis' name and unit.
MULTIPLE_LABEL = "Cost multiple, × assumed costs"

#: Draw the break-even point when it lies within this many times the largest multiple shown.
BREAK_EVEN_REACH = 2.0


class CostSensitivityChart(pg.PlotWidget):
    """Net Sharpe ratio against cost multiple, the assumed costs (1x) marked, and the
    break-even multiple where net P&L (and so the Sharpe ratio) reaches zero."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent)
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        set_axis_label(self, "bottom", MULTIPLE_LABEL, self.theme)
        set_axis_label(self, "left", SHARPE_LABEL, self.theme)
        faint = pg.mkPen(with_alpha(self.theme.foreground, 110), style=Qt.PenStyle.DashLine)
        item.addLine(y=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 140)))
        item.addLine(x=1.0, pen=faint)
        self.curve = item.plot(pen=pg.mkPen(self.theme.net, width=2), symbol="o", symbolSize=7,
                               symbolBrush=self.theme.net, symbolPen=pg.mkPen(None))
        self.break_even = pg.ScatterPlotItem(size=11, symbol="d", brush=self.theme.drawdown,
                                             pen=pg.mkPen(None))
        item.addItem(self.break_even)
        self.has_data = False
        set_title(self, "Net Sharpe as costs grow", self.theme)

    def set_curve(self, multiples: list[float], net_sharpe: list[float | None],
                  break_even: float | None) -> None:
        """Show net Sharpe ratios per cost multiple (None is left out) and the break-even."""
        points = [(m, s) for m, s in zip(multiples, net_sharpe, strict=True) if s is not None]
        self.curve.setData([m for m, _ in points], [s for _, s in points])
        self.has_data = bool(points)
        reach = BREAK_EVEN_REACH * max(multiples, default=0.0)
        show = break_even is not None and 0.0 < break_even <= reach
        self.break_even.setData([break_even] if show else [], [0.0] if show else [])
        label = MULTIPLE_LABEL
        if break_even is not None:
            label = f"Cost multiple, × assumed costs (break-even {break_even:.1f}×)"
        set_axis_label(self, "bottom", label, self.theme)
        self.getPlotItem().enableAutoRange()

    def clear_data(self) -> None:
        """Show nothing."""
        self.set_curve([], [], None)
