"""Equity chart: cumulative gross and net P&L on a date axis, with overlays of other sets, the
holdout boundary and, once unlocked, the held-out curves after it."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt

from hunchbook.gui.charts.date_chart import DateChart
from hunchbook.gui.charts.holdout_marks import BoundaryLine, continued, held_out_pen
from hunchbook.gui.charts.run_figures import epoch_seconds, equity_curves, format_params
from hunchbook.gui.charts.theme import ChartTheme, set_title, with_alpha
from hunchbook.store.pnl import WALK_FORWARD


class EquityChart(DateChart):
    """Cumulative gross and net P&L of the chosen set; ``add_overlay`` draws another set's
    curves dashed, named in the legend; ``set_boundary`` the holdout line and
    ``set_held_out`` the held-out curves continuing the chosen set's after it. A daily table
    with the walk-forward column also draws the walk-forward test's out-of-sample net curve."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, theme=theme)
        item = self.getPlotItem()
        self.legend = self.add_legend()
        self.gross_curve = item.plot(name="Gross", pen=pg.mkPen(self.theme.gross, width=1.5))
        self.net_curve = item.plot(name="Net", pen=pg.mkPen(self.theme.net, width=2))
        item.addLine(y=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 90)))
        self.boundary = BoundaryLine(item, self.theme)
        self.held_gross = item.plot(pen=held_out_pen(self.theme, width=1.5, gross=True))
        self.held_net = item.plot(pen=held_out_pen(self.theme))
        self.walk_curve = item.plot(pen=pg.mkPen(with_alpha(self.theme.foreground, 200),
                                                 width=1.5, style=Qt.PenStyle.DashDotLine))
        self.has_walk_forward = False
        self.overlays: list[pg.PlotDataItem] = []
        self.has_data = False
        self.has_held_out = False
        self._ends = (0.0, 0.0)
        set_title(self, "Cumulative P&L of the chosen set", self.theme)

    def set_daily(self, daily: pd.DataFrame | None, *, currency: str = "") -> None:
        """Show a daily P&L table (date index; gross_pnl and net_pnl columns)."""
        self.clear_overlays()
        self.set_held_out(None)
        x, gross, net = equity_curves(daily)
        self.gross_curve.setData(x, gross)
        self.net_curve.setData(x, net)
        self.has_data = bool(x.size)
        self._ends = (float(gross[-1]), float(net[-1])) if x.size else (0.0, 0.0)
        self._set_walk_forward(daily, net)
        self.set_unit(currency)
        self.getPlotItem().enableAutoRange()

    def _set_walk_forward(self, daily: pd.DataFrame | None, net: np.ndarray) -> None:
        """The walk-forward test's out-of-sample net P&L, cumulated from the chosen set's net
        equity on the day before the test starts, so the gap shows the cost of choosing
        without hindsight."""
        self.legend.removeItem(self.walk_curve)
        column = None if daily is None else daily.get(WALK_FORWARD)
        known = np.zeros(0, dtype=bool) if column is None else column.notna().to_numpy()
        self.has_walk_forward = bool(known.any())
        if not self.has_walk_forward:
            self.walk_curve.setData(np.zeros(0), np.zeros(0))
            return
        assert daily is not None and column is not None
        first = int(np.argmax(known))
        level = float(net[first - 1]) if first > 0 else 0.0
        values = column.to_numpy(dtype=float)[known]
        self.walk_curve.setData(epoch_seconds(daily.index[known]), level + np.cumsum(values))
        self.legend.addItem(self.walk_curve, "Net, walk-forward")

    def add_overlay(self, params: dict[str, float], daily: pd.DataFrame) -> None:
        """Draw a parameter set's gross and net equity dashed, named after the set."""
        x, gross, net = equity_curves(daily)
        name = format_params(params)
        dash = Qt.PenStyle.DashLine
        accent = self.theme.accent
        net_item = self.getPlotItem().plot(x, net, name=f"Net, {name}",
                                           pen=pg.mkPen(accent, width=2, style=dash))
        gross_item = self.getPlotItem().plot(x, gross, name=f"Gross, {name}",
                                             pen=pg.mkPen(with_alpha(accent, 140), width=1.5,
                                                          style=Qt.PenStyle.DotLine))
        self.overlays += [net_item, gross_item]

    def set_boundary(self, boundary: dt.date | str | None) -> None:
        """Show the holdout boundary (a date or ``YYYY-MM-DD``; None hides it)."""
        self.boundary.set(boundary)

    def set_held_out(self, daily: pd.DataFrame | None) -> None:
        """Draw the held-out daily P&L (date index; gross_pnl, net_pnl) as curves continuing
        the chosen set's, dashed and named in the legend; None removes them."""
        shown = daily is not None and not daily.empty
        for curve, name in ((self.held_net, "Net, held out"), (self.held_gross,
                                                                 "Gross, held out")):
            self.legend.removeItem(curve)
            if shown:
                self.legend.addItem(curve, name)
        if not shown:
            empty = np.zeros(0)
            self.held_gross.setData(empty, empty)
            self.held_net.setData(empty, empty)
            self.has_held_out = False
            return
        assert daily is not None
        x = epoch_seconds(daily.index)
        self.held_gross.setData(x, continued(self._ends[0], daily["gross_pnl"].to_numpy()))
        self.held_net.setData(x, continued(self._ends[1], daily["net_pnl"].to_numpy()))
        self.has_held_out = True
        self.getPlotItem().enableAutoRange()

    def clear_overlays(self) -> None:
        """Remove every overlaid set."""
        for overlay in self.overlays:
            self.getPlotItem().removeItem(overlay)
        self.overlays = []

    def clear_data(self) -> None:
        """Show nothing."""
        self.clear_overlays()
        self.set_held_out(None)
        self.boundary.set(None)
        empty = np.zeros(0)
        self.gross_curve.setData(empty, empty)
        self.net_curve.setData(empty, empty)
        self._set_walk_forward(None, empty)
        self.has_data = False
