"""The series a rule reads, built for a panel: only those it reads, each computed once.

Each market's series lie on its own dates. A series of another market (``close["GOLD"]``) is
placed on each traded market's dates with the value of the other market's latest date on or
before that date (never a later one); an event (``event("report")``) is 1.0 on the dates the
data folder's events file lists it for the traded market or for every market.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from hunchbook.core.calendar_series import CALENDAR_SERIES, calendar_series
from hunchbook.core.continuous import ContinuousSeries
from hunchbook.core.curve import CURVE_SERIES, CURVE_TOTALS
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.events import EVENTS_FILE, EventTable
from hunchbook.core.expr import Expression
from hunchbook.core.expr.nodes import EventRef, SeriesRef
from hunchbook.core.panel import Panel


def market_series(series: ContinuousSeries, name: str, file: str) -> np.ndarray:
    """Series ``name`` of one market on its own dates.

    ``file`` is the market's price file, named in errors.

    Raises
    ------
    DataError
        Naming the market and the series: a curve series of a market whose file is already
        continuous, or a column its file lacks.
    """
    market = series.market
    if name in CALENDAR_SERIES:
        return calendar_series(series.dates, name)
    if name in CURVE_SERIES:
        if series.curve is None:
            raise DataError(f"the rule reads '{name}' of market '{market}', whose file is an "
                            "already-continuous series (date, close) without contracts and so "
                            "has no curve; it needs contract-level data (date, contract, "
                            "expiry, close)", file=file)
        column = CURVE_TOTALS.get(name)
        if column is not None and column not in series.curve.activity:
            raise _no_column(name, market, column, file)
        return series.curve.series(name)
    if name not in series.adjusted:
        raise _no_column(name, market, name, file)
    return series.adjusted[name]


def _no_column(name: str, market: str, column: str, file: str) -> DataError:
    return DataError(f"the rule reads '{name}' of market '{market}', but its file has no "
                     f"'{column}' column", file=file)


def align_last_known(source_dates: np.ndarray, values: np.ndarray,
                     dates: np.ndarray) -> np.ndarray:
    """``values`` (on ascending ``source_dates``) at each of ``dates``: the value of the latest
    source date on or before it, NaN before the first source date (an as-of join looking back,
    like pandas ``merge_asof(direction="backward")``)."""
    at = np.searchsorted(source_dates, dates, side="right") - 1
    return np.where(at >= 0, values[np.maximum(at, 0)], np.nan)


def rule_data(expression: Expression, panel: Panel, markets: Mapping[str, ContinuousSeries],
              files: Mapping[str, str], events: EventTable | None) -> dict[str, np.ndarray]:
    """The series ``expression`` reads that ``panel.series`` does not hold yet, as
    ``(bars, markets)`` arrays on the panel's rows (NaN in the padding), by their keys.

    Parameters
    ----------
    expression
        The rule's position expression.
    panel
        The traded markets.
    markets
        Continuous series of every market read: the traded ones and those named in quotes.
    files
        Each market's price file, for error messages.
    events
        The data folder's events; needed when the expression reads ``event(...)``.

    Raises
    ------
    DataError
        A series a market's data cannot give (see :func:`market_series`).
    RuleError
        An event the events file does not list, with the column of its use.
    """
    out: dict[str, np.ndarray] = {}
    for node in expression.data_used():
        if node.key in panel.series:
            continue
        if isinstance(node, EventRef):
            out[node.key] = _stack(panel, _event_values(node, events))
        elif node.market is None:
            name = node.name
            out[node.key] = _stack(panel, lambda market, _dates, name=name: market_series(
                markets[market], name, files[market]))
        else:
            out[node.key] = _other_market(node, panel, markets[node.market],
                                          files[node.market])
    return out


def _stack(panel: Panel, values: Callable[[str, np.ndarray], np.ndarray]) -> np.ndarray:
    """A ``(bars, markets)`` array of ``values(market, its dates)`` for each traded market."""
    stacked = np.full(panel.dates.shape, np.nan)
    for j, market in enumerate(panel.markets):
        n = int(panel.lengths[j])
        stacked[:n, j] = values(market, panel.dates[:n, j])
    return stacked


def _other_market(node: SeriesRef, panel: Panel, series: ContinuousSeries,
                  file: str) -> np.ndarray:
    values = market_series(series, node.name, file)
    return _stack(panel, lambda _market, dates: align_last_known(series.dates, values, dates))


def _event_values(node: EventRef, events: EventTable | None
                  ) -> Callable[[str, np.ndarray], np.ndarray]:
    listed = events.names if events is not None else ()
    if node.event not in listed:
        where = (f"{EVENTS_FILE} lists: {', '.join(listed)}" if listed
                 else f"the data folder has no {EVENTS_FILE}" if events is None
                 or events.file is None else f"{EVENTS_FILE} lists no events")
        raise RuleError(f"unknown event '{node.event}'; {where}", column=node.column)
    assert events is not None
    return lambda market, dates: events.series(node.event, market, dates)
