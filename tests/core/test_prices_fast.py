"""Clean price files read by pandas' C parser give bit for bit what the checking path gives, and
anything irregular falls back to the checking path, with its messages (file, line, field).

Reference: the checking path itself (every cell read as text, then ``pandas.to_datetime`` and
``pandas.to_numeric``), forced with ``prices.FAST_READ = False``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from hunchbook.core import prices
from hunchbook.core.errors import DataError
from hunchbook.core.prices import data_fingerprint, load_data, read_market_csv
from hunchbook.demo import write_demo_data
from tests.core.data_folders import write_folder
from tests.reference_impl import write_random_contracts

CONTRACT_ROWS = "date,contract,expiry,close\n2024-01-02,A,2024-03-15,1\n"


def _checked(monkeypatch: pytest.MonkeyPatch, read, *args, **kwargs):
    with monkeypatch.context() as patch:
        patch.setattr(prices, "FAST_READ", False)
        return read(*args, **kwargs)


def _assert_same_bars(fast: prices.MarketBars, checked: prices.MarketBars) -> None:
    assert (fast.market, fast.file, fast.continuous) == (checked.market, checked.file,
                                                         checked.continuous)
    assert list(fast.frame.columns) == list(checked.frame.columns)
    assert fast.frame.index.equals(checked.frame.index)
    for name in checked.frame.columns:
        a, b = fast.frame[name], checked.frame[name]
        assert a.dtype == b.dtype, name
        if pd.api.types.is_datetime64_any_dtype(b) or pd.api.types.is_numeric_dtype(b):
            # bit for bit: the 8-byte patterns (NaT and NaN included)
            assert np.array_equal(a.to_numpy().view(np.int64), b.to_numpy().view(np.int64)), name
        else:
            assert a.tolist() == b.tolist(), name


@pytest.fixture(scope="module")
def demo_folder(tmp_path_factory):
    """The demo data (contract files with open/high/low/volume/open interest), test input."""
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2016-01-04", end="2019-12-31")


def test_generated_folders_read_the_same_both_ways(demo_folder, tmp_path, monkeypatch):
    # the demo folder, a random-walk contract file, an already-continuous file out of date
    # order with an ignored column, and a header in capitals with blanks, CRLF line ends
    fast = load_data(demo_folder)
    checked = _checked(monkeypatch, load_data, demo_folder)
    assert list(fast.bars) == list(checked.bars)
    for market in checked.bars:
        _assert_same_bars(fast.bars[market], checked.bars[market])
    rng = np.random.default_rng(4)
    continuous = pd.DataFrame({"date": pd.bdate_range("2001-01-01", periods=3000).strftime(
        "%Y-%m-%d"), "close": np.cumsum(rng.normal(0, 1, 3000)) + 500, "note": "x"})
    folder = write_folder(tmp_path / "other", {"RC": pd.DataFrame(), "CC": continuous.sample(
        frac=1.0, random_state=1), "UP": pd.DataFrame()})
    write_random_contracts(folder / "RC.csv", seed=3, start="2010-01-04", periods=2000,
                           holidays=30)
    text = (folder / "RC.csv").read_text().splitlines()
    header = " Date , CONTRACT,Expiry,Close"
    (folder / "UP.csv").write_bytes("\r\n".join([header, *text[1:]]).encode() + b"\r\n")
    before = pd.Timestamp("2012-06-01").date()
    for kwargs in ({}, {"before": before}):
        fast = load_data(folder, **kwargs)
        checked = _checked(monkeypatch, load_data, folder, **kwargs)
        for market in ("RC", "CC", "UP"):
            _assert_same_bars(fast.bars[market], checked.bars[market])
        assert data_fingerprint(fast) == data_fingerprint(checked)


def test_clean_files_take_the_fast_path(demo_folder, monkeypatch):
    # the comparison above compares two different readers: the checking path is never called
    # for a clean file
    def refuse(*args):
        raise AssertionError("checking path used")

    monkeypatch.setattr(prices, "_read_checked", refuse)
    assert len(load_data(demo_folder).bars) > 3


# Each is read by the checking path (the fast path gives up) and every message is the checking
# path's: tests/core/test_prices.py lists the messages as they were.
PLANTED = [
    "date,contract,close\n2024-01-02,A,1\n",
    "date,contract,expiry,close\n2024-13-02,A,2024-03-15,1\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15,x1\n",
    CONTRACT_ROWS + "2024-01-02,A,2024-03-15,2\n",
    "date,contract,expiry,close\n2024-01-02,A,,1\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-16,1\n",
    "date,contract,expiry,close\n2024-01-02,A,2024-03-15,\n",
    "date,contract,expiry,close\n2024-01-02,A,2024-03-15,inf\n",
    "date,close\n2024-01-02,1\n2024-01-02,2\n",
    "",
    "date,contract,expiry,close\n",
    CONTRACT_ROWS + "\n2024-01-03,A,2024-03-15,2\n",  # a blank line (kept out, line numbers kept)
    CONTRACT_ROWS + " , , , \n2024-01-03,A,2024-03-15,2\n",  # a line of blank cells
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15,NaN\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15, 2.5 \n",
    CONTRACT_ROWS + "2024-01-03, ,2024-03-15,2\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15,2,extra\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15,\"1,5\"\n",
    CONTRACT_ROWS + "2024/01/03,A,2024-03-15,2\n",
    CONTRACT_ROWS + " 2024-01-03 ,A,2024-03-15,2\n",
    CONTRACT_ROWS + "2024-01-03,A,2024-03-15,1e400\n",
    "date,contract,expiry,close,volume\n2024-01-02,A,2024-03-15,1,\n2024-01-03,A,2024-03-15,2,7\n",
    "date,contract,expiry,close,volume\n2024-01-02,A,2024-03-15,1,-inf\n",
    "date,Close,close\n2024-01-02,1,2\n",
    "date,close,close\n2024-01-02,1,2\n",
    "date,close,comment\n2024-01-02,1,\"unclosed\n2024-01-03,2,x\n",
    "date,close\n2024-01-02,1,2,3\n",
    "\ufeffdate,close\n2024-01-02,1\n",
    "date,close\n2024-01-02,0x10\n",
]


@pytest.mark.parametrize("text", PLANTED)
def test_planted_problems_read_as_the_checking_path_reads_them(text, tmp_path, monkeypatch):
    path = tmp_path / "M.csv"
    path.write_text(text, encoding="utf-8")
    outcome = {}
    for fast in (True, False):
        monkeypatch.setattr(prices, "FAST_READ", fast)
        try:
            outcome[fast] = read_market_csv(path, "M")
        except DataError as exc:
            outcome[fast] = str(exc)
    if isinstance(outcome[False], str):
        assert outcome[True] == outcome[False]
        assert outcome[False].startswith(str(path))
    else:
        _assert_same_bars(outcome[True], outcome[False])


def test_binary_and_unreadable_files_keep_their_messages(tmp_path):
    path = tmp_path / "M.csv"
    path.write_bytes(b"date,close\n\xff\xfe\x00\x01,2\n")
    with pytest.raises(DataError, match="not UTF-8"):
        read_market_csv(path, "M")
    path.write_bytes(b"date,close\n2024-01-02,1\n2024-01-03,\xff\n")
    with pytest.raises(DataError, match="not UTF-8"):
        read_market_csv(path, "M")
