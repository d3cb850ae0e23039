"""The common history of a data folder's markets and the default holdout boundary in it.

The *common history* runs from the latest first date to the earliest last date over the
markets of the folder's market library that have a price file; its *trading dates* are the
dates within that span on which any of those markets has a price row. The *default holdout
boundary* holds out the last :data:`HOLDOUT_SHARE` (20 %) of the span: it is the first trading
date on or after ``first + ceil((1 - share) x (last - first))`` calendar days. Runs see the
dates before the boundary; the boundary date and every later one are held out.
"""

from __future__ import annotations

import datetime as dt
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from hunchbook.core.errors import DataError
from hunchbook.core.markets import read_market_library
from hunchbook.core.prices import LIBRARY_FILE, read_market_csv

#: Share of the common history held out by default (the last 20 %).
HOLDOUT_SHARE = 0.2


@dataclass(frozen=True)
class CommonHistory:
    """The span every market of a data folder covers, and its trading dates.

    ``markets`` are the library's markets with a price file, in library order; ``first`` the
    latest of their first dates, ``last`` the earliest of their last dates; ``dates`` the
    sorted distinct dates within the span on which any of them trades.
    """

    folder: str
    markets: tuple[str, ...]
    first: dt.date
    last: dt.date
    dates: tuple[dt.date, ...]


def common_history(folder: str | os.PathLike[str]) -> CommonHistory:
    """Read a data folder's price files and find the history all its markets share.

    Raises
    ------
    DataError
        When the folder has no market library, no market has a price file, a file is bad, or
        the markets share no date.
    """
    root = Path(folder)
    library_path = root / LIBRARY_FILE
    if not library_path.is_file():
        raise DataError(f"data folder has no {LIBRARY_FILE} (the market library)",
                        file=str(folder))
    markets = [m for m in read_market_library(library_path) if (root / f"{m}.csv").is_file()]
    if not markets:
        raise DataError("no market of the library has a price file (<market>.csv)",
                        file=str(folder))
    dates = [np.unique(read_market_csv(root / f"{m}.csv", m).frame["date"].to_numpy()
                       .astype("datetime64[D]")) for m in markets]
    first = max(d[0] for d in dates)
    last = min(d[-1] for d in dates)
    if first > last:
        raise DataError(f"the markets share no common history (the latest first date, "
                        f"{_day(first)}, is after the earliest last date, {_day(last)})",
                        file=str(folder))
    union = np.unique(np.concatenate(dates))
    within = union[(union >= first) & (union <= last)]
    return CommonHistory(folder=str(root), markets=tuple(markets), first=_day(first),
                         last=_day(last), dates=tuple(_day(d) for d in within))


def default_boundary(history: CommonHistory, share: float = HOLDOUT_SHARE) -> dt.date:
    """The first trading date on or after ``first + ceil((1 - share) x span)`` days: the
    boundary that holds out the last ``share`` of the common history.

    Raises
    ------
    DataError
        When the history is too short to keep a trading date on each side of the boundary.
    """
    if not 0.0 < share < 1.0:
        raise DataError(f"holdout share: expected a fraction between 0 and 1, got {share}")
    span = (history.last - history.first).days
    target = history.first + dt.timedelta(days=math.ceil((1.0 - share) * span))
    later = [d for d in history.dates if d >= target]
    if not later or later[0] <= history.first:
        raise DataError(f"the common history ({history.first} to {history.last}) is too short "
                        f"to hold out its last {100 * share:.0f} %", file=history.folder)
    return later[0]


def _day(value: np.datetime64) -> dt.date:
    return dt.date.fromisoformat(str(value.astype("datetime64[D]")))
