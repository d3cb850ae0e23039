"""Net Sharpe ratio per parameter set when the space is not a two-parameter grid."""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import Signal

from hunchbook.gui.charts.axes import SHARPE_LABEL
from hunchbook.gui.charts.run_figures import ParameterSpace, format_params
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    set_title,
    style_plot,
    with_alpha,
)


class SweepProfile(pg.PlotWidget):
    """One parameter: net Sharpe against its value. More than two: net Sharpe per set number.
    Points show their set on hover; ``point_clicked(dict)`` gives a clicked point's set."""

    point_clicked = Signal(dict)

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent)
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        set_axis_label(self, "left", SHARPE_LABEL, self.theme)
        item.addLine(y=0, pen=pg.mkPen(with_alpha(self.theme.foreground, 140)))
        self.line = item.plot(pen=pg.mkPen(with_alpha(self.theme.net, 150), width=1.5))
        self.points = pg.ScatterPlotItem(size=9, brush=self.theme.net, pen=pg.mkPen(None),
                                         hoverable=True, hoverSize=12, tip=self._tip)
        self.chosen = pg.ScatterPlotItem(size=15, brush=None,
                                         pen=pg.mkPen(self.theme.foreground, width=2))
        item.addItem(self.points)
        item.addItem(self.chosen)
        self.points.sigClicked.connect(self._clicked)
        set_title(self, "Net Sharpe by parameter set", self.theme)

    def set_space(self, space: ParameterSpace, chosen: dict[str, float] | None = None) -> None:
        """Show each run set's net Sharpe ratio (sets without one are left out)."""
        single = len(space.names) == 1
        rows = []
        for k, (params, sharpe) in enumerate(zip(space.params, space.net_sharpe, strict=True)):
            if sharpe is None:
                continue
            x = float(params.get(space.names[0], k)) if single else float(k + 1)
            rows.append((x, sharpe, params))
        rows.sort(key=lambda r: r[0])
        xs, ys = [r[0] for r in rows], [r[1] for r in rows]
        self.line.setData(xs, ys)
        self.points.setData(x=xs, y=ys, data=[r[2] for r in rows])
        mark = [(x, y) for x, y, p in rows if chosen is not None and p == chosen]
        self.chosen.setData([m[0] for m in mark], [m[1] for m in mark])
        set_axis_label(self, "bottom", space.names[0] if single else "Parameter set number",
                       self.theme)
        self.getPlotItem().enableAutoRange()

    @staticmethod
    def _tip(x: float, y: float, data: dict[str, float]) -> str:
        return f"{format_params(data)}: net Sharpe {y:.2f}"

    def _clicked(self, _item, points, _event=None) -> None:
        if len(points):
            self.point_clicked.emit(dict(points[0].data()))

    def clear_data(self) -> None:
        """Show nothing."""
        self.line.setData([], [])
        self.points.setData([], [])
        self.chosen.setData([], [])
