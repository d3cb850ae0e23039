"""Axis that writes large amounts compactly (12k, 1.5M) instead of an SI-scaled label."""

from __future__ import annotations

import pyqtgraph as pg


def compact_amount(value: float, spacing: float) -> str:
    """An axis amount in thousands (k) or millions (M) when the tick spacing allows."""
    if value == 0:
        return "0"
    size = max(abs(value), spacing)
    if size >= 1e6:
        digits = 0 if spacing >= 1e6 else 1 if spacing >= 1e5 else 2
        return f"{value / 1e6:.{digits}f}M"
    if size >= 1e3:
        digits = 0 if spacing >= 1e3 else 1
        return f"{value / 1e3:.{digits}f}k"
    return f"{value:g}"


#: The name and unit of Sharpe ratio axes.
SHARPE_LABEL = "Net Sharpe, annualised"

#: Width of the left axis of date charts (its amounts and its unit), so stacked date charts line
#: up.
DATE_CHART_AXIS_WIDTH = 78


class AmountAxis(pg.AxisItem):
    """Axis of currency amounts, labelled ``250k``, ``1.2M``."""

    def __init__(self, orientation: str, **kwargs) -> None:
        super().__init__(orientation, **kwargs)
        self.enableAutoSIPrefix(False)

    def tickStrings(self, values, scale, spacing):  # noqa: N802 (pyqtgraph override)
        """Tick labels of amounts."""
        return [compact_amount(v * scale, spacing * scale) for v in values]
