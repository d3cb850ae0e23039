"""How a stored time reads wherever people read it: ``2025-01-24 17:02`` (UTC), one format for
the window, the HTML report, the review pack and the command line."""

from __future__ import annotations

import datetime as dt


def readable_time(stamp: str | None, *, time: bool = True) -> str:
    """A stored timestamp (ISO 8601) as ``2025-01-24 17:02`` in UTC (``2025-01-24`` without
    ``time``; '' for none; text that is no timestamp comes back unchanged).

    >>> readable_time("2025-01-24T17:02:31.000000Z")
    '2025-01-24 17:02'
    """
    if not stamp:
        return ""
    try:
        moment = dt.datetime.fromisoformat(stamp.replace("Z", "+00:00"))
    except ValueError:
        return stamp
    if moment.tzinfo is not None:
        moment = moment.astimezone(dt.UTC)
    return moment.strftime("%Y-%m-%d %H:%M" if time else "%Y-%m-%d")
