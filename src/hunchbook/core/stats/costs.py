"""How much of a result survives higher or lower trading costs.

``gross_daily`` is P&L before costs and ``cost_daily`` the (positive) cost paid each day, both in
currency; net P&L at cost multiple ``c`` is ``gross - c * cost``.
"""

from __future__ import annotations

import math

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.stats.inputs import as_number, as_series
from hunchbook.core.stats.sharpe import sharpe_ratio

#: Default cost multiples tried by :func:`cost_sensitivity`.
COST_MULTIPLES = (0.5, 1.0, 2.0, 3.0)


def cost_sensitivity(gross_daily: np.ndarray, cost_daily: np.ndarray,
                     multiples: tuple[float, ...] = COST_MULTIPLES,
                     periods: int = DAYS_PER_YEAR) -> dict[float, float]:
    """Annualised net Sharpe ratio at each multiple of the cost: ``{c: SR(gross - c * cost)}``."""
    gross, cost = _pair(gross_daily, cost_daily)
    return {float(c): sharpe_ratio(gross - as_number(c, "cost multiple") * cost, periods)
            for c in multiples}


def break_even_cost_multiple(gross_daily: np.ndarray, cost_daily: np.ndarray) -> float:
    """Multiple of the cost at which net total P&L is zero: ``sum(gross) / sum(cost)``.

    NaN when nothing was paid in costs (no multiple changes the result).
    """
    gross, cost = _pair(gross_daily, cost_daily)
    cost_total = float(cost.sum())
    return float(gross.sum()) / cost_total if cost_total != 0 else math.nan


def break_even_cost_per_contract(gross_daily: np.ndarray, contracts_traded: float) -> float:
    """Cost per contract at which net total P&L is zero: ``sum(gross) / contracts traded``.

    Same definition as ``break_even_cost`` of :func:`hunchbook.core.metrics.summarise`.
    NaN when no contract was traded.
    """
    gross = as_series(gross_daily, "gross P&L")
    contracts = as_number(contracts_traded, "contracts traded")
    return float(gross.sum()) / contracts if contracts > 0 else math.nan


def _pair(gross_daily: np.ndarray, cost_daily: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    gross = as_series(gross_daily, "gross P&L")
    cost = as_series(cost_daily, "cost")
    if gross.shape != cost.shape:
        raise HunchbookError(f"cost: expected {gross.size} days like the gross P&L, "
                             f"got {cost.size}")
    return gross, cost
