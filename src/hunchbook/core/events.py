"""Dated events of a data folder (report days, meetings, ...): the optional ``events.csv``.

The file has the columns ``date`` and ``event`` and optionally ``market``: each line lists one
event on one date, for one market (``market`` given) or for every market (``market`` blank or
no such column). A rule reads an event as ``event("name")``: 1.0 on the dates the event is
listed for the market, else 0.0.
"""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Collection
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from hunchbook.core.errors import DataError
from hunchbook.core.expr.nodes import EVENT_NAME
from hunchbook.core.prices import parse_dates, read_csv_text

#: Name of the events file inside a data folder.
EVENTS_FILE = "events.csv"
#: Columns the events file must have.
EVENT_COLUMNS = ("date", "event")


@dataclass(frozen=True)
class EventTable:
    """The events of a data folder.

    ``file`` is the events file read (``None`` when the folder has none); ``frame`` has one row
    per listed event: ``date`` (datetime), ``event`` (text) and ``market`` (text, ``""`` for
    every market).
    """

    file: str | None
    frame: pd.DataFrame

    @property
    def names(self) -> tuple[str, ...]:
        """The event names listed, sorted."""
        return tuple(sorted(set(self.frame["event"])))

    def series(self, event: str, market: str, dates: np.ndarray) -> np.ndarray:
        """1.0 on each of ``dates`` (``datetime64[D]``) where ``event`` is listed for ``market``
        or for every market, else 0.0."""
        rows = self.frame[(self.frame["event"] == event)
                          & self.frame["market"].isin(("", market))]
        listed = rows["date"].to_numpy().astype("datetime64[D]")
        return np.isin(dates, listed).astype(float)


def read_events(folder: str | os.PathLike[str], markets: Collection[str], *,
                before: dt.date | None = None) -> EventTable:
    """Read a data folder's events file; an empty table when the folder has none.

    Parameters
    ----------
    folder
        The data folder.
    markets
        The markets of its market library (a ``market`` cell must name one of them).
    before
        Holdout boundary: keep only the events dated before it (``None``: all of them).

    Raises
    ------
    DataError
        Naming the file and line: a missing column, a date that is not ``YYYY-MM-DD``, a blank
        or badly formed event name, or a market that is not in the library.
    """
    path = Path(folder) / EVENTS_FILE
    if not path.is_file():
        return EventTable(file=None, frame=pd.DataFrame({
            "date": pd.Series(dtype="datetime64[ns]"), "event": pd.Series(dtype=object),
            "market": pd.Series(dtype=object)}))
    file = str(path)
    raw = read_csv_text(path, "event rows")
    missing = [c for c in EVENT_COLUMNS if c not in raw.columns]
    if missing:
        raise DataError(f"missing column(s) {', '.join(missing)} (expected date, event and an "
                        "optional market)", file=file, line=1)
    events = raw["event"].str.strip()
    bad = ~events.map(lambda name: bool(EVENT_NAME.match(name)))
    if bad.any():
        line = int(bad.idxmax())
        raise DataError(f"column 'event': expected a name made of letters, digits, spaces, '_', "
                        f"'.' or '-', found {events[line]!r}", file=file, line=line)
    market = raw["market"].str.strip() if "market" in raw.columns else pd.Series(
        "", index=raw.index)
    unknown = (market != "") & ~market.isin(list(markets))
    if unknown.any():
        line = int(unknown.idxmax())
        raise DataError(f"column 'market': '{market[line]}' is not in the market library "
                        "(leave it blank for an event of every market)", file=file, line=line)
    frame = pd.DataFrame({"date": parse_dates(raw["date"], "date", file, required=True),
                          "event": events, "market": market})
    if before is not None:
        frame = frame[frame["date"] < np.datetime64(before, "ns")]
    return EventTable(file=file, frame=frame.reset_index(drop=True))
