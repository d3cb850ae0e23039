"""Walk-forward test of a sweep's selection against a literal loop and planted constructions.

Source of the procedure: Pardo, R. (2008), "The Evaluation and Optimization of Trading
Strategies", 2nd ed., Wiley, chapter on walk-forward analysis [memory]: optimise on a training
window, trade the choice on the following unseen period, move forward by that period, splice the
unseen periods. PSR: shared reference (methods.md) s.1, Bailey & López de Prado (2012), "The
Sharpe Ratio Efficient Frontier", Journal of Risk 15(2).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import default_windows, walk_forward


def _literal_walk_forward(x: np.ndarray, train: int, test: int, anchored: bool):
    """The procedure written out period by period with numpy means and ddof-1 deviations."""
    n_days = x.shape[0]
    n_periods = (n_days - train) // test
    start = n_days - n_periods * test
    starts, chosen = [], []
    for p in range(n_periods):
        first = start + p * test
        window = x[0 if anchored else first - train:first]
        sharpe = window.mean(axis=0) / window.std(axis=0, ddof=1)
        starts.append(first)
        chosen.append(int(np.argmax(sharpe)))  # the first best on ties
    oos = np.concatenate([x[s:s + test, c] for s, c in zip(starts, chosen, strict=True)])
    return start, starts, chosen, oos


def _psr(sr: float, n: int, g3: float, g4: float) -> float:
    """s.1: PSR(0) = Z[SR sqrt(T - 1) / sqrt(1 - g3 SR + (g4 - 1)/4 SR^2)], raw kurtosis g4."""
    return float(stats.norm.cdf(sr * math.sqrt(n - 1)
                                / math.sqrt(1.0 - g3 * sr + (g4 - 1.0) / 4.0 * sr * sr)))


def test_psr_formula_of_the_test_reproduces_the_worked_values():
    # s.1 table: SR 0.458, T 24, normal -> 0.9816749; g3 -2.448, g4 10.164 -> 0.9133611
    assert _psr(0.458, 24, 0.0, 3.0) == pytest.approx(0.9816749, abs=1e-6)
    assert _psr(0.458, 24, -2.448, 10.164) == pytest.approx(0.9133611, abs=1e-6)


@pytest.mark.parametrize(("seed", "days", "sets", "train", "test", "anchored"), [
    (0, 600, 12, 120, 50, False),
    (1, 600, 12, 120, 50, True),
    (2, 1013, 40, 250, 63, False),   # leftover oldest days before the first window
    (3, 1013, 40, 250, 63, True),    # ... which the anchored windows use
    (4, 300, 3, 2, 1, False),        # two-day windows, one-day periods
    (5, 2600, 25, None, None, False),
])
def test_agrees_with_literal_loop(seed, days, sets, train, test, anchored):
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((days, sets)) * rng.uniform(50, 500, sets) + rng.normal(0, 20, sets)
    result = walk_forward(x, train_days=train, test_days=test, anchored=anchored)
    if train is None:  # documented defaults: 3 years of training, 1-year periods
        assert (result.train_days, result.test_days) == (756, 252)
    start, starts, chosen, oos = _literal_walk_forward(x, result.train_days, result.test_days,
                                                       anchored)
    assert result.start == start and result.period_starts == tuple(starts)
    assert result.chosen == tuple(chosen)
    assert np.array_equal(result.oos_pnl, oos) and oos.size == days - start
    changes = sum(a != b for a, b in zip(chosen, chosen[1:], strict=False))
    assert result.changed_share == pytest.approx(changes / (len(chosen) - 1))
    # annualised Sharpe: mean / sd (ddof 1) x sqrt(252), common practice
    assert result.oos_sharpe == pytest.approx(oos.mean() / oos.std(ddof=1) * math.sqrt(252),
                                              rel=1e-12)
    sr = oos.mean() / oos.std(ddof=1)
    assert result.oos_psr == pytest.approx(
        _psr(sr, oos.size, stats.skew(oos), stats.kurtosis(oos, fisher=False)), abs=1e-12)
    assert result.in_sample_sharpe == pytest.approx(
        np.max(x.mean(axis=0) / x.std(axis=0, ddof=1)) * math.sqrt(252), rel=1e-12)


def _planted() -> np.ndarray:
    """5 blocks of 20 days, 3 sets. Every set's day is drift + (+1, -1, +1, ...), so each
    block's deviations are exactly +-1 and the drifts decide every Sharpe ratio:
    set 0 drifts 3 in block 0 and 0 after; set 1 drifts 0.5 in blocks 1-4; set 2 never drifts."""
    wiggle = np.tile([1.0, -1.0], 50)
    drift = np.zeros((5, 3))
    drift[0, 0] = 3.0
    drift[1:, 1] = 0.5
    return np.repeat(drift, 20, axis=0) + wiggle[:, None]


def test_planted_trailing_choice():
    # one-block training windows: the window before block 1 is block 0 (set 0 best, Sharpe
    # about 3); before blocks 2, 3, 4 the window is the block before, where set 1 (drift 0.5)
    # beats sets 0 and 2 (drift 0, Sharpe 0) -- and set 1 is also the best set of the period
    # it trades. Chosen 0, 1, 1, 1: one change in three.
    x = _planted()
    result = walk_forward(x, train_days=20, test_days=20)
    assert result.start == 20 and result.period_starts == (20, 40, 60, 80)
    assert result.chosen == (0, 1, 1, 1)
    assert result.changed_share == pytest.approx(1 / 3)
    assert np.array_equal(result.oos_pnl, np.concatenate([x[20:40, 0], x[40:, 1]]))


def test_planted_anchored_choice():
    # anchored windows keep block 0: before block 4 the window is blocks 0-3, where set 0 has
    # mean 0.75 and sd 1.650 (between-block variance 1.6875 on top of the +-1 wiggle): Sharpe
    # 0.455; set 1 mean 0.375, sd 1.030: Sharpe 0.364 (by hand; windows 0-1 and 0-2 give
    # 0.82 > 0.24 and 0.57 > 0.32). Set 0 stays chosen in every period: no change.
    result = walk_forward(_planted(), train_days=20, test_days=20, anchored=True)
    assert result.anchored and result.period_starts == (20, 40, 60, 80)
    assert result.chosen == (0, 0, 0, 0)
    assert result.changed_share == 0.0


def test_set_that_never_trades_scores_zero():
    # house convention (docs/statistics.md): a window of zero P&L has Sharpe 0, so a set that
    # never trades beats losing sets and loses to winning ones
    rng = np.random.default_rng(3)
    losing = rng.standard_normal((400, 2)) - 0.5
    assert set(walk_forward(np.column_stack([losing, np.zeros(400)]), train_days=100,
                            test_days=50).chosen) == {2}
    winning = rng.standard_normal((400, 2)) + 0.5
    assert 2 not in walk_forward(np.column_stack([winning, np.zeros(400)]), train_days=100,
                                 test_days=50).chosen


@pytest.mark.parametrize(("days", "expected"), [
    (10_000, (756, 252)),   # a long history: 3 years of training, 1-year periods
    (2_520, (756, 252)),
    (1_008, (504, 252)),    # 4 years: half the history for training
    (504, (252, 126)),      # 2 years: quarter-history periods, half the history for training
    (630, (314, 157)),      # half (315) rounded down to whole periods of 157
    (7, (3, 1)),
    (3, (0, 0)),
])
def test_default_windows_rule(days, expected):
    # the rule documented in walk_forward.default_windows and docs/statistics.md
    assert default_windows(days) == expected
    train, test = expected
    if test:
        assert (days - train) // test >= 2  # at least two test periods always fit


def test_default_training_window_follows_a_given_test_period():
    # documented rule: half the history rounded down to whole test periods, at most 3 years
    assert default_windows(1000, test_days=100) == (500, 100)
    assert default_windows(1000, test_days=300) == (300, 300)
    result = walk_forward(np.random.default_rng(2).standard_normal((1000, 3)), test_days=100)
    assert (result.train_days, result.test_days, result.start) == (500, 100, 500)


def test_none_when_too_little_to_walk():
    rng = np.random.default_rng(0)
    assert walk_forward(rng.standard_normal((1000, 1))) is None
    assert walk_forward(rng.standard_normal((100, 3)), train_days=60, test_days=30) is None
    assert walk_forward(rng.standard_normal((3, 3))) is None
    assert walk_forward(rng.standard_normal((100, 3)), train_days=40, test_days=30) is not None


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"train_days": 1}, "train_days"), ({"test_days": 0}, "test_days"),
    ({"periods": 0}, "periods"), ({"test_days": 2.5}, "test_days"),
    ({"anchored": "no"}, "anchored"),
])
def test_bad_arguments_are_clear_errors(kwargs, field):
    with pytest.raises(HunchbookError, match=field):
        walk_forward(np.zeros((100, 3)), **kwargs)


def test_record_equality_json_and_read_only_pnl():
    x = np.random.default_rng(1).standard_normal((300, 4))
    first = walk_forward(x, train_days=60, test_days=40)
    assert first == walk_forward(x.copy(), train_days=60, test_days=40)  # the array is not compared
    figures = first.to_dict()
    assert "oos_pnl" not in figures
    assert json.loads(json.dumps(figures))["chosen"] == list(first.chosen)
    with pytest.raises(ValueError):
        first.oos_pnl[0] = 1.0
