"""Continuous series: hand-worked two- and three-contract examples, every number written out.

Source of the two-contract example: the worked example of shared reference section 5
(after Masteika, Rutkauskas & Alexander 2012, "Continuous futures data series for back testing
and technical analysis", IPEDR 29), recomputed by hand below.
"""

from __future__ import annotations

import numpy as np
import pytest

from hunchbook.core.continuous import build_continuous
from hunchbook.core.errors import DataError
from hunchbook.core.prices import read_market_csv
from hunchbook.core.rules.model import RollSpec

# Mon 2024-01-01 .. Mon 2024-01-08: six trading days (no rows on the weekend)
DAYS = ["2024-01-01", "2024-01-02", "2024-01-03", "2024-01-04", "2024-01-05", "2024-01-08"]
A = [50.00, 51.00, 50.50]                      # contract A, days 1-3
B = [52.00, 53.10, 52.40, 54.00, 55.00, 54.20]  # contract B, days 1-6
# A expires Fri 2024-01-05; two business days before is Wed 2024-01-03 = day 3, so with
# days_before_expiry = 2 contract A is rolled at the close of day 3.
A_EXPIRY, B_EXPIRY = "2024-01-05", "2024-03-15"


def _write(tmp_path, rows, name="TEST"):
    lines = ["date,contract,expiry,close"] + [",".join(map(str, r)) for r in rows]
    path = tmp_path / f"{name}.csv"
    path.write_text("\n".join(lines) + "\n")
    return read_market_csv(path, name)


def _two_contracts(tmp_path):
    rows = [(d, "A", A_EXPIRY, p) for d, p in zip(DAYS, A, strict=False)]
    rows += [(d, "B", B_EXPIRY, p) for d, p in zip(DAYS, B, strict=True)]
    return _write(tmp_path, rows[::-1])  # any row order is allowed


def test_two_contracts_difference(tmp_path):
    s = build_continuous(_two_contracts(tmp_path), RollSpec(days_before_expiry=2))
    # held at the close of day 3 is B (A is rolled at that close)
    assert list(s.contract) == ["A", "A", "B", "B", "B", "B"]
    assert list(s.roll) == [False, False, True, False, False, False]
    np.testing.assert_allclose(s.close_raw, [50.00, 51.00, 52.40, 54.00, 55.00, 54.20])
    # held contract's own change: day 3 uses A (held at close of day 2): 50.50 - 51.00
    np.testing.assert_allclose(s.change, [0.0, 1.00, -0.50, 1.60, 1.00, -0.80], atol=1e-12)
    # gap at the roll: B3 - A3 = 52.40 - 50.50 = 1.90 added to days 1-2 (reference table)
    np.testing.assert_allclose(s.adjusted["close"], [51.90, 52.90, 52.40, 54.00, 55.00, 54.20])
    # difference adjustment: adjusted changes equal held-contract changes
    np.testing.assert_allclose(np.diff(s.adjusted["close"]), s.change[1:], atol=1e-12)
    # two long contracts, multiplier 1,000: true P&L $4,600 (reference section 5)
    assert s.change.sum() * 1000 * 2 == pytest.approx(4600.0)


def test_two_contracts_ratio(tmp_path):
    s = build_continuous(_two_contracts(tmp_path), RollSpec(days_before_expiry=2, adjust="ratio"))
    factor = 52.40 / 50.50  # 1.0376237624 (reference table)
    np.testing.assert_allclose(
        s.adjusted["close"], [51.881188, 52.918812, 52.40, 54.00, 55.00, 54.20], atol=5e-7)
    assert s.adjusted["close"][0] == pytest.approx(50.00 * factor)
    # ratio adjustment: adjusted returns equal the held contract's own returns
    held_prev = np.concatenate(([np.nan], s.close_raw[:-1]))
    held_returns = (held_prev + s.change) / held_prev
    held_returns[2] = 50.50 / 51.00  # day 3 is earned on A
    np.testing.assert_allclose(s.adjusted["close"][1:] / s.adjusted["close"][:-1],
                               held_returns[1:], rtol=1e-12)
    # P&L never comes from the adjusted series: the change is the same as with difference
    np.testing.assert_allclose(s.change, [0.0, 1.00, -0.50, 1.60, 1.00, -0.80], atol=1e-12)


def test_none_keeps_the_gap(tmp_path):
    s = build_continuous(_two_contracts(tmp_path), RollSpec(days_before_expiry=2, adjust="none"))
    np.testing.assert_allclose(s.adjusted["close"], [50.00, 51.00, 52.40, 54.00, 55.00, 54.20])


def test_three_contracts(tmp_path):
    # Contracts X (exp Thu 2024-01-04), Y (exp Tue 2024-01-09), Z (exp 2024-02-15), N = 1:
    # X cutoff Wed 01-03: rolled at the close of day 3;
    # Y cutoff Mon 01-08: rolled at the close of day 6.
    x = [10.0, 10.5, 10.2]
    y = [11.0, 11.2, 11.0, 11.6, 11.4, 11.8]
    z = [12.0, 12.1, 12.3, 12.5, 12.2, 12.9]
    rows = [(d, "X", "2024-01-04", p) for d, p in zip(DAYS, x, strict=False)]
    rows += [(d, "Y", "2024-01-09", p) for d, p in zip(DAYS, y, strict=True)]
    rows += [(d, "Z", "2024-02-15", p) for d, p in zip(DAYS, z, strict=True)]
    s = build_continuous(_write(tmp_path, rows), RollSpec(days_before_expiry=1))
    assert list(s.contract) == ["X", "X", "Y", "Y", "Y", "Z"]
    np.testing.assert_allclose(s.close_raw, [10.0, 10.5, 11.0, 11.6, 11.4, 12.9])
    # changes: d2 X 10.5-10.0; d3 X 10.2-10.5; d4 Y 11.6-11.0; d5 Y 11.4-11.6; d6 Y 11.8-11.4
    np.testing.assert_allclose(s.change, [0.0, 0.5, -0.3, 0.6, -0.2, 0.4], atol=1e-12)
    # gaps: day 3 Y3 - X3 = 11.0 - 10.2 = 0.8; day 6 Z6 - Y6 = 12.9 - 11.8 = 1.1
    # adjusted: days 1-2 + 0.8 + 1.1; days 3-5 + 1.1; day 6 as is
    np.testing.assert_allclose(s.adjusted["close"], [11.9, 12.4, 12.1, 12.7, 12.5, 12.9],
                               atol=1e-12)
    s_ratio = build_continuous(_write(tmp_path, rows), RollSpec(days_before_expiry=1,
                                                                adjust="ratio"))
    f3, f6 = 11.0 / 10.2, 12.9 / 11.8
    np.testing.assert_allclose(s_ratio.adjusted["close"],
                               [10.0 * f3 * f6, 10.5 * f3 * f6, 11.0 * f6, 11.6 * f6,
                                11.4 * f6, 12.9], rtol=1e-12)


def test_cutoff_after_last_date_keeps_holding(tmp_path):
    rows = [(d, "A", "2024-02-01", p) for d, p in zip(DAYS, B, strict=True)]
    s = build_continuous(_write(tmp_path, rows), RollSpec(days_before_expiry=5))
    assert set(s.contract) == {"A"} and not s.roll.any()


def test_volume_switch(tmp_path):
    path = tmp_path / "V.csv"
    vol_a = [900, 800, 300, 100]
    vol_b = [100, 500, 700, 900]
    lines = ["date,contract,expiry,close,volume"]
    for i, d in enumerate(DAYS[:4]):
        lines.append(f"{d},A,2024-01-20,{50 + i},{vol_a[i]}")
        lines.append(f"{d},B,2024-02-20,{60 + i},{vol_b[i]}")
    path.write_text("\n".join(lines) + "\n")
    s = build_continuous(read_market_csv(path, "V"), RollSpec(rule="volume"))
    # B's volume first exceeds A's on day 3 (700 > 300): switch at that close
    assert list(s.contract) == ["A", "A", "B", "B"]
    np.testing.assert_allclose(s.change, [0.0, 1.0, 1.0, 1.0])


def test_volume_switch_needs_the_column(tmp_path):
    with pytest.raises(DataError, match="needs a 'volume' column"):
        build_continuous(_two_contracts(tmp_path), RollSpec(rule="volume"))


def test_ratio_rejects_non_positive_price(tmp_path):
    rows = [(d, "A", A_EXPIRY, p) for d, p in zip(DAYS, [50.0, -1.0, 50.5], strict=False)]
    rows += [(d, "B", B_EXPIRY, p) for d, p in zip(DAYS, B, strict=True)]
    bars = _write(tmp_path, rows)
    with pytest.raises(DataError, match=r"TEST.csv, line 3: column 'close': price -1"):
        build_continuous(bars, RollSpec(days_before_expiry=2, adjust="ratio"))
    # the difference adjustment has no such need
    build_continuous(bars, RollSpec(days_before_expiry=2, adjust="difference"))


def test_gap_in_held_contract_is_reported(tmp_path):
    rows = [(d, "A", "2024-02-01", p) for d, p in zip(DAYS, B, strict=True) if d != DAYS[3]]
    rows += [(d, "B", "2024-03-01", p) for d, p in zip(DAYS, B, strict=True)]
    with pytest.raises(DataError, match="'A' is held on 2024-01-04 but has no row"):
        build_continuous(_write(tmp_path, rows), RollSpec(days_before_expiry=5))
