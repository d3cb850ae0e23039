"""Verdict outcomes, each from generated (seeded) P&L built to land in it for a stated reason."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import Verdict, VerdictThresholds, decide

DAYS = 252


def _exact_sharpe(days: int, annual_sr: float, seed: int, scale: float = 1000.0) -> np.ndarray:
    """Normal noise rescaled so the sample annualised Sharpe ratio is exactly ``annual_sr``."""
    z = np.random.default_rng(seed).normal(size=days)
    z = (z - z.mean()) / z.std(ddof=1)
    return scale * (z + annual_sr / math.sqrt(DAYS))


def _pct(p: float) -> str:
    return f"{100.0 * p:.1f} %"


def test_no_edge_when_gross_sharpe_is_too_small():
    # gross SR exactly 0.10 < default minimum 0.30 (house threshold, docs/statistics.md)
    gross = _exact_sharpe(10 * DAYS, 0.10, seed=1)
    v = decide(first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100))
    assert v.outcome == "no_edge" and v.label == "No edge"
    assert "0.10" in v.reasons[0] and "0.30" in v.reasons[0]


def test_flat_pnl_is_no_edge_without_crashing():
    v = decide(first_pass_statistics(np.zeros(500), np.zeros(500), spa_reps=50))
    assert v.outcome == "no_edge"
    assert "never varies" in v.reasons[0]
    assert v.numbers["gross_sharpe"] is None


def test_too_little_data_when_one_year_cannot_confirm_a_good_sharpe():
    # SR 1.0 a year over one year: PSR(0) ~ Z(1.0) ~ 0.84 < 0.95 (Bailey & Lopez de Prado 2012);
    # MinTRL ~ 1 + (z_0.95 x sqrt(252))^2 ~ 680 days > 252 available
    gross = _exact_sharpe(DAYS, 1.0, seed=2)
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100)
    v = decide(stats)
    assert v.outcome == "too_little_data" and v.label == "Needs more data"
    assert stats.gross.psr == pytest.approx(0.84, abs=0.02)
    assert _pct(stats.gross.psr) in v.reasons[0]
    assert f"{stats.gross.min_trl_days:.0f} days" in v.reasons[1]
    assert stats.gross.min_trl_days > DAYS


def test_lost_to_costs_when_costs_take_most_of_a_clear_gross_edge():
    # gross SR 1.5 over 10 years (PSR ~ 1); a constant daily cost leaves net SR 0.2, whose
    # PSR is about Z(0.2 sqrt(10)) = Z(0.63) ~ 0.74 < 0.95
    gross = _exact_sharpe(10 * DAYS, 1.5, seed=3)
    sd = gross.std(ddof=1)
    cost = np.full_like(gross, gross.mean() - 0.2 * sd / math.sqrt(DAYS))
    stats = first_pass_statistics(gross, cost, spa_reps=100)
    v = decide(stats)
    assert v.outcome == "lost_to_costs" and v.label == "Costs eat it"
    assert stats.net.sharpe == pytest.approx(0.2, abs=1e-9)
    assert _pct(stats.net.psr) in v.reasons[0] and "0.20" in v.reasons[0]
    assert f"{stats.costs.break_even_multiple:.2f} times" in v.reasons[1]


def test_selection_luck_when_the_best_of_many_noise_sets_is_chosen():
    # 200 skill-less sets over 5 years: the best annual SR ~ 2.7 x 0.45 ~ 1.2 passes PSR on its
    # own, but the DSR (Bailey & Lopez de Prado 2014) sees it is what luck alone would give.
    rng = np.random.default_rng(5)
    gross = rng.normal(0.0, 1000.0, (5 * DAYS, 200))
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=300, seed=5)
    v = decide(stats)
    assert stats.gross.psr >= 0.95 and stats.net.psr >= 0.95
    assert v.outcome == "selection_luck" and v.label == "Likely luck"
    assert stats.dsr < 0.95
    assert _pct(stats.dsr) in v.reasons[0]
    assert f"{stats.expected_max_sharpe:.2f}" in v.reasons[0]
    assert stats.spa.consistent > 0.05  # the SPA test agrees: noise does not beat doing nothing
    assert f"{stats.spa.consistent:.3f}" in v.reasons[1]


def _plateau_sweep(seed: int) -> tuple[np.ndarray, np.ndarray]:
    """3 x 4 grid of sets sharing one real edge (SR ~1.5 a year) plus small own noise."""
    rng = np.random.default_rng(seed)
    common = _exact_sharpe(10 * DAYS, 1.5, seed=seed)
    gross = common[:, None] + rng.normal(0.0, 150.0, (10 * DAYS, 12))
    cost = np.full_like(gross, 5.0)
    return gross, cost


def test_passes_when_a_plateau_survives_costs_and_selection():
    gross, cost = _plateau_sweep(5)
    stats = first_pass_statistics(gross, cost, grid_shape=(3, 4), spa_reps=300, seed=5)
    v = decide(stats)
    assert v.outcome == "passes" and v.label == "Promote"
    assert stats.dsr >= 0.95 and stats.spa.consistent <= 0.05
    assert not stats.stability.isolated
    assert f"{stats.net.sharpe:.2f}" in v.reasons[0] and _pct(stats.dsr) in v.reasons[0]
    assert not any("spike" in r for r in v.reasons)


def _spike_sweep() -> tuple[np.ndarray, np.ndarray]:
    """3 x 3 grid: the centre set has a real edge (SR 2 a year), its neighbours are noise."""
    rng = np.random.default_rng(6)
    gross = rng.normal(0.0, 1000.0, (10 * DAYS, 9))
    gross[:, 4] = _exact_sharpe(10 * DAYS, 2.0, seed=6)
    return gross, np.zeros_like(gross)


def test_isolated_spike_warns_and_fails_only_when_asked():
    gross, cost = _spike_sweep()
    stats = first_pass_statistics(gross, cost, grid_shape=(3, 3), spa_reps=300, seed=6)
    assert stats.chosen == 4 and stats.stability.isolated
    v = decide(stats)
    assert v.outcome == "passes"
    warning = v.reasons[-1]
    assert "isolated spike" in warning
    assert f"{stats.stability.neighbour_mean:.2f}" in warning and "2.00" in warning
    strict = decide(stats, VerdictThresholds(spike_fails=True))
    assert strict.outcome == "selection_luck" and "isolated spike" in strict.reasons[-1]


def test_thresholds_move_the_outcome():
    # the same SR 1.0, one-year result passes the gross PSR check at confidence 0.8 (PSR ~ 0.84)
    gross = _exact_sharpe(DAYS, 1.0, seed=2)
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100)
    assert decide(stats, VerdictThresholds(confidence=0.8, alpha=0.5)).outcome != "too_little_data"
    assert decide(stats, VerdictThresholds(min_sharpe=1.5)).outcome == "no_edge"


def test_verdict_is_frozen_and_numbers_are_json_safe():
    import json

    gross = _exact_sharpe(DAYS, -0.5, seed=8)
    v = decide(first_pass_statistics(gross, np.zeros_like(gross), spa_reps=50))
    assert isinstance(v, Verdict) and v.action.endswith(".")
    json.dumps(v.numbers, allow_nan=False)  # infinite MinTRL became None
    with pytest.raises(AttributeError):
        v.outcome = "passes"  # type: ignore[misc]


def test_bad_thresholds_raise_clear_error():
    with pytest.raises(HunchbookError, match="confidence"):
        VerdictThresholds(confidence=95)
