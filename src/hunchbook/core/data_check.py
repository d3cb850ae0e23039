"""Check a data folder before running anything on it: the market library, each market's price
file, and whether each market splices into a continuous series with the default roll."""

from __future__ import annotations

import datetime as dt
import os
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from pathlib import Path

from hunchbook.core.continuous import build_continuous
from hunchbook.core.data_quality import ERROR as QUALITY_ERROR
from hunchbook.core.data_quality import Finding, check_bars
from hunchbook.core.errors import HunchbookError
from hunchbook.core.events import EVENTS_FILE
from hunchbook.core.markets import MarketSpec, read_market_library
from hunchbook.core.prices import ACTIVITY_COLUMNS, LIBRARY_FILE, PRICE_COLUMNS, read_market_csv
from hunchbook.core.rules.model import RollSpec

#: The market's file reads, validates and splices into a continuous series.
OK = "ok"
#: The market's file cannot be read, fails validation or does not splice.
ERROR = "error"
#: The market is in the library but has no price file.
MISSING = "missing"
#: A price file whose market is not in the library (runs never read it).
EXTRA = "extra"
#: Short labels of the statuses, for tables and reports.
STATUS_LABELS = {OK: "ok", ERROR: "error", MISSING: "no file", EXTRA: "not in library"}
#: How the summary line counts each status.
_SUMMARY_LABELS = {OK: "ok", ERROR: "with a problem", MISSING: "without a price file",
                   EXTRA: "not in the library"}


@dataclass(frozen=True)
class MarketCheck:
    """What the check found for one market or one price file.

    Attributes
    ----------
    market
        Market symbol (for a file outside the library: the file name without ``.csv``).
    file
        Price file name inside the folder, ``<market>.csv``.
    status
        :data:`OK`, :data:`ERROR`, :data:`MISSING` or :data:`EXTRA`.
    in_library
        Whether the market is in the market library (``False`` also when the library is bad).
    message
        The problem in one line (the error text naming file and line); empty when ok.
    rows, contracts, first, last
        Price rows, distinct contracts (``None`` for an already-continuous file) and the first
        and last date; ``None`` when the file could not be read.
    continuous
        Whether the file holds an already-continuous series (no ``contract`` column).
    columns
        Optional columns present (``open``, ``high``, ``low``, ``volume``, ``open_interest``).
    series_days
        Dates in the continuous series built with the default roll; ``None`` if it did not build.
    findings
        What the quality checks of :mod:`hunchbook.core.data_quality` found in the rows (an
        error finding makes the status :data:`ERROR`).
    """

    market: str
    file: str
    status: str
    in_library: bool
    message: str = ""
    rows: int | None = None
    contracts: int | None = None
    first: dt.date | None = None
    last: dt.date | None = None
    continuous: bool | None = None
    columns: tuple[str, ...] = ()
    series_days: int | None = None
    findings: tuple[Finding, ...] = ()


@dataclass(frozen=True)
class DataCheckReport:
    """The result of :func:`check_data_folder`.

    ``problem`` is a folder-level problem (folder or market library missing or bad) in one line,
    empty when the library loaded. ``markets`` lists the library's markets in library order,
    then price files outside the library by name.
    """

    folder: str
    problem: str
    markets: tuple[MarketCheck, ...]
    roll: RollSpec = field(default_factory=RollSpec)

    @property
    def ok(self) -> bool:
        """Whether the library loaded and every market is ok."""
        return not self.problem and all(m.status == OK for m in self.markets)

    @property
    def findings(self) -> tuple[Finding, ...]:
        """Every market's quality findings, market by market."""
        return tuple(f for m in self.markets for f in m.findings)

    @property
    def counts(self) -> dict[str, int]:
        """Number of markets per status, for the statuses that occur."""
        return dict(Counter(m.status for m in self.markets))

    @property
    def summary(self) -> str:
        """One line: how many markets were checked and how many have each status."""
        if self.problem and not self.markets:
            return f"Not checked: {self.problem}"
        counts = self.counts
        parts = [f"{counts[s]} {_SUMMARY_LABELS[s]}" for s in _SUMMARY_LABELS if s in counts]
        markets = sum(m.in_library for m in self.markets)
        others = len(self.markets) - markets
        if self.problem:
            what = _plural(others, "price file")
        else:
            what = _plural(markets, "market")
            if others:
                what += f" and {_plural(others, 'other price file')}"
        line = f"Checked {what}: {', '.join(parts)}"
        warned = sum(f.severity != QUALITY_ERROR for f in self.findings)
        if warned:
            line += f"; {_plural(warned, 'quality warning')}"
        if self.problem:
            line = f"Market library problem: {self.problem}. {line}"
        elif self.ok:
            line += " (everything ready to run)"
        return line


def check_data_folder(folder: str | os.PathLike[str], *,
                      progress: Callable[[int, int], None] | None = None) -> DataCheckReport:
    """Check a data folder: its market library and every price file, one report line each.

    Parameters
    ----------
    folder
        Folder holding ``markets.toml`` and ``<market>.csv`` files.
    progress
        Called with (files done, files in all) after each price file.

    Returns
    -------
    DataCheckReport
        Problems are reported, never raised: each is the one-line text of the
        :class:`~hunchbook.core.errors.HunchbookError` the readers raise, with file names given
        relative to the folder.
    """
    root = Path(folder)
    if not root.is_dir():
        return DataCheckReport(folder=str(root), problem=f"{root}: data folder not found",
                               markets=())
    library: dict[str, MarketSpec] | None = None
    problem = ""
    library_path = root / LIBRARY_FILE
    if not library_path.is_file():
        problem = f"no {LIBRARY_FILE} (the market library) in the folder"
    else:
        try:
            library = read_market_library(library_path)
        except HunchbookError as err:
            problem = _relative_text(err, root)
    try:
        files = {p.stem: p.name for p in sorted(root.iterdir())
                 if p.suffix.lower() == ".csv" and p.is_file()
                 and p.name.lower() != EVENTS_FILE}  # dated events, not prices
    except OSError as err:
        return DataCheckReport(folder=str(root), problem=f"{root}: cannot list the folder "
                               f"({err.strerror or err})", markets=())
    known = list(library) if library is not None else []
    extra = [stem for stem in files if stem not in known]
    order = [*known, *extra]
    checks = []
    for done, market in enumerate(order, start=1):
        checks.append(_check_market(root, market, files.get(market), library))
        if progress is not None:
            progress(done, len(order))
    return DataCheckReport(folder=str(root), problem=problem, markets=tuple(checks))


def format_data_check(report: DataCheckReport) -> str:
    """The report as plain text: the folder, a table with one line per market (with the days of
    its continuous series), the optional columns found, each problem in full and the summary."""
    headers = ("market", "file", "rows", "contracts", "first", "last", "series days", "status")
    rows = [(*cells[:6], "" if m.series_days is None else f"{m.series_days:,}", cells[6])
            for m, cells in zip(report.markets, map(report_cells, report.markets), strict=True)]
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h)
              for i, h in enumerate(headers)]
    numeric = {2, 3, 6}

    def line(cells: tuple[str, ...]) -> str:
        return "  ".join(c.rjust(w) if i in numeric else c.ljust(w)
                         for i, (c, w) in enumerate(zip(cells, widths, strict=True))).rstrip()

    out = [f"Data folder: {report.folder}"]
    if report.problem:
        out.append(f"Market library: {report.problem}")
    if rows:
        out += ["", line(headers), line(tuple("-" * w for w in widths)), *map(line, rows)]
    by_columns: dict[tuple[str, ...], list[str]] = {}
    for m in report.markets:
        if m.rows is not None:
            by_columns.setdefault(m.columns, []).append(m.market)
    if by_columns:
        out += ["", "Optional columns:"]
        out += [f"- {', '.join(cols) or 'none'}: {', '.join(markets)}"
                for cols, markets in by_columns.items()]
    problems = [m for m in report.markets if m.message]
    if problems:
        out += ["", "Problems:", *(f"- {m.market}: {m.message}" for m in problems)]
    if report.findings:
        out += ["", "Quality checks (severity, market, check, rows: finding):",
                *(f"- {f.line}" for f in report.findings)]
    out += ["", report.summary]
    return "\n".join(out) + "\n"


def report_cells(check: MarketCheck) -> tuple[str, ...]:
    """One market's report as display text: market, file, rows, contracts, first, last,
    status, message."""
    def number(value: int | None) -> str:
        return "" if value is None else f"{value:,}"

    contracts = "continuous" if check.continuous else number(check.contracts)
    return (check.market, check.file, number(check.rows), contracts,
            check.first.isoformat() if check.first else "",
            check.last.isoformat() if check.last else "",
            STATUS_LABELS[check.status], check.message)


def _plural(count: int, noun: str) -> str:
    return f"{count} {noun}{'' if count == 1 else 's'}"


def _check_market(root: Path, market: str, file: str | None,
                  library: dict[str, MarketSpec] | None) -> MarketCheck:
    """Read, validate and splice one market's file, and run the quality checks on it."""
    outside = library is not None and market not in library
    in_library = library is not None and not outside
    if file is None:
        return MarketCheck(market=market, file=f"{market}.csv", status=MISSING,
                           in_library=True, message=_missing_text(market, root))
    note = f"not in the market library {LIBRARY_FILE} (runs ignore this file)" if outside else ""
    if outside and library is not None:
        near = [m for m in library if m.lower() == market.lower()]
        if near:
            note += f"; the library has '{near[0]}' (file names must match its case)"
    try:
        bars = read_market_csv(root / file, market)
    except (HunchbookError, OSError) as err:
        message = _relative_text(err, root)
        return MarketCheck(market=market, file=file, status=ERROR, in_library=in_library,
                           message=f"{note}; {message}" if note else message)
    frame = bars.frame
    found = dict(
        rows=len(frame),
        contracts=None if bars.continuous else int(frame["contract"].nunique()),
        first=frame["date"].min().date(), last=frame["date"].max().date(),
        continuous=bars.continuous,
        columns=tuple(c for c in (*PRICE_COLUMNS, *ACTIVITY_COLUMNS) if c in bars.columns))
    try:
        series = build_continuous(bars, RollSpec())
    except HunchbookError as err:
        message = f"continuous series with the default roll: {_relative_text(err, root)}"
        return MarketCheck(market=market, file=file, status=ERROR, in_library=in_library,
                           message=f"{note}; {message}" if note else message, **found)
    findings = check_bars(bars, (library or {}).get(market), series=series)
    errors = [f for f in findings if f.severity == QUALITY_ERROR]
    if errors:
        message = (f"quality check '{errors[0].name}' failed at {errors[0].rows}: "
                   f"{errors[0].message}" + (f" ({len(errors) - 1} more error(s))"
                                             if len(errors) > 1 else ""))
        return MarketCheck(market=market, file=file, status=ERROR, in_library=in_library,
                           message=f"{note}; {message}" if note else message,
                           series_days=len(series), findings=findings, **found)
    return MarketCheck(market=market, file=file, status=EXTRA if outside else OK,
                       in_library=in_library, message=note, series_days=len(series),
                       findings=findings, **found)


def _missing_text(market: str, root: Path) -> str:
    near = [p.name for p in root.glob("*") if p.name.lower() == f"{market}.csv".lower()]
    hint = f" (found {near[0]}; file names must match the symbol's case)" if near else ""
    return f"no price file for market '{market}' (expected {market}.csv){hint}"


def _relative_text(err: Exception, root: Path) -> str:
    """An error's one-line text with its file named relative to the data folder."""
    if isinstance(err, OSError):
        name = Path(err.filename).name if err.filename else ""
        return f"{name}: cannot read ({err.strerror or err})" if name else str(err)
    file = getattr(err, "file", None)
    if isinstance(file, str):
        path = Path(file)
        if path.parent == root:
            err = replace(err, file=path.name)  # type: ignore[type-var]
    return str(err)
