"""Statistics of sweep results: Sharpe ratio inference, selection-bias corrections, SPA test,
parameter stability and cost sensitivity (pure numpy/scipy). See docs/statistics.md."""

from hunchbook.core.stats.costs import (
    break_even_cost_multiple,
    break_even_cost_per_contract,
    cost_sensitivity,
)
from hunchbook.core.stats.effective_trials import (
    EffectiveTrials,
    effective_trials,
    li_ji_count,
)
from hunchbook.core.stats.first_pass import (
    CostStats,
    FirstPassStats,
    OverfitStats,
    SeriesStats,
    StabilityStats,
    WalkForwardStats,
    first_pass_statistics,
    judge_pick,
    selection_tests,
)
from hunchbook.core.stats.overfitting import OverfitResult, backtest_overfitting
from hunchbook.core.stats.psr import (
    deflated_sharpe,
    expected_max_sharpe,
    min_track_record_length,
    probabilistic_sharpe,
)
from hunchbook.core.stats.sharpe import (
    moments,
    newey_west_lags,
    newey_west_t,
    sharpe_ratio,
    sharpe_se_iid,
    sharpe_se_nonnormal,
    t_statistic,
)
from hunchbook.core.stats.spa import (
    SpaPartial,
    SpaPlan,
    SpaResult,
    spa_combine,
    spa_partial,
    spa_plan,
    spa_test,
    stationary_bootstrap_indices,
)
from hunchbook.core.stats.stability import neighbour_counts, neighbour_means, stability_flag
from hunchbook.core.stats.walk_forward import WalkForwardResult, default_windows, walk_forward

__all__ = [
    "CostStats",
    "EffectiveTrials",
    "FirstPassStats",
    "OverfitStats",
    "WalkForwardStats",
    "judge_pick",
    "selection_tests",
    "OverfitResult",
    "SeriesStats",
    "SpaPartial",
    "SpaPlan",
    "SpaResult",
    "StabilityStats",
    "WalkForwardResult",
    "backtest_overfitting",
    "break_even_cost_multiple",
    "break_even_cost_per_contract",
    "cost_sensitivity",
    "default_windows",
    "deflated_sharpe",
    "effective_trials",
    "expected_max_sharpe",
    "first_pass_statistics",
    "li_ji_count",
    "min_track_record_length",
    "moments",
    "neighbour_counts",
    "neighbour_means",
    "newey_west_lags",
    "newey_west_t",
    "probabilistic_sharpe",
    "sharpe_ratio",
    "sharpe_se_iid",
    "sharpe_se_nonnormal",
    "spa_combine",
    "spa_partial",
    "spa_plan",
    "spa_test",
    "stability_flag",
    "stationary_bootstrap_indices",
    "t_statistic",
    "walk_forward",
]
