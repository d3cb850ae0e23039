"""An import: sources read, gathered per market, checked, and written into a data folder
whole or not at all, with the report of what was read and skipped."""

from __future__ import annotations

import contextlib
import os
import shutil
import tempfile
from dataclasses import dataclass, replace
from pathlib import Path

import pandas as pd
import tomlkit
from tomlkit.exceptions import TOMLKitError

from hunchbook.core.data_import.contracts import pattern_regex
from hunchbook.core.data_import.read import (
    CSV_SUFFIXES,
    PARQUET_SUFFIXES,
    VALUE_FIELDS,
    Skipped,
    SourceFile,
    read_rows,
    read_tables,
)
from hunchbook.core.data_import.settings import (
    SETTINGS_FILE,
    ImportSettings,
    read_settings,
    settings_text,
)
from hunchbook.core.errors import DataError
from hunchbook.core.markets import LIBRARY_FILE, read_market_library
from hunchbook.core.prices import read_market_csv


@dataclass(frozen=True)
class MarketWritten:
    """One market file written: rows, contracts (0 for an already-continuous series), first
    and last date, and how many source files gave it rows."""

    market: str
    rows: int
    contracts: int
    first: str
    last: str
    files: int


@dataclass(frozen=True)
class ImportReport:
    """What an import read, wrote and skipped (and why)."""

    folder: str
    files_read: int
    shapes: dict[str, int]
    markets: tuple[MarketWritten, ...]
    skipped: tuple[Skipped, ...]
    library_added: tuple[str, ...]


def source_files(sources: tuple[str, ...]) -> tuple[list[Path], list[Skipped]]:
    """The files the sources name (a folder: its files, not its subfolders, in name order),
    and those left out because they are neither CSV nor Parquet.

    Raises
    ------
    DataError
        When a source does not exist.
    """
    files, skipped = [], []
    for source in sources:
        path = Path(source)
        if path.is_dir():
            found = sorted(p for p in path.iterdir() if p.is_file())
        elif path.is_file():
            found = [path]
        else:
            raise DataError("source not found (expected a file or a folder)", file=source)
        for item in found:
            if item.name.startswith(".") or item.name in (LIBRARY_FILE, SETTINGS_FILE):
                continue
            if item.suffix.lower() in CSV_SUFFIXES + PARQUET_SUFFIXES:
                files.append(item)
            else:
                skipped.append(Skipped(str(item), (), "not a CSV or Parquet file"))
    return files, skipped


def _where(row: pd.Series) -> str:
    return f"{row['file']}, line {row['line']}"


def market_frame(market: str, rows: pd.DataFrame) -> pd.DataFrame:
    """One market's rows in the data folder's columns, sorted by date and expiry.

    Raises
    ------
    DataError
        Naming the files and lines: continuous and contract rows mixed, a date given twice
        (for one contract), a contract with two expiries.
    """
    continuous = rows["contract"] == ""
    if continuous.any() and not continuous.all():
        one, other = rows[continuous].iloc[0], rows[~continuous].iloc[0]
        raise DataError(f"market '{market}' has an already-continuous series here and "
                        f"contract rows in {_where(other)}", file=one["file"], line=one["line"])
    keys = ["date"] if continuous.all() else ["date", "contract"]
    twice = rows.duplicated(keys, keep=False)
    if twice.any():
        both = rows[twice].sort_values([*keys, "file", "line"]).iloc[:2]
        first, second = both.iloc[0], both.iloc[1]
        what = f"{second['date'].date()}" + ("" if continuous.all()
                                              else f", contract '{second['contract']}'")
        raise DataError(f"market '{market}': a second row for {what} (the first is in "
                        f"{_where(first)})", file=second["file"], line=second["line"])
    if not continuous.all():
        expiries = rows.groupby("contract")["expiry"].transform("first")
        clash = rows["expiry"] != expiries
        if clash.any():
            row = rows[clash].iloc[0]
            raise DataError(f"contract '{row['contract']}' has expiry {row['expiry'].date()} "
                            f"here but {expiries[clash].iloc[0].date()} elsewhere",
                            file=row["file"], line=row["line"])
    values = [c for c in VALUE_FIELDS if c in rows and rows[c].notna().any()]
    out = rows.sort_values(["date", "expiry", "contract"], kind="stable")
    columns = ["date", *([] if continuous.all() else ["contract", "expiry"]), *values]
    out = out[columns].copy()
    out["date"] = out["date"].dt.strftime("%Y-%m-%d")
    if "expiry" in out:
        out["expiry"] = out["expiry"].dt.strftime("%Y-%m-%d")
    return out


def _library_text(folder: Path, markets: list[str], library: str | None) -> tuple[str | None,
                                                                                   list[str]]:
    """The folder's new ``markets.toml`` (``None``: unchanged) and the markets added to it.

    Raises
    ------
    DataError
        When a market is in neither the folder's library nor ``library``.
    """
    own = folder / LIBRARY_FILE
    known = read_market_library(own) if own.is_file() else {}
    missing = [m for m in markets if m not in known]
    if not missing:
        return None, []
    if library is None:
        where = own if own.is_file() else f"{own} (not there yet)"
        raise DataError(f"market(s) {', '.join(missing)} not in the market library {where}: "
                        "add their contract specifications there, or give --library FILE "
                        "to copy them from a library file")
    source = read_market_library(library)
    absent = [m for m in missing if m not in source]
    if absent:
        raise DataError(f"market(s) {', '.join(absent)} not in the market library "
                        "(expected a table per market)", file=library)
    try:
        doc = tomlkit.parse(own.read_text(encoding="utf-8")) if own.is_file() \
            else tomlkit.document()
        given = tomlkit.parse(Path(library).read_text(encoding="utf-8"))
    except (TOMLKitError, UnicodeDecodeError) as exc:  # read above, so only a race gets here
        raise DataError(f"not a readable TOML file ({exc})", file=library) from None
    for market in missing:
        doc[market] = given[market]
    return tomlkit.dumps(doc), missing


def import_data(settings: ImportSettings, into: str | os.PathLike[str], *,
                replace_files: bool = False) -> ImportReport:
    """Import the sources of ``settings`` into the data folder ``into`` (created when absent).

    Every market file, the market library and ``import.toml`` are written to a temporary
    folder first, read back by the data folder's own reader, then moved in: an error leaves
    the folder as it was. An existing market file is replaced only with ``replace_files``.

    Raises
    ------
    DataError
        Naming the file and line (or the market) of the first problem.
    """
    folder = Path(into)
    if folder.exists() and not folder.is_dir():
        raise DataError("not a folder (expected the data folder to import into)",
                        file=str(folder))
    regex = pattern_regex(settings.pattern)
    files, skipped = source_files(settings.sources)
    if not files:
        raise DataError("no CSV or Parquet files in the sources given",
                        file=", ".join(settings.sources))
    frames: list[pd.DataFrame] = []
    read: list[SourceFile] = []
    for table in read_tables(files, settings):
        frame, sources = read_rows(table, settings, regex)
        frames.append(frame)
        read += sources
    skipped += [s for r in read for s in r.skipped]
    rows = pd.concat(frames, ignore_index=True)
    if rows.empty:
        raise DataError("no price rows in the sources given", file=", ".join(settings.sources))
    markets = sorted(rows["market"].unique())
    if not replace_files:
        there = [m for m in markets if (folder / f"{m}.csv").exists()]
        if there:
            raise DataError(f"{there[0]}.csv is already there (give --replace to overwrite "
                            f"{'it' if len(there) == 1 else 'the ' + str(len(there)) + ' files'})",
                            file=str(folder))
    library, added = _library_text(folder, markets, settings.library)
    by_market = {m: market_frame(m, part) for m, part in rows.groupby("market", sort=True)}
    done = replace(settings, markets=tuple(markets))
    try:
        earlier = [s for s in read_settings(folder) if not set(s.markets) <= set(markets)]
    except DataError:
        earlier = []
    written = {f"{m}.csv": frame.to_csv(index=False, lineterminator="\n")
               for m, frame in by_market.items()}
    written[SETTINGS_FILE] = settings_text([*earlier, done])
    if library is not None:
        written[LIBRARY_FILE] = library
    _write_folder(folder, written, markets)
    files_per_market = rows.groupby("market")["file"].nunique()
    report = [MarketWritten(m, len(f), int(f["contract"].nunique()) if "contract" in f else 0,
                            f["date"].iloc[0], f["date"].iloc[-1], int(files_per_market[m]))
              for m, f in by_market.items()]
    shapes: dict[str, int] = {}
    for r in read:
        shapes[r.shape] = shapes.get(r.shape, 0) + 1
    return ImportReport(str(folder), len(files), shapes, tuple(report), tuple(skipped),
                        tuple(added))


def _write_folder(folder: Path, files: dict[str, str], markets: list[str]) -> None:
    """Write ``files`` into a temporary folder, read each market back with the data folder's
    reader, then move them in (the whole folder renamed when it is new)."""
    new = not folder.exists()
    parent = folder.parent if new else folder
    parent.mkdir(parents=True, exist_ok=True)
    stage = Path(tempfile.mkdtemp(dir=parent, prefix=f".{folder.name}.import-"))
    try:
        for name, text in files.items():
            with open(stage / name, "w", encoding="utf-8", newline="") as handle:
                handle.write(text)
                handle.flush()
                os.fsync(handle.fileno())
        if LIBRARY_FILE in files:
            read_market_library(stage / LIBRARY_FILE)
        for market in markets:
            try:
                read_market_csv(stage / f"{market}.csv", market)
            except DataError as exc:
                raise DataError(exc.problem, file=str(folder / f"{market}.csv"),
                                line=exc.line) from None
        if new:
            os.chmod(stage, 0o755)
            os.rename(stage, folder)
            return
        for name in files:
            os.replace(stage / name, folder / name)
        stage.rmdir()
    except BaseException:
        with contextlib.suppress(OSError):
            shutil.rmtree(stage)
        raise


def import_again(folder: str | os.PathLike[str]) -> list[ImportReport]:
    """Run every import recorded in the folder's ``import.toml`` again, replacing the market
    files it wrote before.

    Raises
    ------
    DataError
        When the folder has no readable ``import.toml``, or an import fails.
    """
    return [import_data(s, folder, replace_files=True) for s in read_settings(folder)]
