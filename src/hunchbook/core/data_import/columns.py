"""What a source file's columns mean: the synonym registry, the guessed and confirmed column
mapping, the delimiter and the date format."""

from __future__ import annotations

import csv
import re
from collections.abc import Iterable, Mapping

import pandas as pd

from hunchbook.core.errors import DataError

#: Every field a source column can be mapped to, with the names it is known by (compared
#: in lower case without blanks or punctuation). One place: the guess, the docs and the
#: dialog read it.
SYNONYMS: dict[str, tuple[str, ...]] = {
    "date": ("date", "trade date", "trading date", "timestamp", "day", "as of date", "dt"),
    "market": ("market", "root", "product", "commodity", "symbol root"),
    "contract": ("contract", "contract code", "ticker", "instrument"),
    "expiry": ("expiry", "expiration", "expiration date", "expiry date", "last trade date",
               "last trading day", "maturity"),
    "open": ("open", "open price", "opening price"),
    "high": ("high", "high price"),
    "low": ("low", "low price"),
    "close": ("close", "settle", "settlement", "settlement price", "last", "close price",
              "closing price", "price"),
    "volume": ("volume", "vol", "total volume"),
    "open_interest": ("open interest", "open_interest", "oi"),
}
#: Date formats tried, in this order, when none is given.
DATE_FORMATS = ("%Y-%m-%d", "%Y%m%d", "%Y/%m/%d", "%d/%m/%Y", "%m/%d/%Y", "%d.%m.%Y",
                "%d-%b-%Y", "%d %b %Y", "%Y-%m-%d %H:%M:%S")
#: Delimiters the sniffer may choose between.
DELIMITERS = ",;\t|"


def _key(name: str) -> str:
    return re.sub(r"[^a-z0-9]", "", str(name).lower())


_BY_KEY = {_key(s): field for field, names in SYNONYMS.items() for s in names}


def guess_mapping(columns: Iterable[str], given: Mapping[str, str] | None = None,
                  *, file: str | None = None) -> dict[str, str]:
    """Field -> source column: the ``given`` mapping (field -> column name, as confirmed by
    the user) first, then the synonym registry for the fields still unmapped.

    Raises
    ------
    DataError
        When a given field is unknown or its column is not in the file.
    """
    columns = [str(c) for c in columns]
    mapping: dict[str, str] = {}
    for field, column in (given or {}).items():
        if field not in SYNONYMS:
            raise DataError(f"--map {field}=...: unknown field '{field}' (expected one of "
                            f"{', '.join(SYNONYMS)})")
        matches = [c for c in columns if c == column] or \
                  [c for c in columns if _key(c) == _key(column)]
        if not matches:
            raise DataError(f"--map {field}={column}: no column '{column}' (columns: "
                            f"{', '.join(columns)})", file=file, line=1)
        mapping[field] = matches[0]
    taken = set(mapping.values())
    for column in columns:
        field = _BY_KEY.get(_key(column))
        if field is not None and field not in mapping and column not in taken:
            mapping[field] = column
            taken.add(column)
    return mapping


def sniff_delimiter(sample: str, *, file: str | None = None) -> str:
    """The delimiter of a CSV sample (``csv.Sniffer`` over :data:`DELIMITERS`); a comma when
    the sample has a single column."""
    lines = [line for line in sample.splitlines() if line.strip()][:50]
    if not lines:
        raise DataError("file is empty (expected a header line and price rows)", file=file)
    try:
        return csv.Sniffer().sniff("\n".join(lines), delimiters=DELIMITERS).delimiter
    except csv.Error:
        return ","


def guess_date_format(text: pd.Series, *, file: str | None = None,
                      column: str = "date") -> str:
    """The format of :data:`DATE_FORMATS` that reads the most non-blank cells (a cell that
    it does not read is then reported where it is).

    Raises
    ------
    DataError
        When none reads any, or two read as many differently (day/month order unknown).
    """
    sample = text[text.str.strip() != ""].str.strip()
    readings = {fmt: pd.to_datetime(sample, format=fmt, errors="coerce")
                for fmt in DATE_FORMATS}
    counts = {fmt: int(parsed.notna().sum()) for fmt, parsed in readings.items()}
    most = max(counts.values(), default=0)
    if most == 0:
        first = sample.iloc[0] if len(sample) else ""
        raise DataError(f"column '{column}': cannot tell the date format of {first!r} (give "
                        "it with --date-format, e.g. %d/%m/%Y)", file=file)
    best = [fmt for fmt, n in counts.items() if n == most]
    for fmt in best[1:]:
        if not readings[fmt].equals(readings[best[0]]):
            raise DataError(f"column '{column}': dates read both as {best[0]} and as {fmt} "
                            "(give the format with --date-format)", file=file)
    return best[0]
