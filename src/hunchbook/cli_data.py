"""The ``hunchbook data import`` command: futures prices from per-contract files, per-market
files or one long file (CSV or Parquet) into a data folder (see ``docs/data-import.md``)."""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import TYPE_CHECKING, Any

from hunchbook.core.errors import DataError

if TYPE_CHECKING:
    from hunchbook.core.data_import import ImportReport


def register(data_commands: Any) -> None:
    """Add ``import`` to the ``data`` command's subparsers object."""
    parser = data_commands.add_parser(
        "import", help="import price files (per contract, per market or one long file; CSV "
                       "or Parquet) into a data folder",
        description="Import futures prices into a data folder: files named like CORNZ2019.csv "
                    "(one per contract), files named after their market, or one long file "
                    "with a market column; CSV with any delimiter, date format and column "
                    "names, or Parquet. Columns are guessed from their names and can be "
                    "named with --map. The settings are saved as import.toml in the folder: "
                    "'--again DIR' imports the same sources again.",
        epilog="Example: hunchbook data import prices/ --into data --expiry "
               "CORN=before-day:15:1 --map close=Settle")
    parser.add_argument("sources", nargs="*", metavar="SOURCE", type=Path,
                        help="files or folders to import")
    parser.add_argument("--into", type=Path, metavar="DIR", help="the data folder to write")
    parser.add_argument("--again", type=Path, metavar="DIR",
                        help="run the imports recorded in DIR/import.toml again (replacing "
                             "the market files they wrote)")
    parser.add_argument("--map", action="append", default=[], metavar="FIELD=COLUMN",
                        help="the source column of a field (date, market, contract, expiry, "
                             "open, high, low, close, volume, open_interest); repeatable")
    parser.add_argument("--pattern", default=None, metavar="PATTERN",
                        help="contract file names, from {market}, {month} (month code) and "
                             "{year} (default {market}{month}{year})")
    parser.add_argument("--expiry", action="append", default=[], metavar="MARKET=RULE",
                        help="expiry rule when files carry no expiry: before-first:N, "
                             "before-day:DAY:N, third-friday, last-business-day (MARKET may "
                             "be * for all); repeatable")
    parser.add_argument("--date-format", metavar="FORMAT",
                        help="strftime format of the dates (default: guessed)")
    parser.add_argument("--delimiter", metavar="CHAR", help="CSV delimiter (default: sniffed)")
    parser.add_argument("--library", metavar="FILE",
                        help="market library to copy missing markets' specifications from")
    parser.add_argument("--replace", action="store_true",
                        help="overwrite market files already in the folder")
    parser.set_defaults(handler=_import)


def _pairs(items: list[str], option: str) -> dict[str, str]:
    pairs = {}
    for item in items:
        key, sep, value = item.partition("=")
        if not sep or not key.strip() or not value.strip():
            raise DataError(f"{option} {item!r}: expected NAME=VALUE")
        pairs[key.strip()] = value.strip()
    return pairs


def _import(args: argparse.Namespace) -> int:
    from hunchbook.core.data_import import (
        DEFAULT_PATTERN,
        ImportSettings,
        import_again,
        import_data,
    )

    if args.again is not None:
        if args.sources or args.into:
            raise DataError("--again DIR takes no sources and no --into (it reads "
                            "DIR/import.toml)")
        for report in import_again(args.again):
            print(format_report(report))
        return 0
    if not args.sources or args.into is None:
        raise DataError("give the sources and --into DIR (or --again DIR)")
    delimiter = {"tab": "\t", "\\t": "\t"}.get(args.delimiter or "", args.delimiter)
    settings = ImportSettings(
        sources=tuple(str(s.resolve()) for s in args.sources),
        pattern=args.pattern or DEFAULT_PATTERN, mapping=_pairs(args.map, "--map"),
        date_format=args.date_format, delimiter=delimiter,
        expiry=_pairs(args.expiry, "--expiry"),
        library=str(Path(args.library).resolve()) if args.library else None)
    print(format_report(import_data(settings, args.into, replace_files=args.replace)))
    return 0


def format_report(report: ImportReport) -> str:
    """The import report as text: files read by shape, each market written, the skipped."""
    shapes = ", ".join(f"{n} {shape}{'s' if n > 1 else ''}" for shape, n in report.shapes.items())
    lines = [f"Imported into {report.folder}: {report.files_read} files read ({shapes})"]
    for m in report.markets:
        what = f"{m.contracts} contracts" if m.contracts else "continuous"
        lines.append(f"  {m.market:<10} {m.rows:>8} rows  {what:<14} {m.first} to {m.last}"
                     f"  from {m.files} file{'s' if m.files > 1 else ''}")
    if report.library_added:
        lines.append(f"Added to markets.toml: {', '.join(report.library_added)}")
    if report.skipped:
        lines.append(f"Skipped ({len(report.skipped)}):")
        lines += [f"  {s}" for s in report.skipped]
    return "\n".join(lines)
