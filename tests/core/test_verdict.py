"""Verdict outcomes, each from generated (seeded) P&L built to land in it for a stated reason."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.holdout import holdout_seen_note, holdout_seen_warning
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import Verdict, VerdictThresholds, decide

DAYS = 252


def _exact_sharpe(days: int, annual_sr: float, seed: int, scale: float = 1000.0) -> np.ndarray:
    """Normal noise rescaled so the sample annualised Sharpe ratio is exactly ``annual_sr``."""
    z = np.random.default_rng(seed).normal(size=days)
    z = (z - z.mean()) / z.std(ddof=1)
    return scale * (z + annual_sr / math.sqrt(DAYS))


def _pct(p: float) -> str:
    # a probability below one never reads as 100 % (the house number format, docs)
    text = f"{100.0 * p:.1f} %"
    return "> 99.9 %" if text == "100.0 %" and p < 1.0 else text


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
    # SR 1.0 a year over one year, one set: SR0 = 0, so the DSR is PSR(0) ~ Z(1.0) ~ 0.84 < 0.95
    # (Bailey & Lopez de Prado 2012, 2014). The extra history is the MinTRL of the same paper,
    # 1 + (1 - g3 SR + (g4 - 1)/4 SR^2) (z_0.95 / SR)^2 days, computed here with scipy.
    from scipy import stats as sps

    gross = _exact_sharpe(DAYS, 1.0, seed=2)
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100)
    v = decide(stats)
    assert v.outcome == "too_little_data" and v.label == "Needs more data"
    assert stats.gross_dsr == pytest.approx(0.84, abs=0.02)
    sr = gross.mean() / gross.std(ddof=1)
    g3, g4 = sps.skew(gross), sps.kurtosis(gross, fisher=False)
    min_trl = 1 + (1 - g3 * sr + (g4 - 1) / 4 * sr**2) * (sps.norm.ppf(0.95) / sr) ** 2
    assert min_trl > DAYS
    assert _pct(stats.gross_dsr) in v.reasons[0]
    assert f"about {(min_trl - DAYS) / DAYS:.1f} more years" in v.reasons[0]


def test_a_sharpe_ratio_too_close_to_luck_is_no_edge_not_more_data():
    # SR 0.35 a year over one year: the MinTRL (Bailey & Lopez de Prado 2012) is about
    # (1.645 / 0.35)^2 ~ 22 years, beyond the 10 extra years "needs more data" may ask for.
    gross = _exact_sharpe(DAYS, 0.35, seed=2)
    v = decide(first_pass_statistics(gross, np.zeros_like(gross), spa_reps=0))
    assert v.outcome == "no_edge"
    assert "at least 10 more years" in v.reasons[0]


def test_lost_to_costs_when_costs_take_most_of_a_clear_gross_edge():
    # gross SR 1.5 over 10 years (PSR ~ 1); a constant daily cost leaves net SR 0.2, whose
    # PSR is about Z(0.2 sqrt(10)) = Z(0.63) ~ 0.74 < 0.95; costs take 1.3/1.5 of gross P&L
    gross = _exact_sharpe(10 * DAYS, 1.5, seed=3)
    sd = gross.std(ddof=1)
    cost = np.full_like(gross, gross.mean() - 0.2 * sd / math.sqrt(DAYS))
    stats = first_pass_statistics(gross, cost, spa_reps=100)
    v = decide(stats)
    assert v.outcome == "lost_to_costs" and v.label == "Costs eat it"
    assert stats.net.sharpe == pytest.approx(0.2, abs=1e-9)
    assert stats.costs.break_even_multiple == pytest.approx(1.5 / 1.3)
    assert _pct(stats.net_dsr) in v.reasons[0] and "0.20" in v.reasons[0]
    assert "1.15 times" in v.reasons[0] and "86.7 %" in v.reasons[0]


def test_costs_that_take_a_sliver_do_not_eat_the_edge():
    # gross SR 0.54 over 10 years passes PSR(0) (Z(0.54 sqrt(10)) = Z(1.71) ~ 0.956); costs of
    # 0.04 SR leave net 0.50 (Z(1.58) ~ 0.943 < 0.95), but they take 7.4 % of gross P&L
    # (break-even multiple 13.5 > 5): not material, so the net result just needs more data.
    gross = _exact_sharpe(10 * DAYS, 0.54, seed=4)
    sd = gross.std(ddof=1)
    cost = np.full_like(gross, 0.04 * sd / math.sqrt(DAYS))
    stats = first_pass_statistics(gross, cost, spa_reps=0)
    assert stats.gross_dsr >= 0.95 > stats.net_dsr
    assert stats.costs.break_even_multiple == pytest.approx(0.54 / 0.04)
    v = decide(stats)
    assert v.outcome == "too_little_data"
    assert decide(stats, VerdictThresholds(material_cost_multiple=20)).outcome == "lost_to_costs"


def test_the_best_of_many_noise_sets_does_not_beat_luck():
    # 200 skill-less sets over 5 years: the best annual SR ~ 2.7 x 0.45 ~ 1.2 passes PSR(0) on its
    # own, but the DSR (Bailey & Lopez de Prado 2014) compares it with the expected best of the
    # trials, and the SPA test (Hansen 2005) sees that the sets together do not beat zero.
    rng = np.random.default_rng(5)
    gross = rng.normal(0.0, 1000.0, (5 * DAYS, 200))
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=300, seed=5)
    v = decide(stats)
    assert stats.gross.psr >= 0.95 and stats.net.psr >= 0.95
    assert stats.dsr < 0.95
    # independent sets: the effective number is the raw one (Li & Ji 2005: the eigenvalues of
    # a sample correlation of independent series lie below 2, so the count is their sum, N)
    assert stats.dsr_trials == 200
    # the best set lands just above the expected best of 200 (SR0), so close that confirming
    # it would take more than the 10 extra years "needs more data" may ask for: no edge
    assert 0 < stats.gross.sharpe - stats.expected_max_sharpe < 0.2
    assert v.outcome == "no_edge"
    assert f"{stats.expected_max_sharpe:.2f}" in v.reasons[0] and "more years" in v.reasons[0]
    spa = next(c for c in v.checks if c.key == "spa")
    assert stats.spa.consistent > 0.05 and spa.status == "fail"
    assert f"{stats.spa.consistent:.3f}" in spa.finding


def test_every_check_is_listed_even_after_the_first_failure():
    # a tiny gross Sharpe ratio fails the first edge check; the deflated Sharpe ratios (here
    # about Z(0.1 sqrt(10)) ~ 0.62) and the SPA are still computed and listed with figures
    gross = _exact_sharpe(10 * DAYS, 0.10, seed=1)
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100)
    v = decide(stats)
    keys = [c.key for c in v.checks]
    assert keys == ["history", "gross_edge", "beats_luck", "gross_dsr", "costs", "spa",
                    "net_dsr", "stability", "selection"]
    by_key = {c.key: c for c in v.checks}
    assert by_key["gross_edge"].status == "fail" and by_key["history"].status == "pass"
    assert by_key["gross_dsr"].status == "fail"
    assert by_key["gross_dsr"].figure == _pct(stats.gross_dsr)
    assert by_key["spa"].figure == f"p = {stats.spa.consistent:.3f}"
    assert by_key["stability"].status == "skip"


def test_autocorrelated_pnl_passes_the_iid_deflated_test_but_not_the_spa():
    # Daily P&L following an AR(1) with rho 0.9 (5 years, SR 1.0 a year): the PSR/DSR assume
    # independent days and pass (Z(1.0 sqrt(5)) ~ 0.987), while the stationary bootstrap of the
    # SPA test (Politis & Romano 1994; Hansen 2005) sees a long-run variance (1 + rho)/(1 - rho)
    # = 19 times larger (Hamilton 1994, AR(1) long-run variance [memory]) and does not reject.
    rng = np.random.default_rng(11)
    n = 5 * DAYS
    e = rng.normal(size=n)
    x = np.empty(n)
    x[0] = e[0]
    for t in range(1, n):
        x[t] = 0.9 * x[t - 1] + e[t]
    x = (x - x.mean()) / x.std(ddof=1)
    gross = 1000.0 * (x + 1.0 / math.sqrt(DAYS))
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=500, seed=11)
    v = decide(stats)
    assert stats.net_dsr >= 0.95
    assert v.outcome == "selection_luck" and v.label == "Likely luck"
    assert "SPA test p-value" in v.reasons[0]


def test_a_history_shorter_than_the_minimum_gets_no_verdict():
    # a strong edge on 100 days: no verdict on so short a history (the minimum is a documented
    # house threshold of 126 days, half a year)
    gross = _exact_sharpe(100, 3.0, seed=12)
    v = decide(first_pass_statistics(gross, np.zeros_like(gross), spa_reps=0))
    assert v.outcome == "not_judged" and v.label == "No verdict"
    assert "100 days" in v.reasons[0] and "126 days" in v.reasons[0]


def test_unknown_selection_cannot_promote_but_a_failure_still_fails():
    gross, cost = _plateau_sweep(5)
    single = first_pass_statistics(gross[:, 0], cost[:, 0], spa_reps=0, selection_known=False)
    v = decide(single)
    assert v.outcome == "not_judged" and "Uncorrected for selection" in v.reasons[0]
    weak = _exact_sharpe(10 * DAYS, 0.1, seed=1)
    assert decide(first_pass_statistics(weak, np.zeros_like(weak), spa_reps=0,
                                        selection_known=False)).outcome == "no_edge"


def test_a_seen_holdout_is_a_warning_on_the_verdict():
    gross, cost = _plateau_sweep(5)
    stats = first_pass_statistics(gross, cost, grid_shape=(3, 4), spa_reps=100, seed=5)
    note = holdout_seen_note("2026-03-01T10:00:00", "Ana Ruiz")
    v = decide(stats, warnings=(holdout_seen_warning("2026-03-01T10:00:00", "Ana Ruiz"),))
    assert v.outcome == "passes"
    assert v.reasons[-1] == note and note.startswith("Holdout already seen")
    assert v.checks[-1].key == "holdout" and v.checks[-1].status == "warn"


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
    # twelve sets sharing one edge are about one trial (Li & Ji 2005: one dominant eigenvalue)
    assert stats.n_trials == 12 and stats.dsr_trials < 12
    assert f"{stats.dsr_trials} effective of 12 trials" in v.reasons[0]
    assert all(c.status in ("pass", "skip") for c in v.checks)
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
    # the same SR 1.0, one-year result passes the deflated check at confidence 0.8 (PSR ~ 0.84)
    gross = _exact_sharpe(DAYS, 1.0, seed=2)
    stats = first_pass_statistics(gross, np.zeros_like(gross), spa_reps=100)
    assert decide(stats, VerdictThresholds(confidence=0.8, alpha=0.5)).outcome != "too_little_data"
    assert decide(stats, VerdictThresholds(min_days=300)).outcome == "not_judged"
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
