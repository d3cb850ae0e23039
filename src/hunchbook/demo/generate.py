"""Write the invented demo data folder: the market library and one contract-level CSV per market.

Everything is invented and deterministic: the same seed and window give byte-identical files.
The effects planted in the prices (which market trends, reverts, pays carry or reacts to the
calendar and to its storage report, and how strongly) are listed in
:mod:`hunchbook.demo.effects`; the demo desk's runs are real runs on these data.
"""

from __future__ import annotations

import datetime as dt
import os
from pathlib import Path

import numpy as np
import pandas as pd

from hunchbook.core.errors import DataError
from hunchbook.core.markets import MarketSpec, parse_market_library
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.demo.calendars import business_days, weekdays
from hunchbook.demo.contracts import contract_schedule
from hunchbook.demo.desk import DESK
from hunchbook.demo.effects import (
    STORAGE_EVENT,
    STORAGE_MARKET,
    PlantedTerms,
    planted_terms,
)
from hunchbook.demo.liquidity import volume_and_open_interest
from hunchbook.demo.prices import (
    carry_path,
    correlated_shocks,
    futures_log_prices,
    spot_path,
)
from hunchbook.demo.profiles import PROFILES, MarketProfile
from hunchbook.resources import read_resource

#: Default seed of the demo data.
DEFAULT_SEED = 20261201
#: Default first date of the demo data.
DEFAULT_START = "2008-01-02"
#: Default last date of the demo data.
DEFAULT_END = "2025-12-31"
#: Columns of every demo CSV, in file order.
CSV_COLUMNS = ("date", "contract", "expiry", "open", "high", "low", "close", "volume",
               "open_interest")
#: Name of the market library file in a data folder.
LIBRARY_FILE = "markets.toml"
#: The invented market library among the application's resources (see hunchbook.resources).
LIBRARY_RESOURCE = "demo/markets.toml"
#: Name of the dated-events file in a data folder.
EVENTS_FILE = "events.csv"
#: Name of the note that labels the data folder as invented.
NOTE_FILE = "INVENTED_DATA.txt"
#: Calendar days of business-day calendar kept before the window (for early expiries) and
#: after it (for the expiries of contracts already listed at the end of the window).
_CALENDAR_MARGIN = (np.timedelta64(120, "D"), np.timedelta64(500, "D"))


def market_library_text() -> str:
    """The text of the invented market library (``resources/demo/markets.toml``)."""
    return read_resource(LIBRARY_RESOURCE)


def demo_market_library() -> dict[str, MarketSpec]:
    """The invented market library, parsed."""
    return parse_market_library(market_library_text(), file=f"resources/{LIBRARY_RESOURCE}")


def demo_frames(*, seed: int = DEFAULT_SEED, start: str = DEFAULT_START,
                end: str = DEFAULT_END) -> dict[str, pd.DataFrame]:
    """Invented contract-level daily bars of every demo market, without writing files.

    Parameters
    ----------
    seed
        Seed of the random generators (numpy ``PCG64``); the same seed gives the same data.
    start, end
        First and last date of the data window, ``YYYY-MM-DD``.

    Returns
    -------
    dict of str to pandas.DataFrame
        Per market, rows sorted by date then expiry, with the columns :data:`CSV_COLUMNS`
        (dates as ``YYYY-MM-DD`` text, prices on the market's tick grid).

    Raises
    ------
    DataError
        When the seed is not a non-negative integer or the window is not two valid dates in order.
    """
    first, last = _window(start, end)
    n = len(PROFILES)
    streams = [np.random.Generator(np.random.PCG64(child))
               for child in np.random.SeedSequence(_checked_seed(seed)).spawn(2 * n + 1)]
    library = demo_market_library()
    grid = weekdays(first, last)
    shocks = correlated_shocks(streams[0], len(grid))
    return {profile.symbol: _market_frame(
                profile, library[profile.symbol].tick_size, grid, shocks[:, k], streams[k + 1],
                first, last,
                planted_terms(profile.symbol, grid, profile.annual_vol, streams[n + k + 1]))
            for k, profile in enumerate(PROFILES)}


def demo_events(frames: dict[str, pd.DataFrame]) -> pd.DataFrame:
    """The dated events of the demo data (``events.csv``): the invented weekly storage report
    of NATGAS on each Thursday it trades (see :mod:`hunchbook.demo.effects`).

    Parameters
    ----------
    frames
        The demo markets' bars, as :func:`demo_frames` returns them.

    Returns
    -------
    pandas.DataFrame
        Columns ``date``, ``event``, ``market``, one row per report day, sorted by date.
    """
    dates = pd.to_datetime(frames[STORAGE_MARKET]["date"].drop_duplicates())
    thursdays = dates[dates.dt.day_of_week == 3].dt.strftime("%Y-%m-%d")
    return pd.DataFrame({"date": thursdays.to_numpy(), "event": STORAGE_EVENT,
                         "market": STORAGE_MARKET})


def write_demo_data(folder: str | os.PathLike[str], *, seed: int = DEFAULT_SEED,
                    start: str = DEFAULT_START, end: str = DEFAULT_END) -> Path:
    """Write the invented demo data folder.

    Writes ``markets.toml`` (the invented market library), ``INVENTED_DATA.txt`` (a note saying
    the data is invented), ``events.csv`` (the dated events, :func:`demo_events`) and one
    ``<MARKET>.csv`` per demo market into ``folder``, creating it if needed and replacing files
    of the same names.

    Parameters
    ----------
    folder
        Destination folder.
    seed, start, end
        As in :func:`demo_frames`.

    Returns
    -------
    pathlib.Path
        The folder.

    Raises
    ------
    DataError
        For a bad seed or window, or when the folder cannot be written.
    """
    root = Path(folder)
    if root.exists() and not root.is_dir():
        raise DataError("expected a folder for the demo data, found a file", file=str(root))
    frames = demo_frames(seed=seed, start=start, end=end)
    library = demo_market_library()
    try:
        root.mkdir(parents=True, exist_ok=True)
        (root / LIBRARY_FILE).write_text(market_library_text(), encoding="utf-8")
        (root / NOTE_FILE).write_text(_note(seed, start, end), encoding="utf-8")
        for market, frame in frames.items():
            decimals = _decimals(library[market].tick_size)
            frame.to_csv(root / f"{market}.csv", index=False, lineterminator="\n",
                         float_format=f"%.{decimals}f")
        demo_events(frames).to_csv(root / EVENTS_FILE, index=False, lineterminator="\n")
    except OSError as exc:
        raise DataError(f"cannot write the demo data ({exc.strerror or exc})",
                        file=str(exc.filename or root)) from None
    return root


def _market_frame(profile: MarketProfile, tick: float, grid: np.ndarray, shocks: np.ndarray,
                  rng: np.random.Generator, first: np.datetime64, last: np.datetime64,
                  planted: PlantedTerms) -> pd.DataFrame:
    log_spot, daily_vol = spot_path(profile, shocks, rng, planted)
    carry = carry_path(profile, len(grid), rng)
    calendar = business_days(profile.sector, first - _CALENDAR_MARGIN[0],
                             last + _CALENDAR_MARGIN[1])
    offset = int(np.searchsorted(calendar, first))
    dates = calendar[offset:np.searchsorted(calendar, last, side="right")]
    on_grid = np.searchsorted(grid, dates)
    schedule = contract_schedule(profile, calendar, first, last)

    years = np.maximum((schedule.expiry[None, :] - dates[:, None]).astype(float) / 365.0, 0.0)
    log_f = futures_log_prices(log_spot[on_grid], carry[on_grid], daily_vol[on_grid], years, rng)
    alive = ((dates[:, None] >= schedule.listing[None, :])
             & (dates[:, None] <= schedule.expiry[None, :]))
    rows, cols = np.nonzero(alive)  # row-major: sorted by date, then by expiry

    vol = daily_vol[on_grid][rows]
    open_log, high_log, low_log, close_log = _log_bars(log_f, rows, cols, vol, len(dates), rng)

    expiry_pos = np.searchsorted(calendar, schedule.expiry)
    gaps = np.diff(expiry_pos, prepend=expiry_pos[0] - _typical_gap(expiry_pos))
    volume, open_interest = volume_and_open_interest(
        profile, (expiry_pos[cols] - offset - rows).astype(float), gaps[cols].astype(float),
        vol / (profile.annual_vol / np.sqrt(DAYS_PER_YEAR)), rng)

    return pd.DataFrame({
        "date": np.datetime_as_string(dates)[rows],
        "contract": schedule.codes[cols],
        "expiry": np.datetime_as_string(schedule.expiry)[cols],
        "open": _on_ticks(open_log, tick),
        "high": _on_ticks(high_log, tick),
        "low": _on_ticks(low_log, tick),
        "close": _on_ticks(close_log, tick),
        "volume": volume,
        "open_interest": open_interest,
    }, columns=list(CSV_COLUMNS))


def _log_bars(log_f: np.ndarray, rows: np.ndarray, cols: np.ndarray, vol: np.ndarray,
              n_dates: int, rng: np.random.Generator) -> tuple[np.ndarray, ...]:
    """Log open, high, low and close of the listed (date, contract) cells.

    The open lies part of the way from the previous close to the close (the same share for
    every contract that day), and the high and low reach beyond the open and the close.
    """
    close_log = log_f[rows, cols]
    prev_log = log_f[np.maximum(rows - 1, 0), cols]
    share = rng.uniform(0.0, 0.5, n_dates)[rows]
    jitter = 0.2 * rng.standard_normal(n_dates)[rows] * vol
    open_log = prev_log + share * (close_log - prev_log) + jitter
    high_log = np.maximum(open_log, close_log) + 0.5 * vol * np.abs(rng.standard_normal(len(rows)))
    low_log = np.minimum(open_log, close_log) - 0.5 * vol * np.abs(rng.standard_normal(len(rows)))
    return open_log, high_log, low_log, close_log


def _on_ticks(log_price: np.ndarray, tick: float) -> np.ndarray:
    """Prices rounded to the tick grid, never below one tick (rounding keeps their order)."""
    ticks = np.maximum(np.rint(np.exp(log_price) / tick), 1.0)
    return np.round(ticks * tick, _decimals(tick))


def _decimals(tick: float) -> int:
    text = f"{tick:.10f}".rstrip("0")
    return len(text.split(".")[1])


def _typical_gap(expiry_pos: np.ndarray) -> int:
    return int(np.median(np.diff(expiry_pos))) if len(expiry_pos) > 1 else 21


def _checked_seed(seed: object) -> int:
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise DataError(f"demo data seed must be a non-negative integer, got {seed!r}")
    return int(seed)


def _window(start: str, end: str) -> tuple[np.datetime64, np.datetime64]:
    days = []
    for label, text in (("start", start), ("end", end)):
        try:
            days.append(np.datetime64(dt.date.fromisoformat(str(text)), "D"))
        except ValueError:
            raise DataError(f"demo data {label} date {text!r} is not a date "
                            "(expected YYYY-MM-DD)") from None
    if days[0] >= days[1]:
        raise DataError(f"demo data start {start} must come before end {end}")
    return days[0], days[1]


def _note(seed: int, start: str, end: str) -> str:
    people = "\n".join(f"  - {p.name}, {p.role}: {p.focus}" for p in DESK.people)
    return (
        "INVENTED DEMO DATA - NOT REAL MARKET PRICES\n"
        "\n"
        "Every file in this folder was generated by hunchbook.demo.write_demo_data from random\n"
        f"numbers (seed {seed}, {start} to {end}). The contract terms in markets.toml follow\n"
        "common exchange specifications (facts of the trade); the market names, prices, volumes,\n"
        "open interest and holidays are invented for demonstrations and tests, with known effects\n"
        "planted in them (see hunchbook/demo/effects.py). They are no real market's data.\n"
        "\n"
        f"Owner (also invented): {DESK.name}\n"
        f"{people}\n"
    )
