"""Price file validation: every message names the file, the line and what was expected."""

from __future__ import annotations

import pytest

from hunchbook.core.errors import DataError
from hunchbook.core.prices import load_data, read_market_csv

GOOD = """date,contract,expiry,close,volume,comment
2024-01-02,A,2024-03-15,10.5,100,ignored
2024-01-02,B,2024-06-14,11.0,50,ignored
2024-01-03,A,2024-03-15,10.7,120,
"""


def _read(tmp_path, text, name="M"):
    path = tmp_path / f"{name}.csv"
    path.write_text(text)
    return read_market_csv(path, name)


def test_reads_contract_rows(tmp_path):
    bars = _read(tmp_path, GOOD)
    assert not bars.continuous
    assert bars.columns == {"volume"}
    assert list(bars.frame["contract"]) == ["A", "B", "A"]
    assert list(bars.frame["line"]) == [2, 3, 4]
    assert "comment" not in bars.frame


def test_continuous_file(tmp_path):
    bars = _read(tmp_path, "date,close\n2024-01-03,2.0\n2024-01-02,1.0\n")
    assert bars.continuous
    assert list(bars.frame["close"]) == [1.0, 2.0]


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("date,contract,close\n2024-01-02,A,1\n", "line 1: missing column(s) expiry"),
        ("date,contract,expiry,close\n2024-13-02,A,2024-03-15,1\n",
         "line 2: column 'date': cannot read '2024-13-02' as a date (expected YYYY-MM-DD)"),
        ("date,contract,expiry,close\n2024-01-02,A,2024-03-15,1\n2024-01-03,A,2024-03-15,x1\n",
         "line 3: column 'close': cannot read 'x1' as a finite number"),
        ("date,contract,expiry,close\n2024-01-02,A,2024-03-15,1\n2024-01-02,A,2024-03-15,2\n",
         "line 3: duplicate row for date 2024-01-02, contract 'A' (first seen on line 2)"),
        ("date,contract,expiry,close\n2024-01-02,A,,1\n", "line 2: contract 'A' has no expiry"),
        ("date,contract,expiry,close\n2024-01-02,A,2024-03-15,1\n2024-01-03,A,2024-03-16,1\n",
         "line 3: contract 'A' has expiry 2024-03-16 here but 2024-03-15"),
        ("date,contract,expiry,close\n2024-01-02,A,2024-03-15,\n",
         "line 2: column 'close' is empty"),
        ("date,contract,expiry,close\n2024-01-02,A,2024-03-15,inf\n",
         "line 2: column 'close': cannot read 'inf' as a finite number"),
        ("date,close\n2024-01-02,1\n2024-01-02,2\n", "line 3: duplicate row for date 2024-01-02"),
        ("date,Close,close\n2024-01-02,1,2\n",
         "line 1: column 'close' appears more than once in the header"),
        ("", "file is empty"),
        ("date,contract,expiry,close\n", "header but no price rows"),
    ],
)
def test_bad_files(tmp_path, text, message):
    with pytest.raises(DataError) as info:
        _read(tmp_path, text)
    assert str(info.value).startswith(str(tmp_path / "M.csv"))
    assert message in str(info.value)


def test_binary_file(tmp_path):
    path = tmp_path / "M.csv"
    path.write_bytes(b"date,close\n\xff\xfe\x00\x01,2\n")
    with pytest.raises(DataError, match="not UTF-8"):
        read_market_csv(path, "M")


def test_folder_errors(tmp_path):
    with pytest.raises(DataError, match="data folder not found"):
        load_data(tmp_path / "nope")
    with pytest.raises(DataError, match="has no markets.toml"):
        load_data(tmp_path)
    (tmp_path / "markets.toml").write_text(
        '[M]\nmultiplier = 1\ntick_size = 0.1\ncurrency = "USD"\ncommission = 0\n'
        "exchange_fee = 0\nregulatory_fee = 0\nslippage_ticks = 0\n")
    with pytest.raises(DataError, match="no price file for market 'M' \\(expected M.csv\\)"):
        load_data(tmp_path)
    with pytest.raises(DataError, match="market 'Q' is not in the market library"):
        load_data(tmp_path, ["Q"])
    (tmp_path / "M.csv").write_text(GOOD)
    assert set(load_data(tmp_path).bars) == {"M"}
