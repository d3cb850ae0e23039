"""The chosen set's figures against a capital: returns, volatility and drawdown in % of it,
the drawdown's length, and the year-by-year and monthly tables.

The capital is a fixed amount in the run currency (the rule's ``[sizing] capital``, one given
for the run, or the desk's capital setting; :func:`resolve_capital`). Returns are simple and not
compounded: a day's P&L over the capital (positions are sized on the fixed capital, never on
the P&L earned). A figure that needs a capital is NaN without one; the figures in currency
still stand.

Drawdown: cumulative P&L starts at 0 before the first day (a peak of 0). The maximum drawdown
is the largest fall from a running peak; its *length* counts the trading days (result rows)
from the day of that peak to the first day the cumulative P&L is back at the peak (the
recovery day counted), or, when it never gets back, to the last day (the drawdown is *open*).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.stats.sharpe import sharpe_ratio

if TYPE_CHECKING:  # the run record imports this module; pandas loads only where used
    import pandas as pd

#: Where a run's capital came from, in order of precedence: the rule file's ``[sizing] capital``,
#: one given for the run (``hunchbook run --capital``), the catalogue's desk setting ``capital``,
#: or none (figures in currency only).
CAPITAL_SOURCES = ("sizing", "run option", "desk setting", "none")
#: Month columns of the monthly returns table.
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")


@dataclass(frozen=True)
class DrawdownFigures:
    """The maximum drawdown of a daily P&L series and its length.

    ``max_drawdown`` in currency (positive), ``max_drawdown_pct`` as a fraction of the capital
    (NaN without one); ``peak`` the date of the peak (None when the peak is the start, before
    the first day, or when there is no drawdown), ``trough`` the date of the lowest point,
    ``recovered_on`` the first date back at the peak (None: not recovered); ``length_days`` the
    trading days from the peak to the recovery, or to the last day when ``open``.
    """

    max_drawdown: float
    max_drawdown_pct: float
    peak: str | None
    trough: str | None
    recovered_on: str | None
    length_days: int
    open: bool


@dataclass(frozen=True)
class YearRow:
    """One calendar year of the chosen set (net of costs).

    ``return_pct`` is net P&L / capital (a fraction; NaN without a capital); ``sharpe`` the
    annualised Sharpe ratio of the year's daily net P&L (mean / sample sd x sqrt 252);
    ``max_drawdown`` the largest fall within the year (cumulative P&L restarted at 0 on its
    first day), in currency and as a fraction of the capital.
    """

    year: int
    days: int
    net_pnl: float
    return_pct: float
    sharpe: float
    max_drawdown: float
    max_drawdown_pct: float
    cost: float


@dataclass(frozen=True)
class CapitalFigures:
    """The chosen set against its capital: yearly figures in % of capital, drawdowns, years.

    ``capital`` in the run currency (None: none known; every % figure is then NaN) and
    ``capital_source`` one of :data:`CAPITAL_SOURCES`. Returns and volatilities are annualised
    (mean x 252, sd x sqrt 252) and divided by the capital (fractions).
    """

    capital: float | None
    capital_source: str
    gross_return: float
    net_return: float
    gross_vol: float
    net_vol: float
    gross_drawdown: DrawdownFigures
    net_drawdown: DrawdownFigures
    years: tuple[YearRow, ...]


def resolve_capital(sizing_capital: float | None, given: float | None,
                    desk: float | None = None) -> tuple[float | None, str]:
    """The capital a run's figures are measured against and where it came from (one of
    :data:`CAPITAL_SOURCES`): the rule's ``[sizing] capital`` first, else one ``given`` for the
    run, else the ``desk``'s capital setting, else none."""
    for amount, source in ((sizing_capital, "sizing"), (given, "run option"),
                           (desk, "desk setting")):
        if amount is not None:
            return float(amount), source
    return None, "none"


def _share(value: float, capital: float | None) -> float:
    return value / capital if capital else math.nan


def drawdown_figures(pnl: np.ndarray, dates: np.ndarray,
                     capital: float | None = None) -> DrawdownFigures:
    """The maximum drawdown of daily P&L ``pnl`` (on ``dates``, ``datetime64``) and its length
    in trading days (see the module's note); the first of equal maxima is taken."""
    x = np.asarray(pnl, dtype=float)
    equity = np.concatenate(([0.0], np.cumsum(x)))  # equity[i]: after i days
    peak_value = np.maximum.accumulate(equity)
    fall = peak_value - equity
    trough = int(np.argmax(fall))
    depth = float(fall[trough])
    if depth <= 0.0:
        return DrawdownFigures(0.0, _share(0.0, capital), None, None, None, 0, False)
    level = peak_value[trough]
    peak = int(np.flatnonzero(equity[:trough + 1] == level)[-1])  # last time at the peak
    back = np.flatnonzero(equity[trough + 1:] >= level)
    recovered = None if back.size == 0 else trough + 1 + int(back[0])
    end = len(x) if recovered is None else recovered
    day = [str(d) for d in np.asarray(dates, dtype="datetime64[D]")]
    return DrawdownFigures(
        max_drawdown=depth, max_drawdown_pct=_share(depth, capital),
        peak=None if peak == 0 else day[peak - 1], trough=day[trough - 1],
        recovered_on=None if recovered is None else day[recovered - 1],
        length_days=end - peak, open=recovered is None)


def year_rows(daily: pd.DataFrame, capital: float | None = None) -> tuple[YearRow, ...]:
    """One row per calendar year of a daily table (date index; ``net_pnl`` and ``cost``)."""
    rows = []
    for year, part in daily.groupby(daily.index.year):
        net = part["net_pnl"].to_numpy(dtype=float)
        total = float(net.sum())
        fall = drawdown_figures(net, part.index.values, capital)
        rows.append(YearRow(year=int(year), days=len(part), net_pnl=total,
                            return_pct=_share(total, capital), sharpe=sharpe_ratio(net),
                            max_drawdown=fall.max_drawdown,
                            max_drawdown_pct=fall.max_drawdown_pct,
                            cost=float(part["cost"].sum())))
    return tuple(rows)


def capital_figures(daily: pd.DataFrame, capital: float | None,
                    source: str = "sizing") -> CapitalFigures:
    """The chosen set's figures against ``capital`` from its daily table (date index;
    ``gross_pnl``, ``net_pnl`` and ``cost`` columns)."""
    if source not in CAPITAL_SOURCES:
        raise ValueError(f"unknown capital source {source!r}")
    if capital is None:
        source = "none"
    dates = daily.index.values
    sides = {}
    for side in ("gross", "net"):
        x = daily[f"{side}_pnl"].to_numpy(dtype=float)
        mean = x.mean() * DAYS_PER_YEAR if x.size else math.nan
        vol = x.std(ddof=1) * math.sqrt(DAYS_PER_YEAR) if x.size > 1 else math.nan
        sides[side] = (_share(mean, capital), _share(vol, capital),
                       drawdown_figures(x, dates, capital))
    return CapitalFigures(
        capital=capital, capital_source=source,
        gross_return=sides["gross"][0], net_return=sides["net"][0],
        gross_vol=sides["gross"][1], net_vol=sides["net"][1],
        gross_drawdown=sides["gross"][2], net_drawdown=sides["net"][2],
        years=year_rows(daily, capital))


def monthly_returns(net: pd.Series, capital: float | None = None) -> pd.DataFrame:
    """Net P&L per calendar month as a years x months table (columns :data:`MONTHS`), as a
    fraction of ``capital`` (in currency without one); NaN for months without a day."""
    import pandas as pd

    index = pd.DatetimeIndex(net.index)
    sums = net.groupby([index.year, index.month]).sum()
    table = sums.unstack().reindex(columns=range(1, 13))
    table.index.name, table.columns = "year", list(MONTHS)
    return table / capital if capital else table


__all__ = ["CAPITAL_SOURCES", "MONTHS", "CapitalFigures", "DrawdownFigures", "YearRow",
           "capital_figures", "drawdown_figures", "monthly_returns", "resolve_capital",
           "year_rows"]
