"""Reading one source file (CSV with any delimiter, or Parquet) into rows of the data folder's
shape: market, contract, expiry, date and the price columns, each row with its file and line."""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from hunchbook.core.data_import.columns import guess_date_format, guess_mapping, sniff_delimiter
from hunchbook.core.data_import.contracts import expiry_from_rule, parse_contract_name
from hunchbook.core.data_import.settings import ImportSettings
from hunchbook.core.errors import DataError

#: File name endings read as CSV text and as Parquet.
CSV_SUFFIXES = (".csv", ".txt", ".tsv")
PARQUET_SUFFIXES = (".parquet", ".pq")
#: The value columns a data folder keeps, in the order written.
VALUE_FIELDS = ("open", "high", "low", "close", "volume", "open_interest")


@dataclass(frozen=True)
class Skipped:
    """Lines (or a whole file, ``lines=()``) left out of an import, and why."""

    file: str
    lines: tuple[int, ...]
    reason: str

    def __str__(self) -> str:
        if not self.lines:
            return f"{self.file}: {self.reason}"
        shown = ", ".join(map(str, self.lines[:5])) + (", ..." if len(self.lines) > 5 else "")
        return f"{self.file}, line{'s' if len(self.lines) > 1 else ''} {shown}: {self.reason}"


@dataclass(frozen=True)
class SourceRows:
    """What one file gave: ``frame`` (columns market, contract, expiry, date, value columns,
    file, line; ``contract`` empty for an already-continuous series), its shape, and the
    lines skipped."""

    file: str
    shape: str
    frame: pd.DataFrame
    skipped: tuple[Skipped, ...]


def read_table(path: Path, settings: ImportSettings) -> tuple[pd.DataFrame, int]:
    """A source file's cells (text for CSV, typed for Parquet) and the line of its first row.

    Raises
    ------
    DataError
        When the file cannot be read as CSV (UTF-8) or Parquet.
    """
    file = str(path)
    if path.suffix.lower() in PARQUET_SUFFIXES:
        try:
            import pyarrow.parquet as pq  # lazily: only Parquet sources need it
        except ImportError:
            raise DataError("reading Parquet needs the pyarrow package", file=file) from None
        try:
            frame = pq.read_table(path).to_pandas()
        except Exception as exc:  # pyarrow's errors have no common base worth naming
            raise DataError(f"not a readable Parquet file ({str(exc).splitlines()[0]})",
                            file=file) from None
        if not isinstance(frame.index, pd.RangeIndex):
            frame = frame.reset_index()
        frame.index = pd.RangeIndex(1, len(frame) + 1)  # "line": the row number from 1
        return frame, 1
    try:
        with open(path, encoding="utf-8-sig") as handle:
            sample = handle.read(65536)
        delimiter = settings.delimiter or sniff_delimiter(sample, file=file)
        frame = pd.read_csv(path, sep=delimiter, dtype=str, keep_default_na=False,
                            skip_blank_lines=False, encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise DataError("file is not UTF-8 text", file=file) from None
    except pd.errors.EmptyDataError:
        raise DataError("file is empty (expected a header line and price rows)",
                        file=file) from None
    except pd.errors.ParserError as exc:
        raise DataError(f"not a readable CSV file ({str(exc).strip().splitlines()[0]})",
                        file=file) from None
    if not isinstance(frame.index, pd.RangeIndex):
        raise DataError("some rows have more fields than the header", file=file)
    frame.index = pd.RangeIndex(2, len(frame) + 2)  # the header is line 1
    blank = (frame.apply(lambda col: col.str.strip()) == "").all(axis=1)
    return frame[~blank], 2


def _dates(col: pd.Series, fmt: str | None, name: str, file: str) -> pd.Series:
    if pd.api.types.is_datetime64_any_dtype(col):
        return col.dt.tz_localize(None).dt.normalize() if col.dt.tz is not None \
            else col.dt.normalize()
    text = col.astype(str).str.strip()
    fmt = fmt or guess_date_format(text, file=file, column=name)
    parsed = pd.to_datetime(text, format=fmt, errors="coerce")
    bad = parsed.isna() & (text != "")
    if bad.any():
        line = int(bad.idxmax())
        raise DataError(f"column '{col.name}' ({name}): cannot read {text[line]!r} as a date "
                        f"(expected the format {fmt})", file=file, line=line)
    return parsed.dt.normalize()


def _numbers(col: pd.Series, name: str, file: str) -> pd.Series:
    if pd.api.types.is_numeric_dtype(col) and not pd.api.types.is_bool_dtype(col):
        return col.astype(float)
    text = col.astype(str).str.strip()
    parsed = pd.to_numeric(text.where(text != "", None), errors="coerce").astype(float)
    bad = (text != "") & ~np.isfinite(parsed)
    if bad.any():
        line = int(bad.idxmax())
        raise DataError(f"column '{col.name}' ({name}): cannot read {text[line]!r} as a "
                        "finite number", file=file, line=line)
    return parsed


def _rule_expiry(contracts: pd.Series, markets: pd.Series, settings: ImportSettings,
                 regex: re.Pattern[str], file: str) -> pd.Series:
    out = {}
    for code, market in set(zip(contracts, markets, strict=True)):
        name = parse_contract_name(code, regex)
        rule = settings.expiry.get(market) or settings.expiry.get("*")
        if name is None:
            raise DataError(f"contract '{code}' has no expiry column and its code does not "
                            f"match the pattern {settings.pattern!r}", file=file)
        if rule is None:
            raise DataError(f"no expiry for contract '{code}' (the file has no expiry column:"
                            f" give a rule with --expiry {market}=RULE)", file=file)
        out[code, market] = pd.Timestamp(expiry_from_rule(rule, name.year, name.month))
    return pd.Series([out[k] for k in zip(contracts, markets, strict=True)],
                     index=contracts.index, dtype="datetime64[ns]")


def read_source(path: Path, settings: ImportSettings, regex: re.Pattern[str]) -> SourceRows:
    """Read one source file; the shape is taken from its columns and name: a long file when a
    market column is mapped, a contract file when its name matches the pattern, otherwise one
    market's file named after the market (contract-level with a contract column, else an
    already-continuous series). Rows without a close are skipped and reported.

    Raises
    ------
    DataError
        Naming the file (and line): unreadable file, missing date or close column, a cell that
        does not read, a contract without expiry.
    """
    file = str(path)
    table, _ = read_table(path, settings)
    mapping = guess_mapping(table.columns, settings.mapping, file=file)
    missing = [f for f in ("date", "close") if f not in mapping]
    if missing:
        raise DataError(f"no column for {' and '.join(missing)} (columns: "
                        f"{', '.join(map(str, table.columns))}; name it with --map "
                        f"{missing[0]}=COLUMN)", file=file, line=1)
    if table.empty:
        return SourceRows(file, "empty", pd.DataFrame(), (Skipped(file, (), "no rows"),))
    frame = pd.DataFrame(index=table.index)
    frame["date"] = _dates(table[mapping["date"]], settings.date_format, "date", file)
    for name in VALUE_FIELDS:
        if name in mapping:
            frame[name] = _numbers(table[mapping[name]], name, file)
    contract_name = parse_contract_name(path.stem, regex)
    if "market" in mapping:
        shape = "long file"
        frame["market"] = table[mapping["market"]].astype(str).str.strip()
        blank = frame["market"] == ""
        if blank.any():
            raise DataError("market column is empty", file=file, line=int(blank.idxmax()))
    elif contract_name is not None and "contract" not in mapping:
        shape = "contract file"
        frame["market"] = contract_name.market
        frame["contract"] = contract_name.code
    else:
        shape = "market file"
        frame["market"] = path.stem
    if "contract" in mapping:
        frame["contract"] = table[mapping["contract"]].astype(str).str.strip()
    if "contract" not in frame:
        shape += " (continuous)"
        frame["contract"] = ""
        frame["expiry"] = pd.NaT
    elif "expiry" in mapping:
        frame["expiry"] = _dates(table[mapping["expiry"]], None, "expiry", file)
    else:
        frame["expiry"] = _rule_expiry(frame["contract"], frame["market"], settings, regex,
                                       file)
    no_close = frame["close"].isna()
    skipped = (Skipped(file, tuple(int(i) for i in frame.index[no_close]),
                       "no close price"),) if no_close.any() else ()
    frame = frame[~no_close]
    frame["file"] = file
    frame["line"] = frame.index.to_numpy()
    return SourceRows(file, shape, frame.reset_index(drop=True), skipped)
