"""Reading one source file (CSV with any delimiter, or Parquet) into rows of the data folder's
shape: market, contract, expiry, date and the price columns, each row with its file and line."""

from __future__ import annotations

import io
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
class SourceFile:
    """One file read: its shape and the lines skipped."""

    file: str
    shape: str
    skipped: tuple[Skipped, ...]


@dataclass(frozen=True)
class Table:
    """The cells of one or more source files with the same header (text for CSV, typed for
    Parquet), one row per data line: ``file`` indexes ``paths`` and ``line`` is the line in
    that file (for Parquet, the row number from 1)."""

    paths: tuple[Path, ...]
    cells: pd.DataFrame
    file: np.ndarray
    line: np.ndarray


def _read_parquet(path: Path) -> Table:
    file = str(path)
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
    frame = frame.reset_index(drop=True)
    return Table((path,), frame, np.zeros(len(frame), int), np.arange(1, len(frame) + 1))


def _read_csv(paths: list[Path], delimiter: str, header: bytes) -> Table:
    """Files with the same header read as one: their data lines joined after one header."""
    bodies = []
    for path in paths:
        data = path.read_bytes()
        body = data[data.index(b"\n") + 1:] if b"\n" in data else b""
        if body and not body.endswith(b"\n"):
            body += b"\n"
        bodies.append(body)
    counts = np.array([b.count(b"\n") for b in bodies])
    file = str(paths[0]) if len(paths) == 1 else f"{paths[0].parent}"
    try:
        cells = pd.read_csv(io.BytesIO(header + b"\n" + b"".join(bodies)), sep=delimiter,
                            dtype=str, keep_default_na=False, skip_blank_lines=False,
                            encoding="utf-8")
    except UnicodeDecodeError:
        raise DataError("file is not UTF-8 text", file=file) from None
    except pd.errors.ParserError as exc:
        if len(paths) > 1:  # name the file at fault
            for path in paths:
                _read_csv([path], delimiter, header)
        raise DataError(f"not a readable CSV file ({str(exc).strip().splitlines()[0]})",
                        file=file) from None
    if not isinstance(cells.index, pd.RangeIndex):
        if len(paths) > 1:
            for path in paths:
                _read_csv([path], delimiter, header)
        raise DataError("some rows have more fields than the header", file=file)
    if len(cells) != counts.sum():  # quoted line breaks: line numbers file by file
        if len(paths) > 1:
            return _concat([_read_csv([p], delimiter, header) for p in paths])
        counts = np.array([len(cells)])
    which = np.repeat(np.arange(len(paths)), counts)
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]])
    line = np.arange(len(cells)) - starts[which] + 2  # the header is line 1
    blank = (cells.fillna("") == "").all(axis=1).to_numpy()
    return Table(tuple(paths), cells[~blank].reset_index(drop=True), which[~blank], line[~blank])


def _concat(tables: list[Table]) -> Table:
    offsets = np.cumsum([0, *(len(t.paths) for t in tables[:-1])])
    return Table(tuple(p for t in tables for p in t.paths),
                 pd.concat([t.cells for t in tables], ignore_index=True),
                 np.concatenate([t.file + k for t, k in zip(tables, offsets, strict=True)]),
                 np.concatenate([t.line for t in tables]))


def read_tables(paths: list[Path], settings: ImportSettings) -> list[Table]:
    """The source files' cells: each Parquet file a table, CSV files grouped by delimiter
    and header (so a folder of contract files is parsed as one table).

    Raises
    ------
    DataError
        When a file cannot be read as CSV (UTF-8) or Parquet, or is empty.
    """
    tables, groups = [], {}
    for path in paths:
        if path.suffix.lower() in PARQUET_SUFFIXES:
            tables.append(_read_parquet(path))
            continue
        with open(path, "rb") as handle:
            sample = handle.read(8192)
        try:
            text = sample.decode("utf-8")
        except UnicodeDecodeError as exc:
            if exc.start < len(sample) - 4:
                raise DataError("file is not UTF-8 text", file=str(path)) from None
            text = sample[:exc.start].decode("utf-8")
        if text.startswith("\ufeff"):
            text = text[1:]
        delimiter = settings.delimiter or sniff_delimiter(text, file=str(path))
        header = text.split("\n", 1)[0].rstrip("\r").encode("utf-8")
        groups.setdefault((delimiter, header), []).append(path)
    tables += [_read_csv(group, delimiter, header) for (delimiter, header), group in
               groups.items()]
    return tables


def _fail(table: Table, at: np.ndarray, problem: str) -> DataError:
    """The error for the first row flagged in ``at``, naming its file and line."""
    pos = int(np.argmax(at))
    return DataError(problem.format(row=pos), file=str(table.paths[table.file[pos]]),
                     line=int(table.line[pos]))


def _dates(table: Table, column: str, fmt: str | None, name: str) -> pd.Series:
    col = table.cells[column]
    if pd.api.types.is_datetime64_any_dtype(col):
        if col.dt.tz is not None:
            col = col.dt.tz_localize(None)
        parsed, text = col.dt.normalize(), col.astype(str)
    else:
        text = col.astype(str).str.strip()
        if fmt is None:
            filled = text[text != ""]
            step = max(1, len(filled) // 2000)
            fmt = guess_date_format(filled.iloc[::step], file=str(table.paths[0]),
                                    column=column)
        parsed = pd.to_datetime(text, format=fmt, errors="coerce")
        bad = (parsed.isna() & (text != "")).to_numpy()
        if bad.any():
            value = text.iloc[int(np.argmax(bad))]
            raise _fail(table, bad, f"column '{column}' ({name}): cannot read {value!r} as a "
                                    f"date (expected the format {fmt})")
        parsed = parsed.dt.normalize()
    return parsed


def _numbers(table: Table, column: str, name: str) -> pd.Series:
    col = table.cells[column]
    if pd.api.types.is_numeric_dtype(col) and not pd.api.types.is_bool_dtype(col):
        return col.astype(float)
    text = col.astype(str).str.strip()
    parsed = pd.to_numeric(text.where(text != "", None), errors="coerce").astype(float)
    bad = ((text != "") & ~np.isfinite(parsed)).to_numpy()
    if bad.any():
        value = text.iloc[int(np.argmax(bad))]
        raise _fail(table, bad, f"column '{column}' ({name}): cannot read {value!r} as a "
                                "finite number")
    return parsed


def _rule_expiry(table: Table, frame: pd.DataFrame, settings: ImportSettings,
                 regex: re.Pattern[str]) -> pd.Series:
    keys = frame["market"] + "\0" + frame["contract"]
    out = {}
    for key in keys.unique():
        market, code = key.split("\0")
        name = parse_contract_name(code, regex)
        rule = settings.expiry.get(market) or settings.expiry.get("*")
        at = None if name is not None and rule is not None else (keys == key).to_numpy()
        if name is None:
            raise _fail(table, at, f"contract '{code}' has no expiry column and its code does "
                                   f"not match the pattern {settings.pattern!r}")
        if rule is None:
            raise _fail(table, at, f"no expiry for contract '{code}' (no expiry column: give "
                                   f"a rule with --expiry {market}=RULE)")
        out[key] = pd.Timestamp(expiry_from_rule(rule, name.year, name.month))
    return keys.map(out).astype("datetime64[ns]")


def read_rows(table: Table, settings: ImportSettings,
              regex: re.Pattern[str]) -> tuple[pd.DataFrame, list[SourceFile]]:
    """A table's rows in the data folder's shape (columns date, value columns, market,
    contract, expiry, file, line; ``contract`` empty for an already-continuous series), and
    each file's shape and skipped lines. A file is a long file when a
    market column is mapped, a contract file when its name matches the pattern, otherwise one
    market's file named after the market (contract-level with a contract column, else an
    already-continuous series). Rows without a close are skipped and reported.

    Raises
    ------
    DataError
        Naming the file (and line): a missing date or close column, a cell that does not
        read, a contract without expiry.
    """
    first = str(table.paths[0]) if len(table.paths) == 1 else None
    mapping = guess_mapping(table.cells.columns, settings.mapping, file=first)
    missing = [f for f in ("date", "close") if f not in mapping]
    if missing:
        raise DataError(f"no column for {' and '.join(missing)} (columns: "
                        f"{', '.join(map(str, table.cells.columns))}; name it with --map "
                        f"{missing[0]}=COLUMN)", file=str(table.paths[0]), line=1)
    names = [parse_contract_name(p.stem, regex) for p in table.paths]
    if "market" in mapping:
        shapes = ["long file"] * len(table.paths)
    else:
        shapes = ["contract file" if n is not None and "contract" not in mapping
                  else "market file" for n in names]
    frame = pd.DataFrame(index=table.cells.index)
    frame["date"] = _dates(table, mapping["date"], settings.date_format, "date")
    no_date = frame["date"].isna().to_numpy()
    if no_date.any():
        raise _fail(table, no_date, f"column '{mapping['date']}' (date) is empty")
    for name in VALUE_FIELDS:
        if name in mapping:
            frame[name] = _numbers(table, mapping[name], name)
    if "market" in mapping:
        frame["market"] = table.cells[mapping["market"]].astype(str).str.strip()
        blank = (frame["market"] == "").to_numpy()
        if blank.any():
            raise _fail(table, blank, f"column '{mapping['market']}' (market) is empty")
    else:
        markets = [n.market if s == "contract file" else p.stem
                   for n, s, p in zip(names, shapes, table.paths, strict=True)]
        frame["market"] = np.array(markets, dtype=object)[table.file]
    if "contract" in mapping:
        frame["contract"] = table.cells[mapping["contract"]].astype(str).str.strip()
    elif "contract file" in shapes:
        codes = [n.code if s == "contract file" else ""
                 for n, s in zip(names, shapes, strict=True)]
        frame["contract"] = np.array(codes, dtype=object)[table.file]
    else:
        frame["contract"] = ""
    continuous = (frame["contract"] == "").to_numpy()
    frame["expiry"] = pd.Series(pd.NaT, index=frame.index, dtype="datetime64[ns]")
    if "expiry" in mapping:
        frame["expiry"] = _dates(table, mapping["expiry"], None, "expiry")
    elif not continuous.all():
        held = ~continuous
        frame.loc[held, "expiry"] = _rule_expiry(_subset(table, held), frame[held], settings,
                                                 regex)
    frame["file"] = np.array([str(p) for p in table.paths], dtype=object)[table.file]
    frame["line"] = table.line
    no_close = frame["close"].isna().to_numpy()
    lost = pd.Series(table.line[no_close]).groupby(table.file[no_close]).agg(tuple)
    rows = np.bincount(table.file, minlength=len(table.paths))
    out = []
    for k, path in enumerate(table.paths):
        shape = shapes[k] + (" (continuous)" if "contract" not in mapping
                             and shapes[k] != "contract file" else "")
        skipped = (Skipped(str(path), tuple(map(int, lost[k])), "no close price"),) \
            if k in lost.index else ()
        if rows[k] == 0:
            skipped += (Skipped(str(path), (), "no price rows"),)
        out.append(SourceFile(str(path), shape, skipped))
    return frame[~no_close].reset_index(drop=True), out


def _subset(table: Table, rows: np.ndarray) -> Table:
    return Table(table.paths, table.cells[rows], table.file[rows], table.line[rows])
