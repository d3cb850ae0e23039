"""Drawdown chart: how far net cumulative P&L stands below its running peak."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg

from hunchbook.gui.charts.axes import DATE_CHART_AXIS_WIDTH, AmountAxis
from hunchbook.gui.charts.equity import smooth_long_series
from hunchbook.gui.charts.run_figures import drawdown, equity_curves
from hunchbook.gui.charts.theme import ChartTheme, palette_theme, set_title, style_plot, with_alpha


class DrawdownChart(pg.PlotWidget):
    """Net drawdown of the chosen set as a filled area below zero."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, axisItems={"bottom": pg.DateAxisItem(),
                                                 "left": AmountAxis("left")})
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        item.getAxis("left").setWidth(DATE_CHART_AXIS_WIDTH)
        smooth_long_series(item)
        self.curve = item.plot(pen=pg.mkPen(self.theme.drawdown, width=1.2), fillLevel=0.0,
                               brush=with_alpha(self.theme.drawdown, 70))
        set_title(self, "Net drawdown", self.theme)

    def set_daily(self, daily: pd.DataFrame | None) -> None:
        """Show the net drawdown of a daily P&L table."""
        x, _, net = equity_curves(daily)
        self.curve.setData(x, drawdown(net))
        self.getPlotItem().enableAutoRange()

    def clear_data(self) -> None:
        """Show nothing."""
        empty = np.zeros(0)
        self.curve.setData(empty, empty)
