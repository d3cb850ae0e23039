"""Price data import: a data folder with ``markets.toml`` and one ``<market>.csv`` per market.

A contract-level CSV has the columns ``date, contract, expiry, close`` (required) and
``open, high, low, volume, open_interest`` (optional); other columns are ignored. A CSV with
``date, close`` and no ``contract`` column is an already-continuous series.

Held-out years: ``load_data(..., before=D)`` drops every row dated on or after ``D`` as soon
as a file is read, before anything is built from it, so nothing downstream can read a later
price; its :func:`data_fingerprint` is then taken over the values read, not the whole files,
and :func:`market_fingerprints` gives one such digest per market.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import os
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from hunchbook.core.errors import DataError
from hunchbook.core.markets import LIBRARY_FILE, MarketSpec, read_market_library

if TYPE_CHECKING:
    from hunchbook.core.events import EventTable

#: Columns a contract-level file must have.
CONTRACT_COLUMNS = ("date", "contract", "expiry", "close")
#: Columns an already-continuous file must have.
CONTINUOUS_COLUMNS = ("date", "close")
#: Optional price columns (read and back-adjusted like ``close``).
PRICE_COLUMNS = ("open", "high", "low")
#: Optional activity columns (volume and open interest are never adjusted).
ACTIVITY_COLUMNS = ("volume", "open_interest")
#: Largest price file read, in bytes.
MAX_FILE_BYTES = 2_000_000_000
#: Read clean price files with pandas' C parser (anything irregular is read again, as text, by
#: the checking path); the tests switch it off to compare the two.
FAST_READ = True


@dataclass(frozen=True)
class MarketBars:
    """One market's raw rows as read from its CSV.

    ``frame`` has a datetime ``date``, text ``contract``, datetime ``expiry``, float ``close``,
    any optional columns present, and ``line`` (the 1-based line in the file).
    For an already-continuous file, ``contract`` holds the market symbol and ``expiry`` is NaT.
    """

    market: str
    file: str
    frame: pd.DataFrame
    continuous: bool

    @property
    def columns(self) -> frozenset[str]:
        """The optional columns this file provides."""
        return frozenset(c for c in (*PRICE_COLUMNS, *ACTIVITY_COLUMNS) if c in self.frame)


@dataclass(frozen=True)
class MarketData:
    """A data folder's market library, the raw rows of the markets read from it and, once a
    rule reads events, its events (:func:`hunchbook.core.events.read_events`).

    ``before`` is the holdout boundary the rows were cut at (``None``: the whole history);
    ``held_out_days`` counts the distinct dates on or after it that the files held (their
    prices were dropped unread).
    """

    folder: str
    library: dict[str, MarketSpec]
    bars: dict[str, MarketBars]
    events: EventTable | None = None
    before: dt.date | None = None
    held_out_days: int = 0


def load_data(folder: str | os.PathLike[str], markets: Iterable[str] | None = None, *,
              before: dt.date | None = None) -> MarketData:
    """Read a data folder: its market library and the CSV of each market asked for.

    Parameters
    ----------
    folder
        Folder holding ``markets.toml`` and ``<market>.csv`` files.
    markets
        Markets to read; all markets of the library when omitted.
    before
        Holdout boundary: keep only rows dated before it (a contract left without rows is
        gone with them); ``None`` keeps the whole history.

    Raises
    ------
    DataError
        When the folder, a market's file or a market's library entry is missing, or a file is
        bad, or a market has no rows before ``before``.
    MarketSpecError
        When the market library is bad.
    """
    root = Path(folder)
    if not root.is_dir():
        raise DataError("data folder not found", file=str(folder))
    library_path = root / LIBRARY_FILE
    if not library_path.is_file():
        raise DataError(f"data folder has no {LIBRARY_FILE} (the market library)", file=str(folder))
    library = read_market_library(library_path)
    wanted = list(library) if markets is None else list(dict.fromkeys(markets))
    bars = {}
    for market in wanted:
        if market not in library:
            raise DataError(f"market '{market}' is not in the market library "
                            f"(known: {', '.join(sorted(library))})", file=str(library_path))
        path = root / f"{market}.csv"
        if not path.is_file():
            raise DataError(f"no price file for market '{market}' (expected {path.name})",
                            file=str(root))
        bars[market] = read_market_csv(path, market)
    if before is None:
        return MarketData(folder=str(root), library=library, bars=bars)
    whole = MarketData(folder=str(root), library=library, bars=bars)
    return MarketData(folder=str(root), library=library,
                      bars={m: cut_bars(b, before) for m, b in bars.items()}, before=before,
                      held_out_days=len(held_out_dates(whole, before)))


def held_out_dates(data: MarketData, before: dt.date) -> list[dt.date]:
    """The distinct dates on or after ``before`` on which any market read has a row."""
    cut = np.datetime64(before, "ns")
    dates = [b.frame.loc[b.frame["date"] >= cut, "date"].to_numpy() for b in data.bars.values()]
    found = np.unique(np.concatenate(dates)) if dates else np.array([], "datetime64[ns]")
    return [dt.date.fromisoformat(str(d)[:10]) for d in found.astype("datetime64[D]")]


def cut_bars(bars: MarketBars, before: dt.date) -> MarketBars:
    """A market's rows dated before ``before`` (the holdout boundary).

    Raises
    ------
    DataError
        Naming the file, when no row is dated before the boundary.
    """
    frame = bars.frame[bars.frame["date"] < np.datetime64(before, "ns")]
    if frame.empty:
        raise DataError(f"no price rows before the holdout boundary {before.isoformat()} "
                        f"(the first is dated {bars.frame['date'].iloc[0].date()})",
                        file=bars.file)
    return MarketBars(market=bars.market, file=bars.file, frame=frame.reset_index(drop=True),
                      continuous=bars.continuous)


def data_fingerprint(data: MarketData) -> str:
    """SHA-256 over the market library, the price files read, in market order, and the events
    file when it was read.

    For data cut at a holdout boundary (``data.before``) the price files and events enter by
    the values read (:func:`frame_digest`), so that rows on or after the boundary change
    nothing.
    """
    if data.before is not None:
        return _cut_fingerprint(data)
    digest = hashlib.sha256()
    root = Path(data.folder)
    paths = [root / LIBRARY_FILE, *(Path(b.file) for b in data.bars.values())]
    if data.events is not None and data.events.file is not None:
        paths.append(Path(data.events.file))
    for path in paths:
        digest.update(path.name.encode() + b"\0")
        with open(path, "rb") as handle:
            for block in iter(lambda: handle.read(1 << 20), b""):
                digest.update(block)
    return digest.hexdigest()


def market_fingerprints(data: MarketData) -> dict[str, str]:
    """One SHA-256 per market read, in market order: the price file's name and the rows read
    from it (:func:`frame_bytes`, the bytes :func:`data_fingerprint` takes for cut data).

    Rows dropped at the holdout boundary (``data.before``) never enter, and the digest is the
    same whichever path read the file (:data:`FAST_READ`), so that a market's digest changes
    exactly when a price of it that a run reads changes.
    """
    out = {}
    for market, bars in data.bars.items():
        digest = hashlib.sha256(Path(bars.file).name.encode() + b"\0")
        for chunk in frame_bytes(bars.frame.drop(columns="line")):
            digest.update(chunk)
        out[market] = digest.hexdigest()
    return out


def _cut_fingerprint(data: MarketData) -> str:
    assert data.before is not None
    digest = hashlib.sha256(f"before {data.before.isoformat()}\0".encode())
    library = Path(data.folder) / LIBRARY_FILE
    digest.update(library.name.encode() + b"\0" + library.read_bytes())
    for bars in data.bars.values():
        digest.update(Path(bars.file).name.encode() + b"\0")
        for chunk in frame_bytes(bars.frame.drop(columns="line")):
            digest.update(chunk)
    if data.events is not None and data.events.file is not None:
        digest.update(Path(data.events.file).name.encode() + b"\0")
        for chunk in frame_bytes(data.events.frame):
            digest.update(chunk)
    return digest.hexdigest()


def frame_bytes(frame: pd.DataFrame) -> Iterator[bytes]:
    """A frame's values as bytes, column by column in name order: the column's name and row
    count, then its values (numbers and dates in their 8-byte binary form, every NaN and NaT
    alike; text as UTF-8, each value ended by a zero byte)."""
    for name in sorted(frame.columns):
        column = frame[name]
        yield f"{name}\0{len(column)}\0".encode()
        if pd.api.types.is_datetime64_any_dtype(column):
            yield column.to_numpy(dtype="datetime64[ns]").view(np.int64).tobytes()
        elif pd.api.types.is_numeric_dtype(column):
            values = column.to_numpy(dtype=float, copy=True)
            values[np.isnan(values)] = np.nan  # one NaN pattern
            yield values.tobytes()
        else:
            yield "".join(f"{v}\0" for v in column).encode()


def read_market_csv(path: str | os.PathLike[str], market: str) -> MarketBars:
    """Read and validate one market's price file; see the module docstring for the columns.

    A clean file (the common case) is read by pandas' C parser straight into numbers and
    dates; a file with anything irregular in it is read again as text by the checking path,
    whose messages name the line and the field (:data:`FAST_READ`).

    Raises
    ------
    DataError
        Naming the file and line: missing columns, unparsable dates or numbers, duplicate rows,
        a contract with no expiry or with two different expiries, or an empty file.
    """
    file = str(path)
    read = _read_clean(path, market) if FAST_READ else None
    frame, continuous = _read_checked(path, market) if read is None else read
    _check_duplicates(frame, file, continuous)
    frame["line"] = frame.index.to_numpy()
    frame = frame.sort_values(["date", "expiry", "contract"], kind="stable").reset_index(drop=True)
    return MarketBars(market=market, file=file, frame=frame, continuous=continuous)


def _read_checked(path: str | os.PathLike[str], market: str) -> tuple[pd.DataFrame, bool]:
    """Every cell read as text and checked: the first problem raises, naming its line."""
    file = str(path)
    raw = read_csv_text(path, "price rows")
    continuous = "contract" not in raw.columns
    required = CONTINUOUS_COLUMNS if continuous else CONTRACT_COLUMNS
    missing = [c for c in required if c not in raw.columns]
    if missing:
        raise DataError(f"missing column(s) {', '.join(missing)} (expected at least "
                        f"{', '.join(CONTRACT_COLUMNS)}, or {', '.join(CONTINUOUS_COLUMNS)} for "
                        "an already-continuous series)", file=file, line=1)
    if raw.empty:
        raise DataError("file has a header but no price rows", file=file)

    frame = pd.DataFrame(index=raw.index)
    frame["date"] = parse_dates(raw["date"], "date", file, required=True)
    if continuous:
        frame["contract"] = market
        frame["expiry"] = pd.NaT
    else:
        frame["contract"] = _parse_contracts(raw["contract"], file)
        frame["expiry"] = parse_dates(raw["expiry"], "expiry", file, required=False)
        _check_expiries(frame, file)
    frame["close"] = _parse_numbers(raw["close"], "close", file, required=True)
    for col in (*PRICE_COLUMNS, *ACTIVITY_COLUMNS):
        if col in raw.columns:
            frame[col] = _parse_numbers(raw[col], col, file, required=False)
    return frame, continuous


def _read_clean(path: str | os.PathLike[str], market: str) -> tuple[pd.DataFrame, bool] | None:
    """The frame :func:`_read_checked` gives, read by the C parser, or ``None`` at the first
    sign of anything irregular (a blank line or cell, a number that is not finite, a date that
    does not read, an odd header, a parser error, ...), so that the checking path reads it."""
    file = str(path)
    if Path(path).stat().st_size > MAX_FILE_BYTES:
        return None
    try:
        header = pd.read_csv(path, nrows=0, encoding="utf-8").columns
        names = {raw: str(raw).strip().lower() for raw in header}
        if len(set(names.values())) != len(names):
            return None
        continuous = "contract" not in names.values()
        required = CONTINUOUS_COLUMNS if continuous else CONTRACT_COLUMNS
        texts = ("date", "expiry") if continuous else ("date", "contract", "expiry")
        known = (*required, *PRICE_COLUMNS, *ACTIVITY_COLUMNS)
        if not set(required) <= set(names.values()):
            return None
        dtypes = {raw: str if name in texts else np.float64
                  for raw, name in names.items() if name in known}
        raw = pd.read_csv(path, dtype=dtypes, keep_default_na=False, skip_blank_lines=False,
                          encoding="utf-8")
        if not isinstance(raw.index, pd.RangeIndex) or list(raw.columns) != list(names):
            return None  # rows longer than the header, read by pandas as an index
        raw.columns = [names[c] for c in raw.columns]
        numbers = [c for c in known if c in raw.columns and c not in texts]
        if raw.empty or not np.isfinite(raw[numbers].to_numpy()).all():
            return None
        raw.index = pd.RangeIndex(2, len(raw) + 2)
        frame = pd.DataFrame(index=raw.index)
        # cells with blanks around them do not read as dates here (the checking path strips
        # them); contract codes are checked once per code
        frame["date"] = pd.to_datetime(raw["date"], format="%Y-%m-%d", errors="coerce")
        if continuous:
            frame["contract"] = market
            frame["expiry"] = pd.NaT
        else:
            if any(code != code.strip() or not code for code in raw["contract"].unique()):
                return None
            frame["contract"] = raw["contract"]
            frame["expiry"] = pd.to_datetime(raw["expiry"], format="%Y-%m-%d", errors="coerce")
        if frame["date"].isna().any() or (not continuous and frame["expiry"].isna().any()):
            return None
        for col in ("close", *PRICE_COLUMNS, *ACTIVITY_COLUMNS):
            if col in raw.columns:
                frame[col] = raw[col]
    except Exception:  # any problem at all: the checking path finds it and names it
        return None
    if not continuous:
        _check_expiries(frame, file)
    return frame, continuous


def read_csv_text(path: str | os.PathLike[str], rows: str) -> pd.DataFrame:
    """A CSV file's cells as text, its column names in lower case without blanks around them,
    indexed by line number (the header is line 1), lines without any text dropped.

    ``rows`` says what the lines after the header hold, for the message about an empty file.

    Raises
    ------
    DataError
        Naming the file: too large, not UTF-8, empty, or not readable as CSV.
    """
    file = str(path)
    if Path(path).stat().st_size > MAX_FILE_BYTES:
        raise DataError(f"file is larger than {MAX_FILE_BYTES} bytes", file=file)
    try:
        raw = pd.read_csv(path, dtype=str, keep_default_na=False, skip_blank_lines=False,
                          encoding="utf-8")
    except UnicodeDecodeError:
        raise DataError("file is not UTF-8 text", file=file) from None
    except pd.errors.EmptyDataError:
        raise DataError(f"file is empty (expected a header line and {rows})",
                        file=file) from None
    except pd.errors.ParserError as exc:
        raise DataError(f"not a readable CSV file ({_first_line(exc)})", file=file) from None
    raw.columns = [str(c).strip().lower() for c in raw.columns]
    twice = raw.columns[raw.columns.duplicated()]
    if len(twice):
        raise DataError(f"column '{twice[0]}' appears more than once in the header",
                        file=file, line=1)
    raw.index = pd.RangeIndex(2, len(raw) + 2)  # line numbers: the header is line 1
    return raw[~(raw.apply(lambda col: col.str.strip()) == "").all(axis=1)]


def _first_line(exc: Exception) -> str:
    return str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__


def parse_dates(col: pd.Series, name: str, file: str, *, required: bool) -> pd.Series:
    """A column of ``YYYY-MM-DD`` text as dates (NaT where blank and not ``required``).

    Raises
    ------
    DataError
        Naming the file and the first line whose cell is not such a date (or is blank).
    """
    text = col.str.strip()
    parsed = pd.to_datetime(text, format="%Y-%m-%d", errors="coerce")
    bad = parsed.isna() & (text != "")
    if bad.any():
        line = int(bad.idxmax())
        raise DataError(f"column '{name}': cannot read {text[line]!r} as a date "
                        "(expected YYYY-MM-DD)", file=file, line=line)
    if required and (text == "").any():
        line = int((text == "").idxmax())
        raise DataError(f"column '{name}' is empty (expected a date YYYY-MM-DD)",
                        file=file, line=line)
    return parsed


def _parse_numbers(col: pd.Series, name: str, file: str, *, required: bool) -> pd.Series:
    text = col.str.strip()
    parsed = pd.to_numeric(text.where(text != "", None), errors="coerce").astype(float)
    bad = (text != "") & ~np.isfinite(parsed)
    if bad.any():
        line = int(bad.idxmax())
        raise DataError(f"column '{name}': cannot read {text[line]!r} as a finite number",
                        file=file, line=line)
    if required and (text == "").any():
        line = int((text == "").idxmax())
        raise DataError(f"column '{name}' is empty (expected a number)", file=file, line=line)
    return parsed


def _parse_contracts(col: pd.Series, file: str) -> pd.Series:
    text = col.str.strip()
    if (text == "").any():
        line = int((text == "").idxmax())
        raise DataError("column 'contract' is empty (expected a contract code)",
                        file=file, line=line)
    return text


def _check_expiries(frame: pd.DataFrame, file: str) -> None:
    no_expiry = frame["expiry"].isna()
    if no_expiry.any():
        line = int(no_expiry.idxmax())
        raise DataError(f"contract '{frame.at[line, 'contract']}' has no expiry "
                        "(expected a date YYYY-MM-DD in column 'expiry')", file=file, line=line)
    expiries = frame.groupby("contract")["expiry"].transform("first")
    clash = frame["expiry"] != expiries
    if clash.any():
        line = int(clash.idxmax())
        contract = frame.at[line, "contract"]
        raise DataError(f"contract '{contract}' has expiry {frame.at[line, 'expiry'].date()} here "
                        f"but {expiries[line].date()} on an earlier line", file=file, line=line)


def _check_duplicates(frame: pd.DataFrame, file: str, continuous: bool) -> None:
    keys = ["date"] if continuous else ["date", "contract"]
    dup = frame.duplicated(keys, keep="first")
    if dup.any():
        line = int(dup.idxmax())
        row = frame.loc[line]
        first = int(frame.index[(frame[keys] == row[keys]).all(axis=1)][0])
        what = f"date {row['date'].date()}"
        if not continuous:
            what += f", contract '{row['contract']}'"
        raise DataError(f"duplicate row for {what} (first seen on line {first})",
                        file=file, line=line)
