"""What the date charts show of the holdout: a vertical line at the boundary labelled
"holdout", and once an idea's held-out years are unlocked, their curves after it (dashed,
in the theme's held-out colour)."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt

from hunchbook.gui.charts.run_figures import epoch_seconds
from hunchbook.gui.charts.theme import ChartTheme, with_alpha

#: The label of the boundary line.
LABEL = "holdout"


def boundary_x(boundary: dt.date | str | None) -> float | None:
    """A boundary date (or ``YYYY-MM-DD`` text) as the x of a date axis (epoch seconds)."""
    if boundary is None:
        return None
    return float(epoch_seconds(pd.DatetimeIndex([pd.Timestamp(boundary)]))[0])


class BoundaryLine:
    """The boundary line of one plot (hidden until :meth:`set` gets a date); it never widens
    the plot's automatic range."""

    def __init__(self, plot: pg.PlotItem, theme: ChartTheme) -> None:
        colour = with_alpha(theme.foreground, 170)
        self.line = pg.InfiniteLine(
            angle=90, movable=False, pen=pg.mkPen(colour, width=1.5, style=Qt.PenStyle.DashLine),
            label=LABEL, labelOpts={"position": 0.99, "color": colour, "movable": False,
                                    "fill": with_alpha(theme.background, 210),
                                    "anchors": [(1, 0), (1, 0)]})  # hangs below the top
        self.line.setZValue(20)
        plot.addItem(self.line, ignoreBounds=True)
        self.line.hide()

    @property
    def x(self) -> float | None:
        """Where the line stands (epoch seconds), or None when hidden."""
        return float(self.line.value()) if self.line.isVisible() else None

    def set(self, boundary: dt.date | str | None) -> None:
        """Stand at ``boundary`` (hide when None)."""
        x = boundary_x(boundary)
        if x is None:
            self.line.hide()
        else:
            self.line.setValue(x)
            self.line.show()


def held_out_pen(theme: ChartTheme, *, width: float = 2.0, gross: bool = False) -> pg.QtGui.QPen:
    """The pen of a held-out curve (dashed net, dotted gross, in the held-out colour)."""
    colour = with_alpha(theme.held_out, 150) if gross else theme.held_out
    style = Qt.PenStyle.DotLine if gross else Qt.PenStyle.DashLine
    return pg.mkPen(colour, width=width, style=style)


def continued(start: float, daily: np.ndarray) -> np.ndarray:
    """Cumulative sum of ``daily`` starting from ``start`` (a curve continued after another)."""
    return start + np.cumsum(np.asarray(daily, dtype=float))
