"""One digest per market over the rows a run reads: it moves exactly for the market whose price
changed, is the same through the fast and the checking read paths, leaves out the held-out
rows; and the sentence saying which markets changed since an idea's last run.

References: SHA-256 from the standard library ``hashlib`` (FIPS 180-4), recomputed in the test
from the documented byte definition with pandas and numpy; a digest changes when any byte of
its input changes and not otherwise (common practice, no source).
"""

from __future__ import annotations

import datetime as dt
import hashlib
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.core import prices
from hunchbook.core.data_changes import DataChanges, compare_markets
from hunchbook.core.prices import load_data, market_fingerprints
from tests.core.data_folders import write_folder
from tests.reference_impl import random_contract_rows

MARKETS = ("CRUDE", "GOLD", "CORN")
BOUNDARY = dt.date(2021, 6, 1)


def _text(rows: pd.DataFrame) -> str:
    return rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                       expiry=rows["expiry"].dt.strftime("%Y-%m-%d")).to_csv(index=False)


def _rows() -> dict[str, pd.DataFrame]:
    return {m: random_contract_rows(seed, "2020-01-02", 500, 7)
            for seed, m in enumerate(MARKETS, start=11)}


def _folder(path: Path, rows: dict[str, pd.DataFrame]) -> Path:
    return write_folder(path, {m: _text(r) for m, r in rows.items()})


def _bumped(rows: pd.DataFrame, before: bool) -> pd.DataFrame:
    """One close moved by a tick, on the last date before the boundary or the first after."""
    cut = np.datetime64(BOUNDARY, "ns")
    dates = rows["date"][rows["date"] < cut] if before else rows["date"][rows["date"] >= cut]
    row = rows.index[rows["date"] == (dates.max() if before else dates.min())][0]
    out = rows.copy()
    out.loc[row, "close"] += 0.01
    return out


def test_one_close_changed_moves_exactly_that_market(tmp_path):
    rows = _rows()
    base = market_fingerprints(load_data(_folder(tmp_path / "a", rows), before=BOUNDARY))
    assert list(base) == list(MARKETS) and len(set(base.values())) == 3
    changed = {**rows, "GOLD": _bumped(rows["GOLD"], before=True)}
    after = market_fingerprints(load_data(_folder(tmp_path / "b", changed), before=BOUNDARY))
    assert [m for m in MARKETS if after[m] != base[m]] == ["GOLD"]
    # the same files read again give the same digests
    again = market_fingerprints(load_data(_folder(tmp_path / "c", rows), before=BOUNDARY))
    assert again == base


def test_a_held_out_price_changes_nothing(tmp_path):
    rows = _rows()
    base = market_fingerprints(load_data(_folder(tmp_path / "a", rows), before=BOUNDARY))
    later = {**rows, "CRUDE": _bumped(rows["CRUDE"], before=False)}
    assert market_fingerprints(load_data(_folder(tmp_path / "b", later),
                                         before=BOUNDARY)) == base
    # files holding only the rows before the boundary give the very same digests
    cut = np.datetime64(BOUNDARY, "ns")
    short = {m: r[r["date"] < cut] for m, r in rows.items()}
    assert market_fingerprints(load_data(_folder(tmp_path / "c", short),
                                         before=BOUNDARY)) == base
    # read whole, the held-out rows enter
    whole = market_fingerprints(load_data(_folder(tmp_path / "a", rows)))
    assert all(whole[m] != base[m] for m in MARKETS)


def test_the_fast_and_checking_paths_give_the_same_digests(tmp_path, monkeypatch):
    folder = _folder(tmp_path / "a", _rows())
    found = {}
    for fast in (True, False):
        monkeypatch.setattr(prices, "FAST_READ", fast)
        found[fast] = (market_fingerprints(load_data(folder, before=BOUNDARY)),
                       market_fingerprints(load_data(folder)))
    assert found[True] == found[False]


def test_the_digest_follows_its_documented_bytes(tmp_path):
    """A continuous file ``date, close`` recomputed with hashlib over the documented bytes: the
    file name, then each column in name order (name and row count, then values: floats and
    dates as 8-byte values, text each ended by a zero byte)."""
    folder = write_folder(tmp_path / "d", {"RW": "date,close\n2024-01-02,10.5\n"
                                                 "2024-01-03,10.25\n2024-01-04,11\n"})
    n = 3
    dates = pd.to_datetime(["2024-01-02", "2024-01-03"]).to_numpy("datetime64[ns]")
    expected = hashlib.sha256(b"RW.csv\0")
    expected.update(b"close\x002\0" + np.array([10.5, 10.25]).tobytes())
    expected.update(b"contract\x002\0" + b"RW\0RW\0")
    expected.update(b"date\x002\0" + dates.view(np.int64).tobytes())
    nat = np.array(["NaT", "NaT"], dtype="datetime64[ns]").view(np.int64).tobytes()
    expected.update(b"expiry\x002\0" + nat)
    cut = load_data(folder, before=dt.date(2024, 1, 4))
    assert market_fingerprints(cut) == {"RW": expected.hexdigest()}
    assert len(load_data(folder).bars["RW"].frame) == n


def test_a_copy_of_a_market_under_another_name_is_another_file(tmp_path):
    rows = _rows()
    folder = _folder(tmp_path / "a", {"GOLD": rows["GOLD"], "SILVER": rows["GOLD"]})
    found = market_fingerprints(load_data(folder, before=BOUNDARY))
    assert found["GOLD"] != found["SILVER"]  # the file's name is part of what was read


def test_changes_name_the_changed_new_and_gone_markets():
    last = {"CRUDE": "a", "GOLD": "b", "COPPER": "c"}
    now = {"CRUDE": "a2", "GOLD": "b2", "SILVER": "d"}
    found = compare_markets(4, last, now, whole_changed=True)
    assert found == DataChanges(since_run=4, changed=("CRUDE", "GOLD"), new=("SILVER",),
                                gone=("COPPER",))
    assert found.sentence() == ("Data changed since run 4: CRUDE, GOLD (prices differ); "
                                "SILVER (new); COPPER (gone).")


def test_nothing_is_said_when_nothing_changed():
    same = {"CRUDE": "a", "GOLD": "b"}
    assert compare_markets(2, same, dict(same), whole_changed=False) is None
    # the library changed (whole fingerprint differs) but no market's prices did
    assert compare_markets(2, same, dict(same), whole_changed=True) is None
    assert DataChanges(since_run=2).sentence() == ""


@pytest.mark.parametrize("whole_changed", [True, False])
def test_an_older_run_without_digests_says_not_recorded(whole_changed):
    found = compare_markets(3, None, {"CRUDE": "a"}, whole_changed=whole_changed)
    if not whole_changed:
        assert found is None
        return
    assert found == DataChanges(since_run=3, recorded=False)
    assert "not recorded" in found.sentence() and "CRUDE" not in found.sentence()
