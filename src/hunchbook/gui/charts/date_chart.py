"""The base of the charts drawn over dates: a date axis below, an amount axis on the left of a
fixed width (so stacked charts line up), the palette's theme, and long daily series kept fast."""

from __future__ import annotations

import pyqtgraph as pg

from hunchbook.gui.charts.axes import DATE_CHART_AXIS_WIDTH, AmountAxis
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    style_plot,
    with_alpha,
)


def smooth_long_series(item: pg.PlotItem) -> None:
    """Keep long daily series fast: draw only what is in view, at most a peak envelope per
    pixel."""
    item.setClipToView(True)
    item.setDownsampling(auto=True, mode="peak")


class DateChart(pg.PlotWidget):
    """A plot over dates in the window's theme (``theme`` overrides the palette's)."""

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent, axisItems={"bottom": pg.DateAxisItem(),
                                            "left": AmountAxis("left")})
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        item.getAxis("left").setWidth(DATE_CHART_AXIS_WIDTH)
        smooth_long_series(item)

    def set_unit(self, currency: str) -> None:
        """Name the amounts' currency on the left axis (the dates below need no unit)."""
        set_axis_label(self, "left", currency, self.theme)

    def add_legend(self) -> pg.LegendItem:
        """A legend in the top left corner, readable over the curves."""
        return self.getPlotItem().addLegend(offset=(10, 10),
                                            labelTextColor=self.theme.foreground,
                                            brush=with_alpha(self.theme.background, 200))
