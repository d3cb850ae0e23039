"""Colours of the result charts, following the window's light or dark palette."""

from __future__ import annotations

from dataclasses import dataclass

import pyqtgraph as pg
from PySide6.QtGui import QColor, QPalette
from PySide6.QtWidgets import QApplication


@dataclass(frozen=True)
class ChartTheme:
    """Background, text and series colours of one chart style."""

    background: QColor
    foreground: QColor
    grid_alpha: float
    gross: QColor
    net: QColor
    drawdown: QColor
    accent: QColor
    dark: bool
    held_out: QColor


def _theme(background: QColor, foreground: QColor) -> ChartTheme:
    dark = background.lightnessF() < 0.5
    if dark:
        return ChartTheme(background, foreground, 0.18, gross=QColor(160, 168, 182),
                          net=QColor(92, 170, 250), drawdown=QColor(236, 112, 99),
                          accent=QColor(246, 190, 80), dark=True,
                          held_out=QColor(86, 204, 170))
    return ChartTheme(background, foreground, 0.12, gross=QColor(128, 134, 146),
                      net=QColor(24, 96, 190), drawdown=QColor(196, 62, 50),
                      accent=QColor(214, 134, 0), dark=False, held_out=QColor(0, 128, 110))


def palette_theme(palette: QPalette | None = None) -> ChartTheme:
    """The chart theme of a palette (default: the application's)."""
    palette = palette if palette is not None else QApplication.palette()
    return _theme(palette.color(QPalette.ColorRole.Base), palette.color(QPalette.ColorRole.Text))


def light_theme() -> ChartTheme:
    """A light theme for charts that leave the window (exported reports)."""
    return _theme(QColor(255, 255, 255), QColor(40, 40, 46))


def style_plot(widget: pg.PlotWidget, theme: ChartTheme) -> None:
    """Apply a theme's background, axis and grid colours to a plot widget."""
    widget.setBackground(theme.background)
    item = widget.getPlotItem()
    for name in ("left", "bottom", "right", "top"):
        axis = item.getAxis(name)
        axis.setPen(pg.mkPen(theme.foreground))
        axis.setTextPen(pg.mkPen(theme.foreground))
        axis.enableAutoSIPrefix(False)
    item.showGrid(x=True, y=True, alpha=theme.grid_alpha)
    item.titleLabel.setAttr("color", theme.foreground.name())


def set_title(widget: pg.PlotWidget, text: str, theme: ChartTheme) -> None:
    """Set a plot's title in the theme's text colour (plain text; markup is not read)."""
    widget.getPlotItem().setTitle(_escape(text), color=theme.foreground.name(), size="10pt")


def set_axis_label(widget: pg.PlotWidget, side: str, text: str, theme: ChartTheme) -> None:
    """Name an axis' unit (plain text) in the theme's text colour; "" removes the label."""
    widget.getPlotItem().setLabel(side, _escape(text) or None, color=theme.foreground.name())
    if not text:
        widget.getPlotItem().getAxis(side).showLabel(False)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def with_alpha(color: QColor, alpha: int) -> QColor:
    """A copy of a colour with another alpha (0-255)."""
    out = QColor(color)
    out.setAlpha(alpha)
    return out
