"""Heatmap of net Sharpe ratio over a two-parameter grid; hover names a cell, click picks it."""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt, Signal
from PySide6.QtWidgets import QGraphicsRectItem

from hunchbook.gui.charts.axes import SHARPE_LABEL
from hunchbook.gui.charts.run_figures import ParameterSpace, format_params, sharpe_grid
from hunchbook.gui.charts.theme import (
    ChartTheme,
    palette_theme,
    set_axis_label,
    set_title,
    style_plot,
)

#: Cells are labelled with their value when the grid has at most this many.
LABELLED_CELLS = 120


def sharpe_colour_map() -> pg.ColorMap:
    """Diverging colours: warm below zero, pale at zero, blue above."""
    return pg.ColorMap([0.0, 0.5, 1.0], [(196, 78, 52), (238, 236, 230), (36, 104, 178)])


class SweepHeatmap(pg.PlotWidget):
    """Net Sharpe ratio per cell of a two-parameter grid (rows: first parameter, columns:
    second); the chosen set is outlined.

    Signal ``cell_clicked(dict)`` gives the parameter set of a clicked cell that was run;
    hovering shows the cell's set and value in the title and tooltip.
    """

    cell_clicked = Signal(dict)

    def __init__(self, parent=None, *, theme: ChartTheme | None = None) -> None:
        super().__init__(parent)
        self.theme = theme or palette_theme()
        style_plot(self, self.theme)
        item = self.getPlotItem()
        item.showGrid(x=False, y=False)
        self.image = pg.ImageItem(axisOrder="row-major")
        item.addItem(self.image)
        self.colour_bar = pg.ColorBarItem(values=(-1.0, 1.0), colorMap=sharpe_colour_map(),
                                          interactive=False, width=12, label=SHARPE_LABEL)
        self.colour_bar.setImageItem(self.image, insert_in=item)
        for name in ("right", "left"):
            axis = self.colour_bar.getAxis(name)
            axis.setPen(pg.mkPen(self.theme.foreground))
            axis.setTextPen(pg.mkPen(self.theme.foreground))
        self.outline = QGraphicsRectItem()
        self.outline.setPen(pg.mkPen(self.theme.foreground, width=2.5))
        self.outline.setZValue(10)
        self.outline.hide()
        item.addItem(self.outline, ignoreBounds=True)
        self.shown = QGraphicsRectItem()
        self.shown.setPen(pg.mkPen(self.theme.accent, width=2.5, style=Qt.PenStyle.DashLine))
        self.shown.setZValue(11)
        self.shown.hide()
        item.addItem(self.shown, ignoreBounds=True)
        self.labels: list[pg.TextItem] = []
        self.space: ParameterSpace | None = None
        self.grid = np.zeros((0, 0))
        self.scene().sigMouseMoved.connect(self._hover)
        self.scene().sigMouseClicked.connect(self._click)
        set_title(self, "Net Sharpe by parameter set", self.theme)

    def set_space(self, space: ParameterSpace, chosen: dict[str, float] | None = None) -> None:
        """Show a two-parameter space's net Sharpe ratios and outline the chosen set."""
        self.space = space
        self.grid = sharpe_grid(space)
        rows, cols = space.values
        finite = self.grid[np.isfinite(self.grid)]
        reach = float(np.max(np.abs(finite))) if finite.size else 1.0
        reach = reach if reach > 0 else 1.0
        self.image.setImage(self.grid, autoLevels=False, levels=(-reach, reach))
        self.image.setRect(QRectF(-0.5, -0.5, len(cols), len(rows)))
        self.colour_bar.setLevels((-reach, reach))
        item = self.getPlotItem()
        first, second = space.names
        item.getAxis("bottom").setTicks([[(j, f"{v:g}") for j, v in enumerate(cols)], []])
        item.getAxis("left").setTicks([[(i, f"{v:g}") for i, v in enumerate(rows)], []])
        set_axis_label(self, "bottom", second, self.theme)
        set_axis_label(self, "left", first, self.theme)
        self._label_cells(reach)
        self._place(self.outline, chosen)
        self.shown.hide()
        item.setLimits(xMin=-1.5, xMax=len(cols) + 0.5, yMin=-1.5, yMax=len(rows) + 0.5)
        item.setRange(xRange=(-0.5, len(cols) - 0.5), yRange=(-0.5, len(rows) - 0.5),
                      padding=0.02)

    def _label_cells(self, reach: float) -> None:
        for label in self.labels:
            self.getPlotItem().removeItem(label)
        self.labels = []
        if self.grid.size > LABELLED_CELLS:
            return
        for (i, j), value in np.ndenumerate(self.grid):
            if not math.isfinite(value):
                continue
            strong = abs(value) > 0.55 * reach
            label = pg.TextItem(f"{value:.2f}", anchor=(0.5, 0.5),
                                color=(255, 255, 255) if strong else (30, 30, 30))
            label.setPos(j, i)
            self.getPlotItem().addItem(label, ignoreBounds=True)
            self.labels.append(label)

    def mark_shown(self, params: dict[str, float]) -> None:
        """Outline (dashed) the set whose curves are overlaid on the equity chart."""
        self._place(self.shown, params)

    def _place(self, frame: QGraphicsRectItem, params: dict[str, float] | None) -> None:
        cell = self._cell_of(params) if params and self.space is not None else None
        if cell is None:
            frame.hide()
            return
        i, j = cell
        frame.setRect(QRectF(j - 0.5, i - 0.5, 1.0, 1.0))
        frame.show()

    def _cell_of(self, params: dict[str, float]) -> tuple[int, int] | None:
        rows, cols = self.space.values
        first, second = self.space.names
        try:
            return rows.index(float(params[first])), cols.index(float(params[second]))
        except (KeyError, ValueError, TypeError):
            return None

    def cell_at(self, scene_pos: QPointF) -> tuple[int, int] | None:
        """Grid cell (row, column) under a scene position, or None outside the grid."""
        if self.space is None or self.grid.size == 0:
            return None
        box = self.getPlotItem().getViewBox()
        if not box.sceneBoundingRect().contains(scene_pos):
            return None
        point = box.mapSceneToView(scene_pos)
        i, j = round(point.y()), round(point.x())
        rows, cols = self.grid.shape
        if 0 <= i < rows and 0 <= j < cols:
            return i, j
        return None

    def params_of(self, cell: tuple[int, int]) -> dict[str, float]:
        """The parameter set of a grid cell."""
        assert self.space is not None
        rows, cols = self.space.values
        first, second = self.space.names
        return {first: rows[cell[0]], second: cols[cell[1]]}

    def describe(self, cell: tuple[int, int]) -> str:
        """Plain text of a cell: its parameters and net Sharpe ratio."""
        value = self.grid[cell]
        text = "not run" if not math.isfinite(value) else f"net Sharpe {value:.2f}"
        return f"{format_params(self.params_of(cell))}: {text}"

    def _hover(self, scene_pos: QPointF) -> None:
        cell = self.cell_at(scene_pos)
        text = "" if cell is None else self.describe(cell)
        if text == self.toolTip():
            return
        self.setToolTip(text)
        set_title(self, text or "Net Sharpe by parameter set", self.theme)

    def _click(self, event) -> None:
        if event.button() != Qt.MouseButton.LeftButton:
            return
        cell = self.cell_at(event.scenePos())
        if cell is not None and math.isfinite(self.grid[cell]):
            event.accept()
            self.cell_clicked.emit(self.params_of(cell))

    def clear_data(self) -> None:
        """Show nothing."""
        self.space = None
        self.grid = np.zeros((0, 0))
        self.image.clear()
        for label in self.labels:
            self.getPlotItem().removeItem(label)
        self.labels = []
        self.outline.hide()
        self.shown.hide()
