"""Two runs' cumulative net P&L overlaid on one date axis (each from its stored daily P&L)."""

from __future__ import annotations

import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt

from hunchbook.gui.charts.date_chart import DateChart
from hunchbook.gui.charts.run_figures import equity_curves
from hunchbook.gui.charts.theme import ChartTheme, set_title, with_alpha


class CompareEquityChart(DateChart):
    """Cumulative net P&L of run A (solid, the net colour) and run B (dashed, the accent
    colour), named in the legend."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, theme=theme)
        item = self.getPlotItem()
        self.legend = self.add_legend()
        self.curve_a = item.plot(name="A", pen=pg.mkPen(self.theme.net, width=2))
        self.curve_b = item.plot(name="B", pen=pg.mkPen(self.theme.accent, width=2,
                                                        style=Qt.PenStyle.DashLine))
        item.addLine(y=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 90)))
        set_title(self, "Cumulative net P&L", self.theme)

    def set_runs(self, daily_a: pd.DataFrame | None, daily_b: pd.DataFrame | None, *,
                 names: tuple[str, str] = ("A", "B"), currency: str = "") -> None:
        """Show two daily P&L tables (date index; ``net_pnl`` column) and name them."""
        for curve, daily, name in ((self.curve_a, daily_a, names[0]),
                                   (self.curve_b, daily_b, names[1])):
            x, _gross, net = equity_curves(daily)
            curve.setData(x, net)
            self.legend.getLabel(curve).setText(name)
        self.set_unit(currency)
        self.getPlotItem().enableAutoRange()
