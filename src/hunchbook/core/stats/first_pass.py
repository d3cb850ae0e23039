"""First-pass statistics of a parameter sweep: how good is the chosen set, and how much is luck?

Input is the sweep's daily gross P&L and daily cost (both T days x K sets, currency). Net P&L is
gross minus cost. The chosen set (by default the best annualised net Sharpe ratio) is described
in full; all K sets enter the selection-bias corrections (DSR, SPA) and the stability check.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.plain import json_safe
from hunchbook.core.stats.costs import (
    COST_MULTIPLES,
    break_even_cost_multiple,
    break_even_cost_per_contract,
    cost_sensitivity,
)
from hunchbook.core.stats.effective_trials import effective_trials as estimate_effective_trials
from hunchbook.core.stats.inputs import as_count, as_matrix, as_number
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
from hunchbook.core.stats.spa import SpaResult, spa_test
from hunchbook.core.stats.stability import (
    SPIKE_MIN_RATIO,
    SPIKE_SPREAD_MULTIPLE,
    neighbour_counts,
    neighbour_means,
    stability_flag,
)
from hunchbook.core.stats.walk_forward import WalkForwardResult
from hunchbook.core.stats.walk_forward import walk_forward as walk_forward_test

#: Blocks of the PBO's combinatorially symmetric cross-validation (Bailey et al. 2017 suggest 16).
PBO_SPLITS = 16
#: Fewest days in one PBO block: shorter histories use fewer blocks.
MIN_BLOCK_DAYS = 21


@dataclass(frozen=True)
class SeriesStats:
    """Statistics of one daily P&L series (gross or net) of the chosen set.

    Sharpe ratios and their standard errors are annualised (x sqrt(periods)) except
    ``sharpe_per_period``; ``kurtosis`` is raw (normal = 3); ``psr`` is PSR against a true
    Sharpe ratio of 0; ``min_trl_days`` is the MinTRL for PSR(0) at 95 % (infinite when the
    Sharpe ratio is not positive) and ``min_trl_years`` the same in years of ``periods`` days.
    """

    total: float
    mean: float
    sharpe: float
    sharpe_per_period: float
    sharpe_se_iid: float
    sharpe_se: float
    t_stat: float
    newey_west_t: float
    newey_west_lags: int
    skew: float
    kurtosis: float
    psr: float
    min_trl_days: float
    min_trl_years: float


@dataclass(frozen=True)
class StabilityStats:
    """Neighbourhood of the chosen set on the parameter grid (net annualised Sharpe ratios)."""

    cell: int
    value: float
    neighbour_mean: float
    n_neighbours: int
    grid_spread: float
    isolated: bool
    spread_multiple: float
    min_ratio: float


@dataclass(frozen=True)
class CostStats:
    """Cost sensitivity of the chosen set.

    ``net_sharpe[i]`` is the annualised Sharpe ratio of gross - ``multiples[i]`` x cost;
    ``break_even_multiple`` = gross total / cost total; ``break_even_cost_per_contract`` =
    gross total / contracts traded (None when contracts were not given).
    """

    multiples: tuple[float, ...]
    net_sharpe: tuple[float, ...]
    gross_total: float
    cost_total: float
    break_even_multiple: float
    contracts_traded: float | None
    break_even_cost_per_contract: float | None


@dataclass(frozen=True)
class OverfitStats:
    """The probability of backtest overfitting of a sweep's selection, as kept with a run
    (see :func:`hunchbook.core.stats.overfitting.backtest_overfitting`)."""

    pbo: float
    splits: int
    combinations: int
    median_oos_rank: float


@dataclass(frozen=True)
class WalkForwardStats:
    """The walk-forward test of a sweep's selection, as kept with a run (see
    :func:`hunchbook.core.stats.walk_forward.walk_forward`): windows, the share of periods whose
    chosen set changed, the out-of-sample days and their net Sharpe ratio and PSR(0), beside
    the best set's in-sample net Sharpe ratio; ``chosen`` is the set traded in each period."""

    train_days: int
    test_days: int
    anchored: bool
    oos_days: int
    changed_share: float
    oos_sharpe: float
    oos_psr: float
    in_sample_sharpe: float
    chosen: tuple[int, ...]


@dataclass(frozen=True)
class FirstPassStats:
    """First-pass statistics of a sweep (see :func:`first_pass_statistics`).

    ``chosen`` is the column of the chosen set and ``chosen_cell`` its flat grid cell (None
    without a grid). ``n_trials`` counts every trial behind the choice (this sweep's sets and
    any earlier ones); ``effective_trials`` is their effective number, estimated from the
    correlation of their daily net P&L (None when not estimated: every trial then counts).
    ``dsr`` (= ``net_dsr``) and ``gross_dsr`` are the Deflated Sharpe Ratios of the chosen set's
    net and gross P&L over ``dsr_trials`` trials; ``expected_max_sharpe`` (SR0, annualised) the
    expected best of that many skill-less trials whose annualised Sharpe ratios have variance
    ``trial_sharpe_var``. ``spa`` is the SPA test against zero of the net P&L of every trial
    recomputed on these days (``spa_sets`` of them; None if no replications were asked for);
    ``stability`` is None without a grid. ``selection_known`` is False when the number of
    trials behind the P&L was not given (the result is then uncorrected for selection).
    ``overfitting`` and ``walk_forward`` test the selection over this sweep's sets (None with
    one set, a short history, or when not asked for).
    ``notes`` explain special cases in plain words.
    """

    n_days: int
    n_sets: int
    periods: int
    chosen: int
    chosen_cell: int | None
    gross: SeriesStats
    net: SeriesStats
    dsr: float
    expected_max_sharpe: float
    n_trials: int
    trial_sharpe_var: float
    spa: SpaResult | None
    stability: StabilityStats | None
    costs: CostStats
    notes: tuple[str, ...]
    gross_dsr: float = math.nan
    effective_trials: float | None = None
    selection_known: bool = True
    spa_set_count: int | None = None
    overfitting: OverfitStats | None = None
    walk_forward: WalkForwardStats | None = None

    @property
    def net_dsr(self) -> float:
        """The Deflated Sharpe Ratio of the chosen set's net P&L (the same as ``dsr``)."""
        return self.dsr

    @property
    def dsr_trials(self) -> int:
        """The number of trials the deflated Sharpe ratios count: the effective number
        rounded up, or every trial when it was not estimated."""
        if self.effective_trials is None:
            return self.n_trials
        return max(1, min(self.n_trials, math.ceil(self.effective_trials - 1e-9)))

    @property
    def spa_sets(self) -> int:
        """How many sets the SPA test covered."""
        return self.n_sets if self.spa_set_count is None else self.spa_set_count

    def to_dict(self) -> dict[str, object]:
        """JSON-safe nested dict: NaN and infinities become None, tuples become lists."""
        return json_safe(dataclasses.asdict(self))


def first_pass_statistics(
    gross: np.ndarray,
    cost: np.ndarray,
    *,
    grid_shape: tuple[int, ...] | None = None,
    cell_index: np.ndarray | None = None,
    chosen: int | None = None,
    other_net: np.ndarray | None = None,
    n_trials: int | None = None,
    trial_sharpe_var: float | None = None,
    effective_trials: float | None = None,
    other_trial_sharpes: Sequence[float] = (),
    selection_known: bool = True,
    walk_forward: WalkForwardResult | None = None,
    overfitting: OverfitResult | None = None,
    contracts_traded: np.ndarray | None = None,
    spa_reps: int = 1000,
    block_size: float | None = None,
    seed: int = 0,
    periods: int = DAYS_PER_YEAR,
    cost_multiples: tuple[float, ...] = COST_MULTIPLES,
    spike_spread_multiple: float = SPIKE_SPREAD_MULTIPLE,
    spike_min_ratio: float = SPIKE_MIN_RATIO,
) -> FirstPassStats:
    """Honest first-pass statistics of a parameter sweep.

    Parameters
    ----------
    gross, cost : (T, K) daily gross P&L and daily cost (positive) in currency; a 1-D array is
        one set. Net P&L = gross - cost.
    grid_shape : shape of the parameter grid, for the stability check (None: no grid).
    cell_index : (K,) flat grid cell (C order) of each column; sets removed by a constraint are
        simply absent from the matrices and their cells stay empty. Default: column k is cell k,
        which needs K == prod(grid_shape).
    chosen : column of the set to describe; default the best annualised net Sharpe ratio.
        Whichever set is chosen, every set is a trial: picking one never makes it one trial.
    other_net : (T, J) daily net P&L of earlier trials (say, earlier revisions of the rules)
        recomputed on the same days; they join the effective number of trials, the trials'
        Sharpe variance and the SPA test.
    n_trials : every trial behind the choice; default K + J + len(other_trial_sharpes). Trials
        beyond the K + J columns count one each in the effective number.
    trial_sharpe_var : variance of the trials' annualised Sharpe ratios; default the variance
        (ddof 1) of the K + J columns' annualised net Sharpe ratios and ``other_trial_sharpes``
        (0 for a single trial).
    effective_trials : the effective number of the ``n_trials`` when it is already known (a set
        picked out of a judged sweep); default: estimated from the columns.
    other_trial_sharpes : annualised net Sharpe ratios of trials that were not recomputed.
    selection_known : False when the number of trials behind the P&L is unknown.
    walk_forward, overfitting : the walk-forward test and the probability of backtest
        overfitting of the sweep (see :func:`selection_tests`), kept as figures.
    contracts_traded : (K,) contracts traded by each set, for the break-even cost per contract.
    spa_reps, block_size, seed : SPA bootstrap settings (see :func:`spa_test`); 0 reps skips it.
    periods : periods per year (252 trading days).
    cost_multiples : cost multiples for the cost sensitivity.
    spike_spread_multiple, spike_min_ratio : spike rule of :func:`stability_flag`.
    """
    gross_m = as_matrix(gross, "gross P&L")
    cost_m = as_matrix(cost, "cost")
    if gross_m.shape != cost_m.shape:
        raise HunchbookError(f"cost: expected shape {gross_m.shape} like the gross P&L, "
                             f"got {cost_m.shape}")
    n_days, n_sets = gross_m.shape
    if n_days < 3:
        raise HunchbookError(f"gross P&L: first-pass statistics need at least 3 days, got {n_days}")
    periods = as_count(periods, "periods")
    net_m = gross_m - cost_m
    net_sharpes = column_sharpes(net_m, periods)
    chosen = _chosen(chosen, net_sharpes)
    trials_m = net_m
    if other_net is not None:
        others = as_matrix(other_net, "earlier trials' net P&L")
        if others.shape[0] != n_days:
            raise HunchbookError(f"earlier trials' net P&L: expected {n_days} days like the "
                                 f"gross P&L, got {others.shape[0]}")
        trials_m = np.hstack([net_m, others])
    estimate = None
    if effective_trials is None and trials_m.shape[1] > 1:
        estimate = estimate_effective_trials(trials_m).effective
    spa_reps = as_count(spa_reps, "SPA replications", minimum=0)
    trials = TrialFigures(
        net_sharpes=net_sharpes, other_sharpes=column_sharpes(trials_m[:, n_sets:], periods),
        effective=estimate,
        spa=(spa_test(trials_m, reps=spa_reps, block_size=block_size, seed=seed)
             if spa_reps > 0 else None))
    contracts = None
    if contracts_traded is not None:
        traded = np.asarray(contracts_traded, dtype=float).ravel()
        if traded.size != n_sets:
            raise HunchbookError(f"contracts traded: expected one total per set ({n_sets}), "
                                 f"got {traded.size}")
        contracts = float(traded[chosen])
    return judge_choice(
        gross_m[:, chosen], cost_m[:, chosen], trials, chosen=chosen, grid_shape=grid_shape,
        cell_index=cell_index, n_trials=n_trials, trial_sharpe_var=trial_sharpe_var,
        effective_trials=effective_trials, other_trial_sharpes=other_trial_sharpes,
        selection_known=selection_known, walk_forward=walk_forward, overfitting=overfitting,
        contracts_traded=contracts, periods=periods, cost_multiples=cost_multiples,
        spike_spread_multiple=spike_spread_multiple, spike_min_ratio=spike_min_ratio)


@dataclass(frozen=True, eq=False)
class TrialFigures:
    """What the statistics need of every trial on the common days, however it was computed
    (from the whole P&L matrix, or chunk by chunk of a sweep).

    ``net_sharpes`` are the annualised net Sharpe ratios of this sweep's sets and
    ``other_sharpes`` those of the earlier trials recomputed on the same days; ``effective``
    the Li-Ji effective number of all those columns (None: not estimated); ``spa`` the SPA
    test over them (None: not run).
    """

    net_sharpes: np.ndarray
    other_sharpes: np.ndarray
    effective: float | None
    spa: SpaResult | None

    @property
    def columns(self) -> int:
        """Trials whose daily P&L was recomputed on the common days."""
        return self.net_sharpes.size + self.other_sharpes.size


def judge_choice(
    gross: np.ndarray,
    cost: np.ndarray,
    trials: TrialFigures,
    *,
    chosen: int,
    grid_shape: tuple[int, ...] | None = None,
    cell_index: np.ndarray | None = None,
    n_trials: int | None = None,
    trial_sharpe_var: float | None = None,
    effective_trials: float | None = None,
    other_trial_sharpes: Sequence[float] = (),
    selection_known: bool = True,
    walk_forward: WalkForwardResult | None = None,
    overfitting: OverfitResult | None = None,
    contracts_traded: float | None = None,
    periods: int = DAYS_PER_YEAR,
    cost_multiples: tuple[float, ...] = COST_MULTIPLES,
    spike_spread_multiple: float = SPIKE_SPREAD_MULTIPLE,
    spike_min_ratio: float = SPIKE_MIN_RATIO,
) -> FirstPassStats:
    """The statistics of the chosen set (its daily ``gross`` and ``cost`` on the common days)
    given what every trial showed (``trials``); the other arguments as in
    :func:`first_pass_statistics` (``contracts_traded`` the chosen set's own total)."""
    gross = np.asarray(gross, dtype=float).ravel()
    cost = np.asarray(cost, dtype=float).ravel()
    n_days, n_sets = gross.size, trials.net_sharpes.size
    notes: list[str] = []
    extra_sharpes = np.asarray(other_trial_sharpes, dtype=float).ravel()
    counted = trials.columns + extra_sharpes.size
    n_trials = counted if n_trials is None else as_count(n_trials, "number of trials")
    if trial_sharpe_var is None:
        all_sharpes = np.concatenate([trials.net_sharpes, trials.other_sharpes, extra_sharpes])
        finite = all_sharpes[np.isfinite(all_sharpes)]
        trial_sharpe_var = float(np.var(finite, ddof=1)) if finite.size > 1 else 0.0
    else:
        trial_sharpe_var = as_number(trial_sharpe_var, "trial Sharpe variance")
    effective = None if effective_trials is None else min(
        float(n_trials), as_number(effective_trials, "effective number of trials"))
    if effective is None and trials.effective is not None:
        effective = min(float(n_trials),
                        trials.effective + max(n_trials - trials.columns, 0))
    if n_trials == 1:
        notes.append("One trial: no selection to correct for, so the DSR equals PSR(0).")
    dsr_trials = (n_trials if effective is None
                  else max(1, min(n_trials, math.ceil(effective - 1e-9))))

    gross_stats = _series_stats(gross, periods)
    net_stats = _series_stats(gross - cost, periods)
    sr0 = expected_max_sharpe(dsr_trials, trial_sharpe_var)
    dsr = deflated_sharpe(net_stats.sharpe_per_period, n_days, net_stats.skew,
                          net_stats.kurtosis, dsr_trials, trial_sharpe_var, periods)
    gross_dsr = deflated_sharpe(gross_stats.sharpe_per_period, n_days, gross_stats.skew,
                                gross_stats.kurtosis, dsr_trials, trial_sharpe_var, periods)
    cells = None
    stability = None
    if grid_shape is not None:
        cells = _cells(cell_index, grid_shape, n_sets)
        stability = _stability(trials.net_sharpes, cells, grid_shape, chosen,
                               spike_spread_multiple, spike_min_ratio)
    costs = _cost_stats(gross, cost, cost_multiples, periods, contracts_traded)

    return FirstPassStats(
        n_days=n_days, n_sets=n_sets, periods=periods, chosen=chosen,
        chosen_cell=None if cells is None else int(cells[chosen]),
        gross=gross_stats, net=net_stats, dsr=dsr, expected_max_sharpe=sr0,
        n_trials=n_trials, trial_sharpe_var=trial_sharpe_var, spa=trials.spa,
        stability=stability, costs=costs, notes=tuple(notes), gross_dsr=gross_dsr,
        effective_trials=effective, selection_known=bool(selection_known),
        spa_set_count=trials.columns,
        overfitting=None if overfitting is None else OverfitStats(
            pbo=overfitting.pbo, splits=overfitting.splits,
            combinations=overfitting.combinations,
            median_oos_rank=overfitting.median_oos_rank),
        walk_forward=None if walk_forward is None else WalkForwardStats(
            train_days=walk_forward.train_days, test_days=walk_forward.test_days,
            anchored=walk_forward.anchored, oos_days=int(walk_forward.oos_pnl.size),
            changed_share=walk_forward.changed_share, oos_sharpe=walk_forward.oos_sharpe,
            oos_psr=walk_forward.oos_psr, in_sample_sharpe=walk_forward.in_sample_sharpe,
            chosen=walk_forward.chosen))


def judge_pick(gross: np.ndarray, cost: np.ndarray, sweep: FirstPassStats) -> FirstPassStats:
    """Statistics of one set picked out of a judged sweep (a click on its heatmap, say).

    The set's own daily gross P&L and cost are deflated with the sweep's trials: their count,
    effective number and Sharpe variance, never as one trial. The tests of the sweep as a whole
    (SPA, walk-forward, PBO) are the sweep's; the grid-stability check is the chosen set's
    and is left out.
    """
    own = first_pass_statistics(gross, cost, n_trials=sweep.n_trials,
                                effective_trials=sweep.effective_trials,
                                trial_sharpe_var=sweep.trial_sharpe_var, spa_reps=0,
                                periods=sweep.periods)
    return dataclasses.replace(own, spa=sweep.spa, spa_set_count=sweep.spa_sets,
                               overfitting=sweep.overfitting, walk_forward=sweep.walk_forward,
                               selection_known=sweep.selection_known)


def selection_tests(net: np.ndarray, *, periods: int = DAYS_PER_YEAR
                    ) -> tuple[WalkForwardResult | None, OverfitResult | None]:
    """The walk-forward test (default windows) and the probability of backtest overfitting
    (16 splits, fewer on a short history) of choosing the best of a sweep's sets (T x K daily
    net P&L); None for a test that does not apply (one set, too few days)."""
    net_m = as_matrix(net, "net P&L")
    splits = pbo_splits(net_m.shape[0])
    overfit = backtest_overfitting(net_m, splits=splits) if splits >= 2 else None
    return walk_forward_test(net_m, periods=periods), overfit


def pbo_splits(n_days: int) -> int:
    """Blocks of the PBO on a history of ``n_days``: 16, fewer on a short history (blocks of at
    least 21 days); below 2 the PBO does not apply."""
    return min(PBO_SPLITS, 2 * (n_days // (2 * MIN_BLOCK_DAYS)))


def _series_stats(x: np.ndarray, periods: int) -> SeriesStats:
    n = x.size
    sr = sharpe_ratio(x, periods=1)
    skew, kurt = moments(x)
    min_trl = min_track_record_length(sr, skew, kurt)
    root = math.sqrt(periods)
    return SeriesStats(
        total=float(x.sum()), mean=float(x.mean()), sharpe=sr * root, sharpe_per_period=sr,
        sharpe_se_iid=sharpe_se_iid(sr, n) * root,
        sharpe_se=sharpe_se_nonnormal(sr, n, skew, kurt) * root,
        t_stat=t_statistic(x), newey_west_t=newey_west_t(x), newey_west_lags=newey_west_lags(n),
        skew=skew, kurtosis=kurt, psr=probabilistic_sharpe(sr, n, skew, kurt),
        min_trl_days=min_trl, min_trl_years=min_trl / periods)


def column_sharpes(x: np.ndarray, periods: int) -> np.ndarray:
    """Annualised Sharpe ratio (mean / sd, ddof 1) of each column of days x sets; NaN where
    a column does not vary."""
    sd = x.std(axis=0, ddof=1)
    out = np.full(x.shape[1], np.nan)
    np.divide(x.mean(axis=0), sd, out=out, where=sd > 0)
    return out * math.sqrt(periods)


def _chosen(chosen: int | None, net_sharpes: np.ndarray) -> int:
    n_sets = net_sharpes.size
    if chosen is None:
        finite = np.isfinite(net_sharpes)
        return int(np.argmax(np.where(finite, net_sharpes, -np.inf))) if finite.any() else 0
    if isinstance(chosen, bool) or not isinstance(chosen, (int, np.integer)) \
            or not 0 <= chosen < n_sets:
        raise HunchbookError(f"chosen set: expected a column number in 0..{n_sets - 1}, "
                             f"got {chosen!r}")
    return int(chosen)


def _cells(cell_index: np.ndarray | None, grid_shape: tuple[int, ...], n_sets: int) -> np.ndarray:
    try:
        size = math.prod(int(d) for d in grid_shape)
    except (TypeError, ValueError):
        raise HunchbookError(f"grid shape: expected whole numbers, got {grid_shape!r}") from None
    if cell_index is None:
        if n_sets != size:
            raise HunchbookError(f"cell index: {n_sets} sets do not fill a grid of shape "
                                 f"{tuple(grid_shape)} ({size} cells); pass cell_index")
        return np.arange(n_sets)
    cells = np.asarray(cell_index)
    if cells.shape != (n_sets,) or not np.issubdtype(cells.dtype, np.integer):
        raise HunchbookError(f"cell index: expected {n_sets} whole-number cells, got "
                             f"{cells.dtype} array of shape {cells.shape}")
    if cells.min() < 0 or cells.max() >= size or np.unique(cells).size != n_sets:
        raise HunchbookError(f"cell index: expected distinct cells in 0..{size - 1}")
    return cells.astype(np.int64)


def _stability(net_sharpes: np.ndarray, cells: np.ndarray, grid_shape: tuple[int, ...],
               chosen: int, spread_multiple: float, min_ratio: float) -> StabilityStats:
    shape = tuple(int(d) for d in grid_shape)
    grid = np.full(math.prod(shape), np.nan)
    grid[cells] = net_sharpes
    cell = int(cells[chosen])
    finite = grid[np.isfinite(grid)]
    return StabilityStats(
        cell=cell, value=float(grid[cell]),
        neighbour_mean=float(neighbour_means(grid, shape)[cell]),
        n_neighbours=int(neighbour_counts(grid, shape)[cell]),
        grid_spread=float(finite.std()) if finite.size else math.nan,
        isolated=stability_flag(grid, shape, cell, spread_multiple=spread_multiple,
                                min_ratio=min_ratio),
        spread_multiple=float(spread_multiple), min_ratio=float(min_ratio))


def _cost_stats(gross: np.ndarray, cost: np.ndarray, multiples: tuple[float, ...], periods: int,
                contracts: float | None) -> CostStats:
    sensitivity = cost_sensitivity(gross, cost, multiples, periods)
    return CostStats(
        multiples=tuple(sensitivity), net_sharpe=tuple(sensitivity.values()),
        gross_total=float(gross.sum()), cost_total=float(cost.sum()),
        break_even_multiple=break_even_cost_multiple(gross, cost),
        contracts_traded=contracts,
        break_even_cost_per_contract=(None if contracts is None
                                      else break_even_cost_per_contract(gross, contracts)))
