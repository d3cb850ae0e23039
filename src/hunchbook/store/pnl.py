"""Daily P&L of a run's chosen parameter set, stored compactly.

Encoding: a NumPy ``.npz`` archive (zip-deflated, no pickled objects) holding ``days`` (int32
days since 1970-01-01) and the float64 columns ``gross_pnl``, ``cost`` and ``net_pnl``, and when
the run had a walk-forward test, ``walk_forward_net`` (its out-of-sample net P&L; NaN on the
days outside the test). Values round-trip exactly; ten years of days take roughly 60 kB before
compression.
"""

from __future__ import annotations

import io
import zipfile
from typing import TYPE_CHECKING

from hunchbook.store.errors import CatalogueError

if TYPE_CHECKING:  # imported where used: listing ideas or writing the journal needs neither
    import pandas as pd

#: Columns of a daily P&L frame (the index holds the dates).
PNL_COLUMNS = ("gross_pnl", "cost", "net_pnl")
#: The walk-forward test's out-of-sample net P&L: an optional column (NaN outside the test).
WALK_FORWARD = "walk_forward_net"
#: Most days in one stored P&L series (about 400 years of business days).
MAX_DAYS = 100_000


def clean(frame: object, field: str = "daily_pnl") -> pd.DataFrame:
    """Check a daily P&L frame: date index (sorted, unique), float columns :data:`PNL_COLUMNS`
    and optionally :data:`WALK_FORWARD`.

    Returns a float64 frame with a ``DatetimeIndex`` named ``date`` and exactly those columns.
    """
    import numpy as np
    import pandas as pd

    if not isinstance(frame, pd.DataFrame):
        raise CatalogueError(f"expected a pandas DataFrame, found {type(frame).__name__}",
                             field=field)
    missing = [c for c in PNL_COLUMNS if c not in frame.columns]
    if missing:
        raise CatalogueError(f"missing column(s) {', '.join(missing)}; expected "
                             f"{', '.join(PNL_COLUMNS)} with dates as the index", field=field)
    if len(frame) > MAX_DAYS:
        raise CatalogueError(f"{len(frame):,} days is over the limit of {MAX_DAYS:,}",
                             field=field)
    try:
        index = pd.DatetimeIndex(frame.index)
    except (TypeError, ValueError) as exc:
        raise CatalogueError(f"the index must hold dates ({exc})", field=field) from None
    if index.tz is not None:
        index = index.tz_localize(None)
    if index.hasnans or not index.is_monotonic_increasing or not index.is_unique:
        raise CatalogueError("dates must be present, increasing and unique", field=field)
    if (index != index.normalize()).any():
        raise CatalogueError("dates must be whole days (no time of day)", field=field)
    columns = [*PNL_COLUMNS, *([WALK_FORWARD] if WALK_FORWARD in frame.columns else [])]
    try:
        values = frame[columns].to_numpy(dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise CatalogueError(f"P&L columns must be numbers ({exc})", field=field) from None
    if np.isinf(values).any():
        raise CatalogueError("P&L values must not be infinite", field=field)
    return pd.DataFrame(values, index=index.rename("date"), columns=columns)


def encode(frame: pd.DataFrame) -> bytes:
    """Encode a frame checked by :func:`clean` as compressed bytes."""
    import numpy as np

    days = frame.index.to_numpy(dtype="datetime64[D]").astype(np.int64)
    buffer = io.BytesIO()
    np.savez_compressed(buffer, days=days.astype(np.int32),
                        **{c: frame[c].to_numpy(np.float64) for c in frame.columns})
    return buffer.getvalue()


def decode(blob: bytes) -> pd.DataFrame:
    """Decode bytes written by :func:`encode` back to the frame."""
    import numpy as np
    import pandas as pd

    try:
        with np.load(io.BytesIO(blob), allow_pickle=False) as archive:
            days = archive["days"].astype("datetime64[D]")
            data = {c: archive[c].astype(np.float64) for c in PNL_COLUMNS}
            if WALK_FORWARD in archive.files:
                data[WALK_FORWARD] = archive[WALK_FORWARD].astype(np.float64)
    except (OSError, ValueError, KeyError, zipfile.BadZipFile) as exc:
        raise CatalogueError(f"stored daily P&L cannot be read ({exc})",
                             field="daily_pnl") from None
    return pd.DataFrame(data, index=pd.DatetimeIndex(days.astype("datetime64[ns]"), name="date"))
