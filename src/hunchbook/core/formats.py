"""One number format for every text the project shows: tables, verdict reasons, the command
line and the journal.

Counts and money carry thousands separators (``4,513``); percentages read ``99.6 %`` (a space
before the sign, one decimal) and are never rounded up to ``100.0 %`` or down to ``0.0 %`` when
they are not exactly that (``> 99.9 %``, ``< 0.1 %``); dates read ``YYYY-MM-DD`` and moments
``YYYY-MM-DD HH:MM``.
"""

from __future__ import annotations

import math

from hunchbook.core.when import readable_time

#: Shown wherever a figure is missing or undefined.
MISSING = "—"


def count(n: float) -> str:
    """A count with thousands separators; one decimal when it is not whole (``12.5``)."""
    if not math.isfinite(n):
        return MISSING
    return f"{n:,.0f}" if float(n).is_integer() else f"{n:,.1f}"


def plural(n: int, word: str, many: str | None = None) -> str:
    """``1 trial``, ``2 trials``, ``4,513 days`` (``many`` when the plural is not word + s)."""
    return f"{count(n)} {word if n == 1 else many or word + 's'}"


def pct(p: float, decimals: int = 1) -> str:
    """A share as a percentage (``0.996`` -> ``99.6 %``); ``n/a`` when undefined.

    A share strictly between 0 and 1 never reads as 0 % or 100 %: it reads as ``< 0.1 %`` or
    ``> 99.9 %`` where rounding would say so.
    """
    if p is None or not math.isfinite(p):
        return "n/a"
    step = 10.0 ** -decimals
    shown = round(100.0 * p, decimals)
    if 0.0 < p < 1.0 and shown >= 100.0:
        return f"> {100.0 - step:.{decimals}f} %"
    if 0.0 < p < 1.0 and shown <= 0.0:
        return f"< {step:.{decimals}f} %"
    return f"{shown:,.{decimals}f} %"


def date(stamp: str) -> str:
    """The date of an ISO timestamp (``2025-05-12T09:01:00+00:00`` -> ``2025-05-12``)."""
    return readable_time(stamp, time=False)


def moment(stamp: str) -> str:
    """An ISO timestamp to the minute in UTC (``2025-05-12 09:01``): see
    :func:`hunchbook.core.when.readable_time`."""
    return readable_time(stamp)


__all__ = ["MISSING", "count", "date", "moment", "pct", "plural"]
