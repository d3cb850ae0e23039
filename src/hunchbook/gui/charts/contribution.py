"""Per-market contribution: gross and net total P&L of the chosen set in each market."""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtGui import QFontMetrics

from hunchbook.gui.charts.axes import AmountAxis
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    style_plot,
    with_alpha,
)

#: Thickness of one bar (two bars, gross and net, share one market's row).
BAR = 0.36


class ContributionChart(pg.PlotWidget):
    """Horizontal bars per market: gross total (grey) above net total (blue)."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, axisItems={"bottom": AmountAxis("bottom")})
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        item.invertY(True)
        item.showGrid(x=True, y=False, alpha=self.theme.grid_alpha)
        self.gross_bars = pg.BarGraphItem(x0=[], y=[], width=[], height=BAR,
                                          brush=with_alpha(self.theme.gross, 150),
                                          pen=pg.mkPen(None))
        self.net_bars = pg.BarGraphItem(x0=[], y=[], width=[], height=BAR,
                                        brush=self.theme.net, pen=pg.mkPen(None))
        item.addItem(self.gross_bars)
        item.addItem(self.net_bars)
        item.addLine(x=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 140)))
        item.setMouseEnabled(x=True, y=False)
        self.markets: list[str] = []
        self._title()

    def set_totals(self, totals: list[tuple[str, float | None, float | None]],
                   *, currency: str = "") -> None:
        """Show (market, gross total, net total) rows; a missing total draws no bar."""
        self.markets = [name for name, _, _ in totals]
        rows = range(len(totals))
        gross = [g or 0.0 for _, g, _ in totals]
        net = [n or 0.0 for _, _, n in totals]
        self.gross_bars.setOpts(x0=[0.0] * len(totals), y=[r - BAR / 2 for r in rows],
                                width=gross, height=BAR)
        self.net_bars.setOpts(x0=[0.0] * len(totals), y=[r + BAR / 2 for r in rows],
                              width=net, height=BAR)
        axis = self.getPlotItem().getAxis("left")
        axis.setTicks([list(enumerate(self.markets)), []])
        metrics = QFontMetrics(axis.font())
        axis.setWidth(max((metrics.horizontalAdvance(m) for m in self.markets), default=20) + 14)
        set_axis_label(self, "bottom", currency, self.theme)
        values = [0.0, *gross, *net]
        low, high = min(values), max(values)
        pad = 0.06 * (high - low or 1.0)
        self.getPlotItem().setRange(xRange=(low - pad, high + pad),
                                    yRange=(-0.6, max(len(totals), 1) - 0.4), padding=0)

    def _title(self) -> None:
        gross = with_alpha(self.theme.gross, 255).name()
        net = self.theme.net.name()
        self.getPlotItem().setTitle(
            f'<span style="color:{gross}"><b>Gross</b></span> and '
            f'<span style="color:{net}"><b>net</b></span> P&amp;L by market',
            color=self.theme.foreground.name(), size="10pt")

    def bar_widths(self) -> tuple[list[float], list[float]]:
        """Gross and net bar lengths as drawn (market order)."""
        return (list(map(float, self.gross_bars.opts["width"])),
                list(map(float, self.net_bars.opts["width"])))

    def clear_data(self) -> None:
        """Show nothing."""
        self.set_totals([])
