"""Reading a daily P&L CSV file (as written by ``hunchbook run --pnl-csv`` or by hand)."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pandas as pd

from hunchbook.core.errors import DataError

#: Largest P&L file read, in bytes.
MAX_FILE_BYTES = 500_000_000


def read_pnl_csv(path: str | os.PathLike[str]) -> pd.DataFrame:
    """Daily P&L summed over rows of the same date (for example several markets).

    The file needs ``date`` (YYYY-MM-DD) and ``net_pnl``; with ``gross_pnl`` and ``cost`` both
    present they are used as given, otherwise gross = net and cost = 0. Returns a frame indexed
    by date (ascending) with ``gross_pnl``, ``cost`` and ``net_pnl``.

    Raises
    ------
    DataError
        Naming the file and line: missing columns, unreadable dates or numbers, no rows.
    """
    file = str(path)
    p = Path(path)
    if not p.is_file():
        raise DataError("P&L file not found", file=file)
    if p.stat().st_size > MAX_FILE_BYTES:
        raise DataError(f"file is larger than {MAX_FILE_BYTES} bytes", file=file)
    try:
        raw = pd.read_csv(p, dtype=str, keep_default_na=False, encoding="utf-8")
    except UnicodeDecodeError:
        raise DataError("file is not UTF-8 text", file=file) from None
    except (pd.errors.EmptyDataError, pd.errors.ParserError):
        raise DataError("not a readable CSV file with a header line", file=file) from None
    raw.columns = [str(c).strip().lower() for c in raw.columns]
    missing = [c for c in ("date", "net_pnl") if c not in raw.columns]
    if missing:
        raise DataError(f"missing column(s) {', '.join(missing)} (expected date, net_pnl and "
                        "optionally gross_pnl, cost)", file=file, line=1)
    if raw.empty:
        raise DataError("file has a header but no rows", file=file)
    raw.index = pd.RangeIndex(2, len(raw) + 2)
    dates = pd.to_datetime(raw["date"].str.strip(), format="%Y-%m-%d", errors="coerce")
    if dates.isna().any():
        line = int(dates.isna().idxmax())
        raise DataError(f"column 'date': cannot read {raw.at[line, 'date']!r} as a date "
                        "(expected YYYY-MM-DD)", file=file, line=line)
    columns = ["gross_pnl", "cost", "net_pnl"] if {"gross_pnl", "cost"} <= set(raw) \
        else ["net_pnl"]
    frame = pd.DataFrame({"date": dates})
    for column in columns:
        values = pd.to_numeric(raw[column].str.strip(), errors="coerce")
        bad = ~np.isfinite(values.to_numpy(dtype=float))
        if bad.any():
            line = int(values.index[bad][0])
            raise DataError(f"column '{column}': cannot read {raw.at[line, column]!r} as a "
                            "finite number", file=file, line=line)
        frame[column] = values.astype(float)
    if "gross_pnl" not in frame:
        frame["gross_pnl"], frame["cost"] = frame["net_pnl"], 0.0
    return frame.groupby("date")[["gross_pnl", "cost", "net_pnl"]].sum().sort_index()
