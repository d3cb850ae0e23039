"""Cost sensitivity and break-even figures."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import (
    break_even_cost_multiple,
    break_even_cost_per_contract,
    cost_sensitivity,
)


def _pnl(seed: int = 0) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    gross = rng.normal(120.0, 1500.0, 2000)
    cost = rng.integers(0, 4, 2000) * 24.5  # 0-3 contracts a day at $24.50 each
    return gross, cost


def test_net_sharpe_at_multiple_one_is_sharpe_of_gross_minus_cost():
    # numpy as the reference: Sharpe of gross - cost, mean / std(ddof 1) x sqrt(252)
    gross, cost = _pnl()
    net = gross - cost
    result = cost_sensitivity(gross, cost)
    assert list(result) == [0.5, 1.0, 2.0, 3.0]
    assert result[1.0] == pytest.approx(net.mean() / net.std(ddof=1) * math.sqrt(252), rel=1e-12)
    half = gross - 0.5 * cost
    assert result[0.5] == pytest.approx(half.mean() / half.std(ddof=1) * math.sqrt(252),
                                        rel=1e-12)
    # more cost, less Sharpe (common practice, no source)
    assert result[0.5] > result[1.0] > result[2.0] > result[3.0]


def test_break_even_multiple_gives_zero_net_total():
    # definition: multiple m with sum(gross - m cost) = 0
    gross, cost = _pnl(1)
    m = break_even_cost_multiple(gross, cost)
    assert m == pytest.approx(gross.sum() / cost.sum())
    assert (gross - m * cost).sum() == pytest.approx(0.0, abs=1e-6 * np.abs(gross).sum())


def test_break_even_cost_per_contract_by_hand():
    # gross total 800 over 8 contracts -> $100 a contract (same case as metrics.summarise test)
    assert break_even_cost_per_contract(np.array([0.0, 500.0, -100.0, 400.0]), 8) == 100.0
    assert math.isnan(break_even_cost_per_contract(np.array([1.0, 2.0]), 0))


def test_no_cost_gives_nan_break_even_multiple():
    assert math.isnan(break_even_cost_multiple(np.array([1.0, 2.0]), np.zeros(2)))


def test_mismatched_lengths_raise_clear_error():
    with pytest.raises(HunchbookError, match="cost"):
        cost_sensitivity(np.zeros(5), np.zeros(4))
