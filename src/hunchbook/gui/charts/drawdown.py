"""Drawdown chart: how far net cumulative P&L stands below its running peak, with the holdout
boundary and, once unlocked, the held-out drawdown after it."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pyqtgraph as pg

from hunchbook.gui.charts.date_chart import DateChart
from hunchbook.gui.charts.holdout_marks import BoundaryLine, continued, held_out_pen
from hunchbook.gui.charts.run_figures import drawdown, epoch_seconds, equity_curves
from hunchbook.gui.charts.theme import ChartTheme, set_title, with_alpha


class DrawdownChart(DateChart):
    """Net drawdown of the chosen set as a filled area below zero; the holdout line and the
    held-out drawdown (dashed, lighter) after it."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, theme=theme)
        item = self.getPlotItem()
        self.curve = item.plot(pen=pg.mkPen(self.theme.drawdown, width=1.2), fillLevel=0.0,
                               brush=with_alpha(self.theme.drawdown, 70))
        self.held = item.plot(pen=held_out_pen(self.theme, width=1.2), fillLevel=0.0,
                              brush=with_alpha(self.theme.held_out, 45))
        self.boundary = BoundaryLine(item, self.theme)
        self._net = np.zeros(0)
        set_title(self, "Net drawdown", self.theme)

    def set_daily(self, daily: pd.DataFrame | None, *, currency: str = "") -> None:
        """Show the net drawdown of a daily P&L table (amounts in ``currency``)."""
        self.set_unit(currency)
        x, _, net = equity_curves(daily)
        self._net = net
        self.curve.setData(x, drawdown(net))
        self.set_held_out(None)
        self.getPlotItem().enableAutoRange()

    def set_boundary(self, boundary: dt.date | str | None) -> None:
        """Show the holdout boundary (a date or ``YYYY-MM-DD``; None hides it)."""
        self.boundary.set(boundary)

    def set_held_out(self, daily: pd.DataFrame | None) -> None:
        """Draw the drawdown on the held-out dates, measured from the running peak of the
        whole curve (None removes it)."""
        if daily is None or daily.empty:
            empty = np.zeros(0)
            self.held.setData(empty, empty)
            return
        start = float(self._net[-1]) if self._net.size else 0.0
        whole = np.concatenate((self._net, continued(start, daily["net_pnl"].to_numpy())))
        self.held.setData(epoch_seconds(daily.index), drawdown(whole)[self._net.size:])
        self.getPlotItem().enableAutoRange()

    def clear_data(self) -> None:
        """Show nothing."""
        empty = np.zeros(0)
        self.curve.setData(empty, empty)
        self._net = empty
        self.held.setData(empty, empty)
        self.boundary.set(None)
