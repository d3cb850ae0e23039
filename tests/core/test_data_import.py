"""Importing price files into a data folder (hunchbook.core.data_import and `hunchbook data
import`): month codes and expiry rules against tables written here (common practice, no
source; weekdays from the calendar), generated per-contract files and the WTI series that the
arch package ships run against the independent pandas reference (tests/reference_impl.py),
Parquet against pandas/pyarrow, bad input as one line."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import load_data, run
from hunchbook.cli import main
from hunchbook.core.data_import import (
    MONTH_CODES,
    ImportSettings,
    expiry_from_rule,
    import_again,
    import_data,
    parse_contract_name,
    pattern_regex,
)
from hunchbook.core.errors import DataError
from tests.reference_impl import TWO_MARKET_LIBRARY, backtest, continuous, random_contract_rows

# The futures delivery-month codes (common practice, no source).
MONTHS = {"F": 1, "G": 2, "H": 3, "J": 4, "K": 5, "M": 6, "N": 7, "Q": 8, "U": 9, "V": 10,
          "X": 11, "Z": 12}


def test_month_codes_are_the_exchange_letters():
    assert MONTH_CODES == MONTHS


@pytest.mark.parametrize(("stem", "pattern", "market", "year", "month"), [
    ("CORNZ2019", "{market}{month}{year}", "CORN", 2019, 12),
    ("CLF25", "{market}{month}{year}", "CL", 2025, 1),
    ("ESH99", "{market}{month}{year}", "ES", 1999, 3),
    ("GC_2021Q", "{market}_{year}{month}", "GC", 2021, 8),
    ("px-ZN-M2030", "px-{market}-{month}{year}", "ZN", 2030, 6),
])
def test_contract_names_read_by_the_pattern(stem, pattern, market, year, month):
    name = parse_contract_name(stem, pattern_regex(pattern))
    assert (name.market, name.year, name.month) == (market, year, month)


def test_names_that_do_not_match_are_not_contracts():
    regex = pattern_regex("{market}{month}{year}")
    assert parse_contract_name("CORN", regex) is None
    assert parse_contract_name("CORNA2019", regex) is None  # A is no month code
    with pytest.raises(DataError, match=r"lacks \{year\}"):
        pattern_regex("{market}{month}")


# Expiry rules: dates read off the calendar by hand [memory], Monday to Friday business days,
# exchange holidays not known (common practice, no source, for the rules themselves).
@pytest.mark.parametrize(("rule", "year", "month", "expected"), [
    ("before-day:15:1", 2019, 12, dt.date(2019, 12, 13)),   # 15 Dec 2019 a Sunday
    ("before-day:15:1", 2020, 3, dt.date(2020, 3, 13)),     # 15 Mar 2020 a Sunday
    ("before-day:15:1", 2021, 7, dt.date(2021, 7, 14)),     # 15 Jul 2021 a Thursday
    ("before-day:25:3", 2021, 7, dt.date(2021, 7, 21)),     # 25 Jul 2021 a Sunday: 23, 22, 21
    ("before-first:1", 2020, 3, dt.date(2020, 2, 28)),      # 29 Feb 2020 a Saturday
    ("before-first:3", 2020, 3, dt.date(2020, 2, 26)),
    ("before-first:2", 2019, 9, dt.date(2019, 8, 29)),      # 31 Aug 2019 a Saturday
    ("third-friday", 2020, 3, dt.date(2020, 3, 20)),        # 1 Mar 2020 a Sunday
    ("third-friday", 2021, 6, dt.date(2021, 6, 18)),        # 1 Jun 2021 a Tuesday
    ("third-friday", 2024, 11, dt.date(2024, 11, 15)),      # 1 Nov 2024 a Friday
    ("last-business-day", 2020, 2, dt.date(2020, 2, 28)),
    ("last-business-day", 2021, 5, dt.date(2021, 5, 31)),
    ("last-business-day", 2019, 12, dt.date(2019, 12, 31)),
])
def test_expiry_rules(rule, year, month, expected):
    assert expiry_from_rule(rule, year, month) == expected


@pytest.mark.parametrize("rule", ["before-day:15", "fourth-friday", "before-first:x",
                                  "before-first:0", "before-day:31:1"])
def test_bad_expiry_rules_are_one_line(rule):
    with pytest.raises(DataError) as caught:
        expiry_from_rule(rule, 2020, 1)
    assert rule in str(caught.value) and "\n" not in str(caught.value)


def _contract_files(folder, market, rows):
    """One semicolon-delimited file per contract, named like M1Z2020.csv, with a desk's
    column names and day-first dates; the expiry is left out (taken from a rule)."""
    folder.mkdir(parents=True, exist_ok=True)
    for _, part in rows.groupby("contract"):
        expiry = part["expiry"].iloc[0]
        code = "FGHJKMNQUVXZ"[expiry.month - 1]
        pd.DataFrame({"Trade Date": part["date"].dt.strftime("%d/%m/%Y"),
                      "Settle": part["close"]}).to_csv(
            folder / f"{market}{code}{expiry.year}.csv", sep=";", index=False)


@pytest.fixture(scope="module")
def contract_import(tmp_path_factory):
    root = tmp_path_factory.mktemp("contracts")
    library = root / "library.toml"
    library.write_text(TWO_MARKET_LIBRARY)
    raw = {"M1": random_contract_rows(11, "2020-01-01", 420, holidays=9),
           "M2": random_contract_rows(12, "2020-01-01", 420, holidays=14)}
    for market, rows in raw.items():
        _contract_files(root / "src", market, rows)
    settings = ImportSettings(sources=(str(root / "src"),), expiry={"*": "before-day:16:1"},
                              library=str(library))
    report = import_data(settings, root / "data")
    # the reference's input: the generated rows with the expiry the rule gives, computed with
    # pandas' own business-day offset (reference library): the business day before the 16th
    expected_rows = {}
    for market, rows in raw.items():
        sixteenth = rows["expiry"] + pd.Timedelta(days=1)
        expected_rows[market] = rows.assign(expiry=sixteenth - pd.offsets.BDay(1))
    return root, report, expected_rows


def test_contract_files_import_into_a_folder_the_engine_reads(contract_import):
    root, report, expected_rows = contract_import
    assert report.shapes == {"contract file": report.files_read}
    assert [m.market for m in report.markets] == ["M1", "M2"]
    assert report.library_added == ("M1", "M2")
    data = load_data(root / "data")
    for market, rows in expected_rows.items():
        frame = data.bars[market].frame
        got = frame.groupby("contract")["expiry"].first()
        want = rows.groupby("expiry")["expiry"].first()
        assert list(got.sort_values()) == list(want)
        assert len(frame) == len(rows)
        np.testing.assert_allclose(frame["close"].sum(), rows["close"].sum(), rtol=1e-12)


def test_imported_contract_files_run_like_the_reference(tmp_path, contract_import):
    root, _, expected_rows = contract_import
    rules = tmp_path / "rules.toml"
    rules.write_text('name = "imported"\nmarkets = ["M1", "M2"]\n[signal]\n'
                     'position = "clip((close - mean(close, 10)) / 4, -2, 2)"\n'
                     '[roll]\ndays_before_expiry = 3\nadjust = "difference"\n')
    result = run(rules, root / "data")
    cost = {"M1": 0.85 + 1.45 + 0.02 + 1 * 0.01 * 1000, "M2": 0.5 + 1.2 + 0.02 + 2 * 0.25 * 50}
    mult = {"M1": 1000.0, "M2": 50.0}
    for market, rows in expected_rows.items():
        frame = continuous(rows, 3, "difference")
        adj = frame["adjusted"]
        # a continuous position (a sign() of two averages can tie at zero in the last digit)
        target = ((adj - adj.rolling(10).mean()) / 4).clip(-2, 2)
        expected = backtest(frame, target, mult[market], cost[market])
        got = result.pnl[result.pnl["market"] == market].reset_index(drop=True)
        assert len(got) == len(expected) > 300
        assert got["contract"].str.fullmatch(market + r"[FGHJKMNQUVXZ]\d{4}").all()
        for col in ("position", "price_change", "gross_pnl", "cost", "net_pnl"):
            np.testing.assert_allclose(got[col], expected[col], rtol=1e-9, atol=1e-7,
                                       err_msg=f"{market} {col}")


WTI_LIBRARY = """
[WTI]
multiplier = 1000
tick_size = 0.01
currency = "USD"
commission = 0.85
exchange_fee = 1.45
regulatory_fee = 0.02
slippage_ticks = 1
"""


def test_wti_series_from_arch_imports_and_runs_like_the_reference(tmp_path, capsys):
    """The daily WTI spot series the arch package ships (FRED DCOILWTICO, public data), saved
    as FRED gives it (DATE, DCOILWTICO, holidays blank), imported as one continuous market."""
    arch_wti = pytest.importorskip("arch.data.wti")
    series = arch_wti.load()["DCOILWTICO"]
    source = tmp_path / "WTI.csv"
    series.to_csv(source, index_label="DATE")
    (tmp_path / "lib.toml").write_text(WTI_LIBRARY)
    code = main(["data", "import", str(source), "--into", str(tmp_path / "data"),
                 "--map", "close=DCOILWTICO", "--library", str(tmp_path / "lib.toml")])
    printed = capsys.readouterr().out
    assert code == 0
    holidays = int(series.isna().sum())
    assert holidays > 0 and f"{source}, lines " in printed and "no close price" in printed
    series = series.dropna()
    rules = tmp_path / "wti.toml"
    rules.write_text('name = "wti"\nmarkets = ["WTI"]\n[signal]\n'
                     'position = "sign(mean(close, 20) - mean(close, 100))"\n'
                     '[sizing]\ncontracts = 2.5\n')
    result = run(rules, tmp_path / "data")
    frame = pd.DataFrame({"contract": "WTI", "change": series.diff().fillna(0.0),
                          "roll": False}, index=series.index)
    target = 2.5 * np.sign(series.rolling(20).mean() - series.rolling(100).mean())
    expected = backtest(frame, target, 1000.0, 0.85 + 1.45 + 0.02 + 0.01 * 1000)
    got = result.pnl
    assert list(got["date"]) == list(expected["date"])
    for col in ("position", "gross_pnl", "cost", "net_pnl"):
        np.testing.assert_allclose(got[col], expected[col], rtol=1e-9, atol=1e-6)


def test_crude_long_file_from_arch(tmp_path):
    """arch's monthly Brent and WTI (reference dataset) melted by pandas into one long file
    with a market column: each market's closes come back as pandas holds them."""
    crude = pytest.importorskip("arch.data.crude").load()
    long = crude.reset_index().melt(id_vars="Date", var_name="Product", value_name="Last")
    long.to_csv(tmp_path / "crude.txt", sep="\t", index=False)
    lib = WTI_LIBRARY + WTI_LIBRARY.replace("[WTI]", "[Brent]")
    (tmp_path / "lib.toml").write_text(lib)
    report = import_data(ImportSettings(sources=(str(tmp_path / "crude.txt"),),
                                        library=str(tmp_path / "lib.toml")), tmp_path / "d")
    assert report.shapes == {"long file (continuous)": 1}
    data = load_data(tmp_path / "d")
    for market in ("Brent", "WTI"):
        frame = data.bars[market].frame
        assert list(frame["date"]) == list(crude.index)
        np.testing.assert_array_equal(frame["close"].to_numpy(), crude[market].to_numpy())


def test_parquet_long_file_round_trip(tmp_path):
    """A long contract-level file written by pandas through pyarrow (reference libraries)
    reads back, market by market, to the same values."""
    pytest.importorskip("pyarrow")
    rows = pd.concat([random_contract_rows(5, "2021-01-01", 200, 3).assign(root="M1"),
                      random_contract_rows(6, "2021-01-01", 200, 5).assign(root="M2")])
    rows["volume"] = np.arange(len(rows), dtype=float)
    rows.to_parquet(tmp_path / "prices.parquet", engine="pyarrow", index=False)
    (tmp_path / "lib.toml").write_text(TWO_MARKET_LIBRARY)
    report = import_data(ImportSettings(sources=(str(tmp_path / "prices.parquet"),),
                                        mapping={"market": "root"},
                                        library=str(tmp_path / "lib.toml")), tmp_path / "d")
    assert report.shapes == {"long file": 1}
    for market, want in rows.groupby("root"):
        got = pd.read_csv(tmp_path / "d" / f"{market}.csv", parse_dates=["date", "expiry"])
        want = want.sort_values(["date", "expiry"]).reset_index(drop=True)
        pd.testing.assert_frame_equal(got, want[["date", "contract", "expiry", "close",
                                                 "volume"]], check_dtype=False)


def test_again_reads_the_saved_settings(tmp_path):
    src = tmp_path / "src"
    src.mkdir()
    (src / "CORN.csv").write_text("Date,Close\n2020-01-02,1\n2020-01-03,2\n")
    lib = tmp_path / "lib.toml"
    lib.write_text(WTI_LIBRARY.replace("[WTI]", "[CORN]"))
    assert main(["data", "import", str(src), "--into", str(tmp_path / "d"), "--library",
                 str(lib)]) == 0
    (src / "CORN.csv").write_text("Date,Close\n2020-01-02,1\n2020-01-03,5\n")
    import_again(tmp_path / "d")
    assert (tmp_path / "d" / "CORN.csv").read_text() == "date,close\n2020-01-02,1.0\n" \
                                                        "2020-01-03,5.0\n"


def _folder_state(folder):
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


@pytest.fixture()
def small(tmp_path):
    src = tmp_path / "src"
    src.mkdir()
    (src / "CORNZ2019.csv").write_text("Date,Settle\n2019-12-02,1\n2019-12-03,2\n")
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / "markets.toml").write_text(WTI_LIBRARY.replace("[WTI]", "[CORN]"))
    return src, tmp_path / "data"


@pytest.mark.parametrize(("name", "text", "args", "message"), [
    ("CORNH2020.csv", "Date,Settle\n2020-01-02,1\n2020-01-03,abc\n", [],
     "CORNH2020.csv, line 3: column 'Settle' (close): cannot read 'abc' as a finite number"),
    ("CORNH2020.csv", "Date,Price2\n2020-01-02,1\n", [],
     "CORNH2020.csv, line 1: no column for close (columns: Date, Price2; name it with "
     "--map close=COLUMN)"),
    ("CORNH2020.csv", "Date,Settle\n2020-01-02,1\n", ["--expiry", "CORN=before-day:15"],
     "expiry rule 'before-day:15' not understood"),
    ("CORNH2020.csv", "Date,Settle\n2020-01-02,1\n", ["--map", "close=Bid"],
     "--map close=Bid: no column 'Bid'"),
    ("CORNH2020.csv", "Trade Date,Settle\n03/02/2020,1\n04/02/2020,1\n", [],
     "CORNH2020.csv: column 'Trade Date': dates read both as %d/%m/%Y and as %m/%d/%Y (give "
     "the format with --date-format)"),
    ("CORNH2020.csv", "Date,Settle\n2020-01-02,1\n03/01/2020,1\n", [],
     "CORNH2020.csv, line 3: column 'Date' (date): cannot read '03/01/2020' as a date "
     "(expected the format %Y-%m-%d)"),
    ("WHEATH2020.csv", "Date,Settle\n2020-01-02,1\n", [],
     "market(s) WHEAT not in the market library"),
    ("CORN.csv", "Date,Settle\n2019-12-02,1\n", [],
     "market 'CORN' has an already-continuous series here and contract rows in"),
    ("x/CORNZ2019.csv", "Date,Settle\n2019-12-02,1\n", [],
     "market 'CORN': a second row for 2019-12-02, contract 'CORNZ2019'"),
])
def test_bad_input_is_one_line_and_leaves_the_folder_alone(small, capsys, name, text, args,
                                                           message):
    src, data = small
    (src / name).parent.mkdir(exist_ok=True)
    (src / name).write_text(text)
    sources = [str(src), str(src / "x")] if name.startswith("x/") else [str(src)]
    before = _folder_state(data)
    code = main(["data", "import", *sources, "--into", str(data),
                 "--expiry", "*=before-day:15:1", *args])
    err = capsys.readouterr().err
    assert code == 1
    assert err.count("\n") == 1 and message in err, err
    assert _folder_state(data) == before  # nothing written, no temporary folder left


def test_existing_market_files_need_replace(small, capsys):
    src, data = small
    args = ["data", "import", str(src), "--into", str(data), "--expiry", "CORN=before-day:15:1"]
    assert main(args) == 0
    first = _folder_state(data)
    assert set(first) == {"markets.toml", "CORN.csv", "import.toml"}
    (src / "CORNZ2019.csv").write_text("Date,Settle\n2019-12-02,7\n")
    assert main(args) == 1
    assert "CORN.csv is already there (give --replace to overwrite it)" in \
        capsys.readouterr().err
    assert _folder_state(data) == first
    assert main([*args, "--replace"]) == 0
    assert "2019-12-02,CORNZ2019,2019-12-13,7.0" in (data / "CORN.csv").read_text()


def test_files_that_are_not_prices_are_reported(small, capsys):
    src, data = small
    (src / "README.md").write_text("notes")
    assert main(["data", "import", str(src), "--into", str(data), "--expiry",
                 "*=last-business-day"]) == 0
    out = capsys.readouterr().out
    assert f"{src / 'README.md'}: not a CSV or Parquet file" in out
    assert "CORN" in out and "1 contracts" in out


def test_market_file_with_contract_codes_takes_expiry_from_the_rule(tmp_path):
    """A contract-level market file without an expiry column: the codes are read with the
    pattern and dated by the rule (third Friday, common practice for index futures)."""
    (tmp_path / "ES.csv").write_text("date|contract|last\n2020-03-02|ESH20|3000\n"
                                     "2020-03-02|ESM20|2990\n2020-03-03|ESH20|3010\n")
    (tmp_path / "lib.toml").write_text(WTI_LIBRARY.replace("[WTI]", "[ES]"))
    import_data(ImportSettings(sources=(str(tmp_path / "ES.csv"),), expiry={"ES": "third-friday"},
                               library=str(tmp_path / "lib.toml")), tmp_path / "d")
    frame = load_data(tmp_path / "d").bars["ES"].frame
    assert dict(zip(frame["contract"], frame["expiry"].dt.date, strict=False)) == {
        "ESH20": dt.date(2020, 3, 20), "ESM20": dt.date(2020, 6, 19)}  # 1 Jun 2020 a Monday


@pytest.mark.parametrize(("content", "message"), [
    (b"", "file is empty"),
    (b"date,close\n2020-01-02,\xff\n", "file is not UTF-8 text"),
    (b"PAR1 not really", "not a readable Parquet file"),
])
def test_unreadable_files_are_one_line(tmp_path, content, message):
    name = "X.parquet" if content.startswith(b"PAR1") else "X.csv"
    (tmp_path / name).write_bytes(content)
    with pytest.raises(DataError) as caught:
        import_data(ImportSettings(sources=(str(tmp_path / name),)), tmp_path / "d")
    assert message in str(caught.value) and name in str(caught.value)
    assert "\n" not in str(caught.value) and not (tmp_path / "d").exists()
