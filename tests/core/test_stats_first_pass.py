"""First-pass statistics of a sweep, checked against scipy, pandas, statsmodels and the formulas."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import first_pass_statistics, judge_pick


def _sweep(seed: int = 0, days: int = 1500, sets: int = 9) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    common = rng.standard_t(4, days) * 400.0
    gross = common[:, None] * 0.5 + rng.normal(0.0, 500.0, (days, sets)) + 40.0
    gross[:, sets // 2] += 60.0
    cost = rng.integers(0, 3, (days, sets)) * 12.5
    return gross, cost


def _psr(sr: float, n: int, g3: float, g4: float, sr_star: float) -> float:
    # Bailey & Lopez de Prado (2012) PSR, written out here with scipy's normal CDF (s.1)
    return stats.norm.cdf((sr - sr_star) * math.sqrt(n - 1)
                          / math.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr * sr))


def _li_ji(corr: np.ndarray) -> float:
    # Li & Ji (2005), Heredity 95(3): sum over eigenvalues of I(|l| >= 1) + (|l| - floor(|l|)),
    # eigenvalues rounded to 10 decimals first (methods.md s.11 pitfall 1)
    lam = np.round(np.abs(np.linalg.eigvalsh(corr)), 10)
    return float(np.sum((lam >= 1) + (lam - np.floor(lam))))


def test_chosen_set_statistics_against_reference_libraries():
    gross, cost = _sweep()
    fp = first_pass_statistics(gross, cost, spa_reps=200)
    net_df = pd.DataFrame(gross - cost)
    # pandas as reference: annualised net Sharpe of every set, best one chosen
    sharpes = net_df.mean() / net_df.std() * math.sqrt(252)
    assert fp.chosen == int(sharpes.idxmax())
    k = fp.chosen
    net = (gross - cost)[:, k]
    assert fp.net.sharpe == pytest.approx(sharpes[k], rel=1e-12)
    # scipy: moments (raw kurtosis) and t-statistic
    assert fp.net.skew == pytest.approx(stats.skew(net), rel=1e-10)
    assert fp.net.kurtosis == pytest.approx(stats.kurtosis(net, fisher=False), rel=1e-10)
    assert fp.gross.t_stat == pytest.approx(stats.ttest_1samp(gross[:, k], 0.0).statistic,
                                            rel=1e-12)
    # statsmodels HAC t with the Newey-West (1994) default lag
    sm = pytest.importorskip("statsmodels.api")
    fit = sm.OLS(net, np.ones(net.size)).fit(cov_type="HAC",
                                             cov_kwds={"maxlags": fp.net.newey_west_lags})
    assert fp.net.newey_west_t == pytest.approx(fit.tvalues[0], rel=1e-10)
    # PSR(0) from the published formula; SEs annualised by sqrt(252)
    sr = fp.net.sharpe_per_period
    assert fp.net.psr == pytest.approx(_psr(sr, net.size, fp.net.skew, fp.net.kurtosis, 0.0),
                                       rel=1e-12)
    assert fp.net.sharpe_se_iid == pytest.approx(math.sqrt((1 + sr * sr / 2) / net.size)
                                                 * math.sqrt(252), rel=1e-12)
    assert fp.net.min_trl_years == pytest.approx(fp.net.min_trl_days / 252)
    # DSR (Bailey & Lopez de Prado 2014): trial variance = pandas var (ddof 1) of the annualised
    # Sharpe ratios; SR0 = sqrt(V) x expected-max factor(N); DSR = PSR(SR0 / sqrt(252))
    assert fp.trial_sharpe_var == pytest.approx(sharpes.var(), rel=1e-10)
    # N is the effective number of trials of Li & Ji (2005), Heredity 95(3): from the eigenvalues
    # of pandas' correlation matrix of the sets' net P&L, sum of I(l >= 1) + (l - floor(l))
    m_eff = _li_ji(net_df.corr().to_numpy())
    assert fp.n_trials == 9 and fp.effective_trials == pytest.approx(m_eff, abs=1e-9)
    n = math.ceil(m_eff - 1e-9)
    assert fp.dsr_trials == n < 9
    gamma = 0.5772156649015329
    factor = ((1 - gamma) * stats.norm.ppf(1 - 1 / n)
              + gamma * stats.norm.ppf(1 - 1 / (n * math.e)))
    assert fp.expected_max_sharpe == pytest.approx(math.sqrt(sharpes.var()) * factor, rel=1e-10)
    assert fp.dsr == pytest.approx(_psr(sr, net.size, fp.net.skew, fp.net.kurtosis,
                                        fp.expected_max_sharpe / math.sqrt(252)), rel=1e-10)
    # cost sensitivity at multiple 1 is the net Sharpe (definition)
    assert fp.costs.net_sharpe[fp.costs.multiples.index(1.0)] == pytest.approx(fp.net.sharpe)
    assert fp.spa is not None and fp.spa.lower <= fp.spa.consistent <= fp.spa.upper


def test_single_set_dsr_equals_psr_and_says_so():
    # Bailey & Lopez de Prado (2014): one trial, SR0 = 0, DSR = PSR(0)
    gross, cost = _sweep(sets=1)
    fp = first_pass_statistics(gross[:, 0], cost[:, 0], spa_reps=100)
    assert fp.n_sets == 1 and fp.n_trials == 1 and fp.trial_sharpe_var == 0.0
    assert fp.expected_max_sharpe == 0.0
    assert fp.dsr == fp.net.psr
    assert any("DSR equals PSR(0)" in note for note in fp.notes)
    assert fp.spa is not None


def test_all_zero_pnl_does_not_crash_and_serialises():
    fp = first_pass_statistics(np.zeros((300, 4)), np.zeros((300, 4)), grid_shape=(2, 2),
                               spa_reps=50)
    assert math.isnan(fp.gross.sharpe) and math.isnan(fp.dsr)
    d = fp.to_dict()
    text = json.dumps(d, allow_nan=False)  # raises on NaN/inf: JSON-safe check
    assert d["gross"]["sharpe"] is None and d["stability"]["isolated"] is False
    assert json.loads(text)["n_days"] == 300


def test_to_dict_maps_infinity_to_none():
    # a losing set has an infinite MinTRL (no track record proves it): None in JSON
    rng = np.random.default_rng(3)
    gross = rng.normal(-10.0, 100.0, 500)
    fp = first_pass_statistics(gross, np.zeros(500), spa_reps=0)
    assert fp.gross.min_trl_days == math.inf and fp.spa is None
    assert fp.to_dict()["gross"]["min_trl_days"] is None
    json.dumps(fp.to_dict(), allow_nan=False)


def test_grid_with_constrained_cells_uses_cell_index():
    # 3 x 3 grid, cells 2 and 6 removed by a constraint: 7 sets. Neighbour mean computed here
    # by explicit enumeration of the axis neighbours (by hand, no library).
    gross, cost = _sweep(seed=4, sets=7)
    cells = np.array([0, 1, 3, 4, 5, 7, 8])
    fp = first_pass_statistics(gross, cost, grid_shape=(3, 3), cell_index=cells, spa_reps=0,
                               contracts_traded=np.arange(1, 8) * 100.0)
    net = pd.DataFrame(gross - cost)
    sharpes = (net.mean() / net.std() * math.sqrt(252)).to_numpy()
    grid = {int(c): s for c, s in zip(cells, sharpes, strict=True)}
    cell = int(cells[fp.chosen])
    r, c = divmod(cell, 3)
    around = [grid[rr * 3 + cc] for rr, cc in ((r - 1, c), (r + 1, c), (r, c - 1), (r, c + 1))
              if 0 <= rr < 3 and 0 <= cc < 3 and rr * 3 + cc in grid]
    assert fp.chosen_cell == cell
    assert fp.stability.n_neighbours == len(around)
    assert fp.stability.neighbour_mean == pytest.approx(np.mean(around), rel=1e-12)
    # break-even cost per contract = gross total / contracts (same rule as metrics.summarise)
    assert fp.costs.break_even_cost_per_contract == pytest.approx(
        gross[:, fp.chosen].sum() / ((fp.chosen + 1) * 100.0))


def test_explicit_choice_trials_and_variance_are_used():
    gross, cost = _sweep()
    fp = first_pass_statistics(gross, cost, chosen=2, n_trials=50, trial_sharpe_var=0.25,
                               spa_reps=0)
    assert fp.chosen == 2 and fp.n_trials == 50 and fp.trial_sharpe_var == 0.25
    # the 9 sets count as their Li & Ji (2005) effective number, the 41 other trials one each
    n = math.ceil(_li_ji(pd.DataFrame(gross - cost).corr().to_numpy()) + 41 - 1e-9)
    assert fp.dsr_trials == n < 50
    # s.2 factor for N written out with scipy, times sqrt(0.25)
    gamma = 0.5772156649015329
    factor = ((1 - gamma) * stats.norm.ppf(1 - 1 / n)
              + gamma * stats.norm.ppf(1 - 1 / (n * math.e)))
    assert fp.expected_max_sharpe == pytest.approx(0.5 * factor, rel=1e-12)


def test_earlier_trials_join_the_spa_and_the_effective_count():
    # Earlier trials recomputed on the same days: their columns enter the SPA test (Hansen 2005)
    # exactly as if they were sets of this sweep, and the Li & Ji (2005) count of all columns
    gross, cost = _sweep(sets=6)
    earlier = _sweep(sets=3, seed=9)[0]
    joined = first_pass_statistics(np.hstack([gross, earlier]),
                                   np.hstack([cost, np.zeros_like(earlier)]), chosen=0,
                                   spa_reps=200, seed=3)
    split = first_pass_statistics(gross, cost, chosen=0, other_net=earlier, spa_reps=200, seed=3)
    assert split.n_sets == 6 and split.spa_sets == 9 and split.n_trials == 9
    assert split.spa.consistent == joined.spa.consistent
    assert split.effective_trials == pytest.approx(joined.effective_trials)
    assert split.trial_sharpe_var == pytest.approx(joined.trial_sharpe_var)
    assert split.dsr == joined.dsr


def test_bad_inputs_raise_clear_errors():
    gross, cost = _sweep(sets=4)
    with pytest.raises(HunchbookError, match="shape"):
        first_pass_statistics(gross, cost[:, :3])
    with pytest.raises(HunchbookError, match="chosen set"):
        first_pass_statistics(gross, cost, chosen=4, spa_reps=0)
    with pytest.raises(HunchbookError, match="cell_index"):
        first_pass_statistics(gross, cost, grid_shape=(3, 3), spa_reps=0)
    with pytest.raises(HunchbookError, match="distinct cells"):
        first_pass_statistics(gross, cost, grid_shape=(3, 3), cell_index=np.array([0, 0, 1, 2]),
                              spa_reps=0)
    with pytest.raises(HunchbookError, match="at least 3 days"):
        first_pass_statistics(gross[:2], cost[:2])
    with pytest.raises(HunchbookError, match="contracts traded"):
        first_pass_statistics(gross, cost, contracts_traded=np.ones(3), spa_reps=0)


def test_a_picked_set_is_deflated_with_the_whole_sweep():
    # Bailey & Lopez de Prado (2014): the DSR of a set chosen out of N trials uses N (here the
    # Li & Ji effective count) and the trials' Sharpe variance, whichever set was picked; the
    # pick gives the same DSR as judging the sweep with that set chosen
    gross, cost = _sweep()
    sweep = first_pass_statistics(gross, cost, spa_reps=100)
    for k in (sweep.chosen, (sweep.chosen + 3) % 9):
        picked = judge_pick(gross[:, k], cost[:, k], sweep)
        chosen = first_pass_statistics(gross, cost, chosen=k, spa_reps=100)
        assert picked.dsr == chosen.dsr and picked.gross_dsr == chosen.gross_dsr
        assert picked.dsr_trials == sweep.dsr_trials > 1 and picked.spa == sweep.spa
        assert picked.dsr < picked.net.psr  # judged alone it would look better
