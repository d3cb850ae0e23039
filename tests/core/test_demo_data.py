"""Checks of the invented demo data: determinism, file layout, tick grid, bar consistency,
market calendars, contract specifications and how liquidity moves between contracts."""

from __future__ import annotations

import itertools
import re
import tomllib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.core.errors import DataError
from hunchbook.core.markets import read_market_library
from hunchbook.demo import CSV_COLUMNS, DEMO_MARKETS, DESK, demo_frames, write_demo_data
from hunchbook.demo.calendars import COMMON_HOLIDAYS, SECTOR_HOLIDAYS

START, END = "2019-01-02", "2020-12-31"
SEED = 7


@pytest.fixture(scope="module")
def folder(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return write_demo_data(tmp_path_factory.mktemp("demo"), seed=SEED, start=START, end=END)


@pytest.fixture(scope="module")
def library(folder: Path) -> dict[str, dict]:
    # Read with the standard library's TOML reader, not the project's loader.
    return tomllib.loads((folder / "markets.toml").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def bars(folder: Path) -> dict[str, pd.DataFrame]:
    return {m: pd.read_csv(folder / f"{m}.csv", parse_dates=["date", "expiry"])
            for m in DEMO_MARKETS}


@pytest.fixture(scope="module")
def full_window() -> dict[str, pd.DataFrame]:
    """The default 2008-2025 data, for the checks that need many contracts or years."""
    frames = demo_frames()
    for frame in frames.values():
        frame["date"] = pd.to_datetime(frame["date"])
        frame["expiry"] = pd.to_datetime(frame["expiry"])
    return frames


def _files(path: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(path.iterdir())}


# --- determinism and layout ---------------------------------------------------------------

def test_same_seed_writes_identical_files_and_another_seed_does_not(tmp_path: Path) -> None:
    a = write_demo_data(tmp_path / "a", seed=11, start="2020-01-02", end="2020-06-30")
    b = write_demo_data(tmp_path / "b", seed=11, start="2020-01-02", end="2020-06-30")
    c = write_demo_data(tmp_path / "c", seed=12, start="2020-01-02", end="2020-06-30")
    assert _files(a) == _files(b)
    other = _files(c)
    for market in DEMO_MARKETS:
        assert _files(a)[f"{market}.csv"] != other[f"{market}.csv"]


def test_folder_holds_library_note_and_one_csv_per_market(folder: Path) -> None:
    expected = {"markets.toml", "INVENTED_DATA.txt", "events.csv",
                *(f"{m}.csv" for m in DEMO_MARKETS)}
    assert {p.name for p in folder.iterdir()} == expected


def test_events_are_the_natgas_storage_thursdays(folder: Path, bars) -> None:
    """events.csv lists the storage report on every Thursday NATGAS trades (weekday from
    Python's datetime, the reference library)."""
    import datetime as dt

    events = pd.read_csv(folder / "events.csv", dtype=str)
    assert list(events.columns) == ["date", "event", "market"]
    assert set(events["event"]) == {"storage"} and set(events["market"]) == {"NATGAS"}
    traded = {d.date() for d in bars["NATGAS"]["date"]}
    thursdays = sorted(d for d in traded if d.weekday() == 3)
    assert [dt.date.fromisoformat(d) for d in events["date"]] == thursdays
    note = (folder / "INVENTED_DATA.txt").read_text(encoding="utf-8")
    assert "INVENTED" in note and DESK.name in note


def test_every_csv_has_exactly_the_required_columns(folder: Path) -> None:
    for market in DEMO_MARKETS:
        header = (folder / f"{market}.csv").read_text(encoding="utf-8").splitlines()[0]
        assert header.split(",") == list(CSV_COLUMNS)
    assert CSV_COLUMNS == ("date", "contract", "expiry", "open", "high", "low", "close",
                           "volume", "open_interest")


def test_rows_are_unique_per_date_and_contract_and_sorted(bars: dict[str, pd.DataFrame]) -> None:
    for market, frame in bars.items():
        assert not frame.duplicated(["date", "contract"]).any(), market
        order = frame.sort_values(["date", "expiry"], kind="stable")
        assert order.index.equals(frame.index), market
        assert frame["date"].min() >= pd.Timestamp(START)
        assert frame["date"].max() <= pd.Timestamp(END)


def test_the_project_loader_reads_the_folder(folder: Path) -> None:
    from hunchbook.core.prices import load_data

    data = load_data(folder)
    assert set(data.bars) == set(DEMO_MARKETS)
    assert all(not b.continuous for b in data.bars.values())


# --- prices ---------------------------------------------------------------------------------

def test_prices_are_positive_and_on_the_tick_grid(bars, library) -> None:
    # Futures trade in whole ticks (common practice, no source).
    for market, frame in bars.items():
        tick = library[market]["tick_size"]
        prices = frame[["open", "high", "low", "close"]].to_numpy()
        assert (prices > 0).all(), market
        in_ticks = prices / tick
        assert np.abs(in_ticks - np.rint(in_ticks)).max() < 1e-6, market


def test_high_and_low_bound_open_and_close(bars) -> None:
    # A bar's high is its highest trade and its low its lowest (definition of OHLC bars).
    for market, frame in bars.items():
        assert (frame["high"] >= frame[["open", "close"]].max(axis=1)).all(), market
        assert (frame["low"] <= frame[["open", "close"]].min(axis=1)).all(), market


def _front_log_returns(frame: pd.DataFrame) -> pd.Series:
    """Daily log changes of the nearest contract, leaving out days when the nearest changes."""
    front = frame.groupby("date").first()
    same = front["contract"].eq(front["contract"].shift())
    return np.log(front["close"]).diff()[same]


@pytest.mark.parametrize(("market", "low", "high"), [
    # Typical annualised volatility by sector (common practice, no source): crude oil ~35 %,
    # gold ~15 %, a 10-year note ~6 % in price terms, an equity index ~18 %. Wide bands:
    # the generator's volatility itself wanders.
    ("CRUDE", 0.25, 0.50), ("GOLD", 0.10, 0.22), ("TNOTE10", 0.04, 0.09), ("EQIDX", 0.12, 0.27),
])
def test_front_contract_volatility_is_typical_for_the_sector(full_window, market, low,
                                                             high) -> None:
    returns = _front_log_returns(full_window[market])
    annual = returns.std(ddof=1) * np.sqrt(252)  # pandas standard deviation, 252-day year
    assert low < annual < high


def test_gold_curve_is_in_contango_and_energy_and_grain_curves_swap(full_window) -> None:
    # Cost of carry keeps gold's deferred contracts above the front; storable commodities such
    # as energy and grains move between contango and backwardation (common practice, no source).
    def deferred_above_front(frame: pd.DataFrame) -> pd.Series:
        by_date = frame.groupby("date")["close"]
        return by_date.nth(1).to_numpy() > by_date.nth(0).to_numpy()

    assert deferred_above_front(full_window["GOLD"]).mean() > 0.99
    for market in ("CRUDE", "NATGAS", "CORN", "SOYBEAN"):
        share = deferred_above_front(full_window[market]).mean()
        assert 0.1 < share < 0.9, market


def test_prices_stay_in_a_plausible_range_over_the_full_window(full_window) -> None:
    for market, frame in full_window.items():
        first = frame["close"].iloc[0]
        assert frame["close"].min() > first / 5, market
        assert frame["close"].max() < first * 5, market


# --- calendars and contracts ----------------------------------------------------------------

def test_trading_dates_are_weekdays_minus_the_sector_holidays(bars, library) -> None:
    # Reference calendar: pandas business days (Monday to Friday) minus the closed dates.
    for market, frame in bars.items():
        closed = COMMON_HOLIDAYS + SECTOR_HOLIDAYS[library[market]["sector"]]
        weekdays = pd.bdate_range(START, END)
        expected = weekdays[[(d.month, d.day) not in closed for d in weekdays]]
        dates = pd.DatetimeIndex(frame["date"].unique())
        assert dates.equals(expected), market


def test_holidays_differ_between_sectors(bars, library) -> None:
    dates_by_sector: dict[str, frozenset] = {}
    for market, frame in bars.items():
        dates = frozenset(frame["date"])
        sector = library[market]["sector"]
        assert dates_by_sector.setdefault(sector, dates) == dates, market
        assert pd.Timestamp("2020-01-01") not in dates and pd.Timestamp("2019-12-25") not in dates
    assert len(dates_by_sector) == 5
    for a, b in itertools.combinations(dates_by_sector.values(), 2):
        assert a != b


def test_contract_codes_expiries_and_trading_life(bars, library) -> None:
    for market, frame in bars.items():
        expiries = frame.groupby("contract")["expiry"].agg(["nunique", "first"])
        assert (expiries["nunique"] == 1).all(), market
        last_row = frame.groupby("contract")["date"].max()
        for code, expiry in expiries["first"].items():
            found = re.fullmatch(rf"{market}-(\d{{4}})-(\d{{2}})", code)
            assert found, code
            delivery = pd.Period(f"{found[1]}-{found[2]}", freq="M")
            if library[market]["sector"] == "energy":
                assert expiry.to_period("M") == delivery - 1, code
            else:
                assert expiry.to_period("M") == delivery, code
            if expiry <= pd.Timestamp(END):
                # A contract trades until its expiry date and not after it.
                assert last_row[code] == expiry, code
            else:
                assert last_row[code] == frame["date"].max(), code


def test_equity_index_expires_on_third_fridays(bars) -> None:
    # Quarterly equity index futures expire on the third Friday (common practice, no source);
    # no demo equity holiday falls between the 15th and the 21st.
    for expiry in bars["EQIDX"]["expiry"].unique():
        day = pd.Timestamp(expiry)
        assert day.day_of_week == 4 and 15 <= day.day <= 21


def test_several_contracts_trade_on_every_date(bars) -> None:
    # Monthly energy: the next 6-12 contracts trade (brief); quarterly: at least three.
    counts = {m: f.groupby("date")["contract"].nunique() for m, f in bars.items()}
    assert counts["CRUDE"].between(8, 10).all() and counts["NATGAS"].between(8, 10).all()
    for market in ("COPPER", "TNOTE10", "EQIDX"):
        assert (counts[market] >= 3).all(), market


# --- volume and open interest ---------------------------------------------------------------

def test_liquidity_moves_to_the_next_contract_before_expiry(full_window) -> None:
    # A volume or open-interest switch roll moves to the next contract when its volume or open
    # interest overtakes the front's, which in practice happens before expiry (common practice,
    # no source; roll rules in the literature on continuous futures series).
    for market, frame in full_window.items():
        volume = frame.pivot(index="date", columns="contract", values="volume")
        interest = frame.pivot(index="date", columns="contract", values="open_interest")
        expiry = frame.groupby("contract")["expiry"].first().sort_values()
        codes = list(expiry.index)
        checked = 0
        for before, front, after in zip(codes, codes[1:], codes[2:], strict=False):
            if expiry[before] < volume.index[0] or expiry[front] > volume.index[-1]:
                continue
            period = volume.index[(volume.index > expiry[before])
                                  & (volume.index <= expiry[front])]
            first_week = period[:5]
            assert volume.loc[first_week, front].sum() > volume.loc[first_week, after].sum()
            last_day = expiry[front]
            assert volume.at[last_day, after] > volume.at[last_day, front], front
            assert interest.at[last_day, after] > interest.at[last_day, front], front
            still_front = period[volume.loc[period, front] >= volume.loc[period, after]]
            assert still_front[-1] < last_day, front
            checked += 1
        assert checked >= 20, market


def test_volume_and_open_interest_are_non_negative_integers(bars) -> None:
    for market, frame in bars.items():
        for column in ("volume", "open_interest"):
            assert pd.api.types.is_integer_dtype(frame[column]), (market, column)
            assert (frame[column] >= 0).all(), (market, column)


# --- market library -------------------------------------------------------------------------

def test_market_library_keys_and_invented_labels(folder: Path, library) -> None:
    text = (folder / "markets.toml").read_text(encoding="utf-8")
    assert text.startswith("# Invented demo market library")
    assert tuple(library) == DEMO_MARKETS
    allowed = {"name", "sector", "multiplier", "tick_size", "currency", "commission",
               "exchange_fee", "regulatory_fee", "slippage_ticks"}
    for market, spec in library.items():
        assert set(spec) <= allowed and allowed - set(spec) <= {"name", "sector"}, market
        assert "(demo)" in spec["name"] and spec["name"].startswith("Invented"), market
        assert spec["currency"] == "USD"
        assert spec["sector"] in SECTOR_HOLIDAYS


def test_costs_are_in_the_usual_ranges(library) -> None:
    # Per contract per side (common practice, no source): commission 0.25-1.00 USD, exchange
    # fee 1-2 USD, regulatory fee 0.02 USD, one or two ticks of slippage.
    for market, spec in library.items():
        assert 0.25 <= spec["commission"] <= 1.00, market
        assert 1.0 <= spec["exchange_fee"] <= 2.0, market
        assert spec["regulatory_fee"] == 0.02, market
        assert spec["slippage_ticks"] in (1, 2), market


@pytest.mark.parametrize(("market", "tick_value"), [
    # Tick value = tick size x contract size (common practice, no source):
    ("CRUDE", 10.00),     # 1,000 barrels x 0.01 USD
    ("NATGAS", 10.00),    # 10,000 MMBtu x 0.001 USD
    ("GOLD", 10.00),      # 100 troy ounces x 0.10 USD
    ("COPPER", 12.50),    # 25,000 pounds x 0.0005 USD
    ("CORN", 12.50),      # 5,000 bushels x a quarter cent
    ("SOYBEAN", 12.50),   # 5,000 bushels x a quarter cent
    ("TNOTE10", 15.625),  # 100,000 face: half of 1/32 of a point
    ("EQIDX", 12.50),     # 50 USD x index, 0.25 index points
])
def test_tick_value_matches_common_contract_facts(folder: Path, market, tick_value) -> None:
    spec = read_market_library(folder / "markets.toml")[market]
    assert spec.tick_size * spec.multiplier == pytest.approx(tick_value, abs=1e-9)


# --- example rule files -------------------------------------------------------------------

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def test_example_rule_files_parse_and_trade_demo_markets_only() -> None:
    from hunchbook.core.rules import read_rules

    files = sorted(EXAMPLES.glob("*.toml"))
    assert 3 <= len(files) <= 5
    assert "demo.toml" in {f.name for f in files}
    for path in files:
        text = path.read_text(encoding="utf-8")
        assert text.startswith("# Invented example for the Fernhollow Lane Partners demo desk")
        spec = read_rules(path)
        assert set(spec.markets) <= set(DEMO_MARKETS), path.name
    demo = read_rules(EXAMPLES / "demo.toml")
    assert set(demo.markets) == set(DEMO_MARKETS)
    assert demo.grid_size() == 1 and demo.sizing.target_vol is not None


# --- desk and bad input ---------------------------------------------------------------------

def test_desk_has_a_lead_and_junior_analysts() -> None:
    roles = [p.role for p in DESK.people]
    assert DESK.lead.role == "research lead"
    assert roles.count("junior analyst") >= 2
    assert "invented" in DESK.story


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"seed": -1}, "seed"),
    ({"seed": 1.5}, "seed"),
    ({"start": "2020-13-01"}, "start date"),
    ({"start": "2021-01-01", "end": "2020-01-01"}, "must come before"),
])
def test_bad_arguments_raise_data_error(tmp_path: Path, kwargs, message) -> None:
    with pytest.raises(DataError, match=message):
        write_demo_data(tmp_path / "x", **kwargs)


def test_a_file_in_place_of_the_folder_is_a_data_error(tmp_path: Path) -> None:
    target = tmp_path / "taken"
    target.write_text("not a folder", encoding="utf-8")
    with pytest.raises(DataError, match="expected a folder"):
        write_demo_data(target, start="2020-01-02", end="2020-02-28")
