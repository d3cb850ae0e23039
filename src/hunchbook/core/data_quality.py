"""Quality checks that catch bad prices before they become a verdict.

Each check looks at one market's raw rows (:class:`~hunchbook.core.prices.MarketBars`) and
reports typed :class:`Finding` records: the check, its severity (:data:`ERROR` refuses a run,
:data:`WARNING` is recorded with it and shown beside the verdict), the market, the rows at fault
(dates and contract) and one plain sentence. Every threshold is in :class:`QualityThresholds`
and every check in :data:`QUALITY_CHECKS`; ``docs/data-quality.md`` gives each one's source.

Robust scale: the median absolute deviation scaled by 1.4826, a consistent estimate of the
standard deviation under normality (Huber 1981, *Robust Statistics*; Rousseeuw & Croux 1993,
*JASA* 88:1273-1283).
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from hunchbook.core.continuous import ContinuousSeries, build_continuous
from hunchbook.core.errors import DataError, HunchbookError
from hunchbook.core.markets import MarketSpec
from hunchbook.core.prices import PRICE_COLUMNS, MarketBars, MarketData
from hunchbook.core.rules.model import RollSpec
from hunchbook.core.verdict import Check, warning

#: Refuses a run on the data.
ERROR = "error"
#: Recorded with a run and shown beside its verdict.
WARNING = "warning"
#: The median absolute deviation of a normal sample times this is its standard deviation
#: (Huber 1981; Rousseeuw & Croux 1993).
MAD_TO_SD = 1.4826
#: Library sectors whose markets can trade at or below zero (energy: WTI crude settled at
#: -37.63 on 20 April 2020; power and spreads: common practice, no source).
NEGATIVE_SECTORS = frozenset({"energy", "power", "spread", "spreads"})


@dataclass(frozen=True)
class QualityThresholds:
    """The thresholds of the checks (documented in ``docs/data-quality.md``).

    Attributes
    ----------
    spike_sds
        A daily log return of one contract's own close beyond this many robust standard
        deviations of the market's returns, followed the next day by one beyond it the other way.
    stale_days
        Rows of one contract with the same close, in a row, that make a stale run.
    missing_days
        Business days of the market's own weekday calendar missing in one gap.
    roll_gap_sds
        A roll gap beyond this many robust standard deviations of the market's roll gaps.
    min_rolls
        Rolls a market needs before its roll gaps are judged.
    calendar_share
        A weekday belongs to the market's calendar when it holds at least this share of the
        dates of its busiest weekday.
    """

    spike_sds: float = 12.0
    stale_days: int = 6
    missing_days: int = 6
    roll_gap_sds: float = 12.0
    min_rolls: int = 8
    calendar_share: float = 0.2


@dataclass(frozen=True)
class QualityCheck:
    """One check of the registry: key, short name, severity and what it looks for."""

    key: str
    name: str
    severity: str
    rule: str


#: Every check, in the order they are reported.
QUALITY_CHECKS: dict[str, QualityCheck] = {c.key: c for c in (
    QualityCheck("ohlc", "high/low/close", ERROR,
                 "close outside [low, high], or low above high"),
    QualityCheck("ratio_non_positive", "zero or negative price under ratio", ERROR,
                 "a price at or below zero where the ratio adjustment divides by prices"),
    QualityCheck("expiries", "overlapping expiries", ERROR,
                 "two contracts with one expiry, or expiries out of the contracts' order"),
    QualityCheck("spike", "price spike", ERROR,
                 "a daily return beyond {spike_sds:g} robust SDs that reverses the next day"),
    QualityCheck("non_positive", "zero or negative price", WARNING,
                 "a price at or below zero in a market whose sector does not trade there"),
    QualityCheck("stale", "stale prices", WARNING,
                 "the same close {stale_days} rows in a row while volume or other contracts "
                 "move"),
    QualityCheck("missing_days", "missing business days", WARNING,
                 "{missing_days} or more business days of the market's calendar missing"),
    QualityCheck("roll_gap", "roll gap", WARNING,
                 "a roll gap beyond {roll_gap_sds:g} robust SDs of the market's roll gaps"),
)}


@dataclass(frozen=True)
class Finding:
    """One fault found in one market's rows.

    ``dates`` are the rows at fault (ascending), ``contract`` the contract they belong to
    (empty when the fault spans the market).
    """

    check: str
    severity: str
    market: str
    dates: tuple[dt.date, ...]
    contract: str
    message: str

    @property
    def name(self) -> str:
        """The check's short name."""
        return QUALITY_CHECKS[self.check].name

    @property
    def rows(self) -> str:
        """The rows at fault in a few words: the first dates and the contract."""
        shown = ", ".join(d.isoformat() for d in self.dates[:3])
        more = f" (+{len(self.dates) - 3} more)" if len(self.dates) > 3 else ""
        return f"{shown}{more}" + (f" {self.contract}" if self.contract else "")

    @property
    def line(self) -> str:
        """The finding in one line: severity, market, check, rows and sentence."""
        return f"{self.severity} {self.market} {self.name} ({self.rows}): {self.message}"


def check_bars(bars: MarketBars, spec: MarketSpec | None = None, *,
               roll: RollSpec | None = None,
               thresholds: QualityThresholds | None = None,
               series: ContinuousSeries | None = None) -> tuple[Finding, ...]:
    """Every quality check of one market's rows, in :data:`QUALITY_CHECKS` order.

    Parameters
    ----------
    bars
        The market's rows as read by :func:`~hunchbook.core.prices.read_market_csv`.
    spec
        Its library entry (its ``sector`` says whether it may trade at or below zero).
    roll
        The roll used for the roll gaps (and whether the adjustment is ``ratio``); the default
        roll when omitted.
    thresholds
        The checks' thresholds; :class:`QualityThresholds` defaults when omitted.
    series
        The market's continuous series with ``roll``, when already built (built here if not).
    """
    t = thresholds or QualityThresholds()
    roll = roll or RollSpec()
    frame = bars.frame.sort_values(["contract", "date"], kind="stable")
    market = bars.market
    found: list[Finding] = []
    found += _ohlc(frame, market)
    found += _non_positive(frame, market, spec, roll)
    if not bars.continuous:
        found += _expiries(frame, market)
    found += _spikes(frame, market, t)
    found += _stale(frame, market, t)
    found += _missing_days(frame, market, t)
    if not bars.continuous:
        found += _roll_gaps(bars, frame, market, roll, t, series)
    order = list(QUALITY_CHECKS)
    return tuple(sorted(found, key=lambda f: (order.index(f.check), f.dates[:1])))


def check_market_data(data: MarketData, markets: Iterable[str] | None = None, *,
                      roll: RollSpec | None = None,
                      thresholds: QualityThresholds | None = None) -> tuple[Finding, ...]:
    """:func:`check_bars` on each market read (or those named), in that order."""
    names = list(data.bars) if markets is None else list(dict.fromkeys(markets))
    return tuple(f for m in names
                 for f in check_bars(data.bars[m], data.library.get(m), roll=roll,
                                     thresholds=thresholds))


def refuse_errors(findings: Sequence[Finding], *, folder: str | None = None) -> None:
    """Raise the first error finding as one line (market, check, first rows, and how many
    more errors there are); do nothing when there is none.

    Raises
    ------
    DataError
        When any finding is an error.
    """
    errors = [f for f in findings if f.severity == ERROR]
    if errors:
        first = errors[0]
        more = f" ({len(errors) - 1} more error(s); see hunchbook data check)" \
            if len(errors) > 1 else " (see hunchbook data check)"
        raise DataError(f"run refused: market {first.market}, {first.name} at {first.rows}: "
                        f"{first.message}{more}", file=folder)


def quality_warnings(findings: Sequence[Finding]) -> list[Check]:
    """The warning findings as verdict warnings, one per market and check (key
    ``data_<check>_<market>``, so two runs' checks pair by market when compared)."""
    grouped: dict[tuple[str, str], list[Finding]] = {}
    for f in findings:
        if f.severity == WARNING:
            grouped.setdefault((f.market, f.check), []).append(f)
    checks = []
    for (market, key), items in grouped.items():
        first = items[0]
        figure = f"{len(items)} found"
        more = f"; {len(items) - 1} more like it" if len(items) > 1 else ""
        checks.append(warning(f"data_{key}_{market}", f"Data: {first.name} ({market})", figure,
                              f"{market} at {first.rows}: {first.message}{more}."))
    return checks


def describe(check: QualityCheck, thresholds: QualityThresholds | None = None) -> str:
    """A check's rule with its thresholds filled in."""
    t = thresholds or QualityThresholds()
    return check.rule.format(**{k: getattr(t, k) for k in QualityThresholds.__dataclass_fields__})


def robust_sd(values: np.ndarray) -> float:
    """The median absolute deviation from the median, times :data:`MAD_TO_SD` (NaN ignored;
    0 for no values)."""
    values = values[np.isfinite(values)]
    if values.size == 0:
        return 0.0
    return float(MAD_TO_SD * np.median(np.abs(values - np.median(values))))


def _dates(values: np.ndarray) -> tuple[dt.date, ...]:
    return tuple(np.asarray(values).astype("datetime64[D]").tolist())  # datetime.date each


def _finding(check: str, market: str, dates: np.ndarray, contract: str, message: str) -> Finding:
    return Finding(check, QUALITY_CHECKS[check].severity, market, _dates(dates), contract,
                   message)


def _per_contract_rows(frame: pd.DataFrame, mask: np.ndarray, check: str, market: str,
                       message: str) -> list[Finding]:
    """One finding per contract holding rows where ``mask`` is true."""
    if not mask.any():
        return []
    contracts = frame["contract"].to_numpy()[mask]  # rows sorted by contract, then date
    dates = frame["date"].to_numpy()[mask]
    starts = np.flatnonzero(np.concatenate(([True], contracts[1:] != contracts[:-1])))
    return [_finding(check, market, group, str(contracts[start]),
                     message.format(n=len(group)))
            for start, group in zip(starts, np.split(dates, starts[1:]), strict=True)]


def _ohlc(frame: pd.DataFrame, market: str) -> list[Finding]:
    if "high" not in frame or "low" not in frame:
        return []
    close, high, low = (frame[c].to_numpy() for c in ("close", "high", "low"))
    with np.errstate(invalid="ignore"):
        crossed = low > high
        outside = ~crossed & ((close > high) | (close < low))
    return [*_per_contract_rows(frame, crossed, "ohlc", market, "low above high on {n} row(s)"),
            *_per_contract_rows(frame, outside, "ohlc", market,
                                "close outside [low, high] on {n} row(s)")]


def _non_positive(frame: pd.DataFrame, market: str, spec: MarketSpec | None,
                  roll: RollSpec) -> list[Finding]:
    columns = [c for c in ("close", *PRICE_COLUMNS) if c in frame]
    with np.errstate(invalid="ignore"):
        bad = np.logical_or.reduce([frame[c].to_numpy() <= 0 for c in columns])
    sector = (spec.sector or "").strip().lower() if spec is not None else ""
    if roll.adjust == "ratio":
        check, why = "ratio_non_positive", ("the ratio adjustment divides by prices, so they "
                                            "must be positive")
    elif sector in NEGATIVE_SECTORS:
        return []
    else:
        check, why = "non_positive", (f"sector '{sector or 'none'}' is not one known to trade "
                                      f"at or below zero ({', '.join(sorted(NEGATIVE_SECTORS))})")
    return _per_contract_rows(frame, bad, check, market,
                              "price at or below zero on {n} row(s): " + why)


#: A contract's delivery month at the end of its code: ``...-2019-12``, ``...201912`` or a month
#: code and year ``...Z2019`` / ``...Z19`` (common practice, no source).
_CONTRACT_MONTH = re.compile(
    r"(?:(?P<y>\d{4})-?(?P<m>\d{2})|(?P<c>[FGHJKMNQUVXZ])(?P<yc>\d{4}|\d{2}))$")
_MONTH_CODES = "FGHJKMNQUVXZ"


def _delivery(contract: str) -> tuple[int, int] | None:
    match = _CONTRACT_MONTH.search(contract)
    if match is None:
        return None
    if match["y"]:
        return int(match["y"]), int(match["m"])
    year = int(match["yc"])
    return (year + 2000 if year < 70 else year + 1900) if year < 100 else year, \
        _MONTH_CODES.index(match["c"]) + 1


def _expiries(frame: pd.DataFrame, market: str) -> list[Finding]:
    firsts = frame.groupby("contract", sort=False)["expiry"].first()
    found = []
    shared = firsts[firsts.duplicated(keep=False)]
    for expiry, names in shared.groupby(shared):
        found.append(_finding("expiries", market, np.array([expiry.to_datetime64()]),
                              ", ".join(names.index),
                              f"{len(names)} contracts share the expiry {expiry.date()}"))
    months = [_delivery(str(c)) for c in firsts.index]
    if all(m is not None for m in months) and len(months) > 1:
        by_month = firsts.iloc[np.argsort(np.array(months)[:, 0] * 12 + np.array(months)[:, 1],
                                          kind="stable")]
        backwards = np.flatnonzero(np.diff(by_month.to_numpy()) < np.timedelta64(0, "D"))
        for i in backwards:
            early, late = by_month.index[i], by_month.index[i + 1]
            found.append(_finding("expiries", market, np.array([by_month.iloc[i + 1]]),
                                  f"{early}, {late}",
                                  f"{late} expires on {by_month.iloc[i + 1].date()}, before "
                                  f"{early} ({by_month.iloc[i].date()}) which delivers earlier"))
    return found


def _log_returns(frame: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """Each row's log return of its contract's own close from its previous row (NaN on a
    contract's first row or a price at or below zero), and whether the next row is the same
    contract's."""
    close = frame["close"].to_numpy(dtype=float)
    codes = frame["contract"].to_numpy()
    same = np.zeros(len(close), dtype=bool)
    same[1:] = codes[1:] == codes[:-1]
    with np.errstate(invalid="ignore", divide="ignore"):
        logs = np.where(close > 0, np.log(np.where(close > 0, close, 1.0)), np.nan)
    returns = np.full(len(close), np.nan)
    returns[1:] = logs[1:] - logs[:-1]
    returns[~same] = np.nan
    return returns, same


def _spikes(frame: pd.DataFrame, market: str, t: QualityThresholds) -> list[Finding]:
    """Both the log return and the price change must be extreme (where the log return exists):
    log returns blow up near zero, price changes grow with the price level."""
    returns, same = _log_returns(frame)
    close = frame["close"].to_numpy(dtype=float)
    changes = np.full(len(close), np.nan)
    changes[1:] = np.where(same[1:], close[1:] - close[:-1], np.nan)
    by_return, by_change = _reversed_extremes(returns, t), _reversed_extremes(changes, t)
    spike = by_change & (np.isnan(returns) | by_return)
    dates, contracts = frame["date"].to_numpy(), frame["contract"].to_numpy()
    return [_finding("spike", market, dates[i:i + 1], str(contracts[i]),
                     f"close {close[i - 1]:g} -> {close[i]:g} -> {close[i + 1]:g}, a move "
                     f"beyond {t.spike_sds:g} robust SDs reversed the next day")
            for i in np.flatnonzero(spike)]


def _reversed_extremes(moves: np.ndarray, t: QualityThresholds) -> np.ndarray:
    """Rows whose move, and the next row's, are beyond ``spike_sds`` robust SDs of all moves,
    in opposite directions."""
    scale = robust_sd(moves)
    if scale == 0.0:
        return np.zeros(len(moves), dtype=bool)
    z = moves / scale
    nxt = np.full(len(z), np.nan)
    nxt[:-1] = z[1:]
    with np.errstate(invalid="ignore"):
        return (np.abs(z) > t.spike_sds) & (np.abs(nxt) > t.spike_sds) & (z * nxt < 0)


def _stale(frame: pd.DataFrame, market: str, t: QualityThresholds) -> list[Finding]:
    close = frame["close"].to_numpy(dtype=float)
    codes = frame["contract"].to_numpy()
    repeat = np.zeros(len(close), dtype=bool)
    repeat[1:] = (codes[1:] == codes[:-1]) & (close[1:] == close[:-1])
    run_id = np.cumsum(~repeat)
    lengths = np.bincount(run_id)
    long_runs = np.flatnonzero(lengths >= t.stale_days)
    if long_runs.size == 0:
        return []
    dates = frame["date"].to_numpy()
    volume = frame["volume"].to_numpy(dtype=float) if "volume" in frame else None
    found = []
    for run in long_runs:
        rows = np.flatnonzero(run_id == run)
        if not _moved_elsewhere(frame, rows, volume):
            continue
        found.append(_finding("stale", market, dates[rows], str(codes[rows[0]]),
                              f"close {close[rows[0]]:g} on {rows.size} rows in a row while "
                              "the market moved"))
    return found


def _moved_elsewhere(frame: pd.DataFrame, rows: np.ndarray, volume: np.ndarray | None) -> bool:
    """Whether volume changed over a run of one close, or another contract's close did; true
    too when the file holds neither (nothing says the market was quiet)."""
    if volume is not None and np.unique(volume[rows]).size > 1:
        return True
    dates = frame["date"].to_numpy()
    contract = frame["contract"].to_numpy()[rows[0]]
    others = frame[(frame["contract"] != contract) & (frame["date"] >= dates[rows[0]])
                   & (frame["date"] <= dates[rows[-1]])]
    if others.empty:
        return volume is None
    return bool((others.groupby("contract")["close"].nunique() > 1).any())


def _missing_days(frame: pd.DataFrame, market: str, t: QualityThresholds) -> list[Finding]:
    days = np.unique(frame["date"].to_numpy().astype("datetime64[D]"))
    if days.size < 2:
        return []
    weekday = (days.astype(np.int64) + 3) % 7  # 1970-01-01 was a Thursday: Monday is 0
    counts = np.bincount(weekday, minlength=7)
    mask = counts >= t.calendar_share * counts.max()
    missing = np.busday_count(days[:-1] + 1, days[1:], weekmask=mask.astype(int).tolist())
    gaps = np.flatnonzero(missing >= t.missing_days)
    return [_finding("missing_days", market, days[i:i + 2], "",
                     f"{missing[i]} business days missing between {days[i]} and {days[i + 1]}")
            for i in gaps]


def _roll_gaps(bars: MarketBars, frame: pd.DataFrame, market: str, roll: RollSpec,
               t: QualityThresholds, series: ContinuousSeries | None) -> list[Finding]:
    if series is None:
        try:
            series = build_continuous(bars, roll)
        except (HunchbookError, ValueError):
            return []  # the data check reports why the series does not build
    rolls = np.flatnonzero(series.roll)
    if rolls.size < t.min_rolls:
        return []
    new = series.close_raw[rolls]
    old = series.close_raw[rolls - 1] + series.change[rolls]  # the old contract's close then
    with np.errstate(invalid="ignore", divide="ignore"):
        gaps = np.where((new > 0) & (old > 0), np.log(np.where(new > 0, new, 1.0)
                                                     / np.where(old > 0, old, 1.0)), np.nan)
    centre = np.nanmedian(gaps)
    returns, _ = _log_returns(frame)
    scale = max(robust_sd(gaps), robust_sd(returns))  # a gap within a day's noise is not news
    if not np.isfinite(centre) or scale == 0.0:
        return []
    z = (gaps - centre) / scale
    with np.errstate(invalid="ignore"):
        far = np.flatnonzero(np.abs(z) > t.roll_gap_sds)
    return [_finding("roll_gap", market, series.dates[rolls[i]:rolls[i] + 1],
                     f"{series.contract[rolls[i] - 1]}, {series.contract[rolls[i]]}",
                     f"roll gap {z[i]:+.1f} robust SDs from the market's usual roll gap "
                     f"(log gap {gaps[i]:+.4f}, median {centre:+.4f}, robust SD {scale:.4f})")
            for i in far]
