"""Plain-language verdict on a sweep's first-pass statistics: what to do with the idea next.

Checks run in order and the first that fails decides (see docs/statistics.md):

1. gross annual Sharpe ratio below ``min_sharpe``                          -> ``no_edge``
2. gross PSR(0) below ``confidence``: fewer days than the gross MinTRL     -> ``too_little_data``
   (otherwise ``no_edge``)
3. net PSR(0) below ``confidence``                                          -> ``lost_to_costs``
4. DSR below ``confidence`` or SPA consistent p-value above ``alpha``       -> ``selection_luck``
   (also an isolated spike on the grid when ``spike_fails`` is set)
5. otherwise                                                                -> ``passes``

An isolated best cell always adds a warning to the reasons.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

from hunchbook.core.errors import HunchbookError

if TYPE_CHECKING:  # labels are read by the window at start-up: keep scipy out of this import
    from hunchbook.core.stats.first_pass import FirstPassStats

#: Short product label of each outcome.
LABELS = {
    "no_edge": "No edge",
    "too_little_data": "Needs more data",
    "lost_to_costs": "Costs eat it",
    "selection_luck": "Likely luck",
    "passes": "Promote",
}

#: What to do next, one plain sentence per outcome.
ACTIONS = {
    "no_edge": "Discard the idea, or rethink the signal before spending more time on it.",
    "too_little_data": "Keep the idea open and test it on a longer history or more markets.",
    "lost_to_costs": "Trade less often (longer windows, a slower signal, a no-trade buffer) "
                     "and retest.",
    "selection_luck": "Narrow the parameter space or gather more data, then retest.",
    "passes": "Promote the idea to full research.",
}

#: The caution shown with every result (command line, window, reports).
CAUTION = ("Hypothetical backtest results: not investment advice; past results do not predict "
           "future ones. Managing other people's money is regulated - follow your local rules.")


@dataclass(frozen=True)
class VerdictThresholds:
    """Thresholds of :func:`decide`.

    ``min_sharpe`` is the smallest gross annualised Sharpe ratio worth pursuing; ``confidence``
    the probability PSR and DSR must reach; ``alpha`` the largest acceptable SPA p-value;
    ``spike_fails`` turns an isolated best cell on the grid into a ``selection_luck`` outcome.
    """

    min_sharpe: float = 0.3
    confidence: float = 0.95
    alpha: float = 0.05
    spike_fails: bool = False

    def __post_init__(self) -> None:
        for name in ("confidence", "alpha"):
            value = getattr(self, name)
            if not 0.0 < value < 1.0:
                raise HunchbookError(f"verdict threshold '{name}': expected a probability "
                                     f"between 0 and 1, got {value}")


@dataclass(frozen=True)
class Verdict:
    """Outcome of :func:`decide`: machine key, short label, next action, reasons and numbers."""

    outcome: str
    label: str
    action: str
    reasons: tuple[str, ...]
    numbers: dict[str, float | int | bool | None]


def decide(stats: FirstPassStats, thresholds: VerdictThresholds = VerdictThresholds(), *,
           holdout_seen: str | None = None) -> Verdict:
    """Decide what a sweep's first-pass statistics say about the idea (checks in module order).

    ``holdout_seen``: the warning that the idea's held-out years were already unlocked
    (:func:`hunchbook.core.holdout.holdout_seen_note`), appended as the last reason.
    """
    t = thresholds
    gross, net = stats.gross, stats.net
    reasons: list[str] = []
    spike = stats.stability is not None and stats.stability.isolated

    if not gross.sharpe >= t.min_sharpe:
        outcome = "no_edge"
        if math.isnan(gross.sharpe):
            reasons.append("The chosen set's gross P&L never varies, so it has no Sharpe ratio.")
        else:
            reasons.append(f"Gross Sharpe ratio {gross.sharpe:.2f} a year is below the "
                           f"{t.min_sharpe:.2f} worth pursuing.")
    elif not gross.psr >= t.confidence:
        reasons.append(f"Gross Sharpe ratio {gross.sharpe:.2f} a year, but {stats.n_days} days "
                       f"give only {_pct(gross.psr)} confidence that it is above zero "
                       f"(PSR; {_pct(t.confidence)} needed).")
        if stats.n_days < gross.min_trl_days < math.inf:
            outcome = "too_little_data"
            reasons.append(f"About {gross.min_trl_days:.0f} days "
                           f"({gross.min_trl_years:.1f} years) would be needed at this "
                           "Sharpe ratio (minimum track record length).")
        else:
            outcome = "no_edge"
    elif not net.psr >= t.confidence:
        outcome = "lost_to_costs"
        reasons.append(f"Before costs the edge is clear (gross PSR {_pct(gross.psr)}), but the "
                       f"net Sharpe ratio is {net.sharpe:.2f} a year and net PSR only "
                       f"{_pct(net.psr)}.")
        costs = stats.costs
        if costs.gross_total > 0 and costs.cost_total > 0:
            reasons.append(f"Costs take {_pct(costs.cost_total / costs.gross_total)} of gross "
                           f"P&L; the break-even is {costs.break_even_multiple:.2f} times "
                           "the assumed costs.")
    else:
        outcome = "passes"
        if not stats.dsr >= t.confidence:
            outcome = "selection_luck"
            reasons.append(f"Deflated Sharpe ratio {_pct(stats.dsr)} is below "
                           f"{_pct(t.confidence)}: the best of {stats.n_trials} trials would "
                           f"reach a Sharpe ratio near {stats.expected_max_sharpe:.2f} a year "
                           "by luck alone.")
        if stats.spa is not None and not stats.spa.consistent <= t.alpha:
            outcome = "selection_luck"
            reasons.append(f"SPA test p-value {stats.spa.consistent:.3f} is above {t.alpha:.3f}: "
                           f"the {stats.n_sets} sets together do not beat doing nothing.")
        if spike and t.spike_fails:
            outcome = "selection_luck"
        if outcome == "passes":
            spa_text = ("" if stats.spa is None
                        else f", SPA p-value {stats.spa.consistent:.3f}")
            reasons.append(f"Net Sharpe ratio {net.sharpe:.2f} a year holds after costs "
                           f"(net PSR {_pct(net.psr)}) and after selection (DSR "
                           f"{_pct(stats.dsr)}{spa_text}).")
        if stats.spa is None:
            reasons.append("The SPA test was not run.")
    if spike:
        s = stats.stability
        reasons.append(f"Warning: the chosen set is an isolated spike on the grid (net Sharpe "
                       f"{s.value:.2f} a year, its {s.n_neighbours} neighbours average "
                       f"{s.neighbour_mean:.2f}).")
    if holdout_seen:
        reasons.append(holdout_seen)
    return Verdict(outcome=outcome, label=LABELS[outcome], action=ACTIONS[outcome],
                   reasons=tuple(reasons), numbers=_numbers(stats))


def _pct(p: float) -> str:
    return "n/a" if math.isnan(p) else f"{100.0 * p:.1f} %"


def _numbers(stats: FirstPassStats) -> dict[str, float | int | bool | None]:
    values: dict[str, float | int | bool | None] = {
        "days": stats.n_days,
        "sets": stats.n_sets,
        "gross_sharpe": stats.gross.sharpe,
        "net_sharpe": stats.net.sharpe,
        "gross_psr": stats.gross.psr,
        "net_psr": stats.net.psr,
        "gross_min_trl_days": stats.gross.min_trl_days,
        "net_min_trl_days": stats.net.min_trl_days,
        "dsr": stats.dsr,
        "expected_max_sharpe": stats.expected_max_sharpe,
        "n_trials": stats.n_trials,
        "spa_consistent": None if stats.spa is None else stats.spa.consistent,
        "break_even_cost_multiple": stats.costs.break_even_multiple,
        "isolated_spike": None if stats.stability is None else stats.stability.isolated,
    }
    return {k: (None if isinstance(v, float) and not math.isfinite(v) else v)
            for k, v in values.items()}
