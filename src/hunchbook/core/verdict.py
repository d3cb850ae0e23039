"""Plain-language verdict on a sweep's first-pass statistics: what to do with the idea next.

Every check is computed and listed with its figure and pass/fail; the first check that fails
decides the outcome (see docs/statistics.md, "Verdict"):

1. ``history``      fewer than ``min_days`` days                              -> ``not_judged``
2. ``gross_edge``   gross annual Sharpe ratio below ``min_sharpe``            -> ``no_edge``
3. ``beats_luck``   gross Sharpe ratio not above SR0, the best that the trials
                    would reach by luck alone                                 -> ``no_edge``
4. ``gross_dsr``    gross deflated Sharpe ratio below ``confidence``          -> ``too_little_data``
                    (``no_edge`` when more than ``max_more_years`` would be needed)
5. ``costs``        net deflated Sharpe ratio below ``confidence`` while the costs are material
                    (break-even multiple below ``material_cost_multiple``)    -> ``lost_to_costs``
6. ``spa``          SPA consistent p-value above ``alpha``                    -> ``selection_luck``
7. ``net_dsr``      net deflated Sharpe ratio below ``confidence`` (costs not to blame): as
                    check 4 on the net figures
8. ``stability``    an isolated spike on the grid: a warning, or ``selection_luck`` with
                    ``spike_fails``
9. ``selection``    the number of trials behind the result is unknown         -> ``not_judged``
10. warnings given by the caller (the holdout already seen, ...): listed, never deciding
11. otherwise                                                                  -> ``passes``
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from hunchbook.core.errors import HunchbookError
from hunchbook.core.formats import pct as _pct
from hunchbook.core.formats import plural as _plural
from hunchbook.core.labels import Vocabulary

if TYPE_CHECKING:  # labels are read by the window at start-up: keep scipy out of this import
    from hunchbook.core.stats.first_pass import FirstPassStats

#: Short product label of each outcome.
LABELS = {
    "not_judged": "No verdict",
    "no_edge": "No edge",
    "too_little_data": "Needs more data",
    "lost_to_costs": "Costs eat it",
    "selection_luck": "Likely luck",
    "passes": "Promote",
}

#: The outcomes as people read them: the label printed, label or key accepted.
VERDICTS = Vocabulary("verdict", LABELS)

#: What to do next, one plain sentence per outcome.
ACTIONS = {
    "not_judged": "Give the verdict what it needs (see the reasons) and judge the idea again.",
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

#: Status of a check: it passed, it failed (the first failure decides), it only warns, or it
#: could not be computed.
STATUSES = ("pass", "fail", "warn", "skip")


@dataclass(frozen=True)
class VerdictThresholds:
    """Thresholds of :func:`decide` (documented in docs/statistics.md).

    ``min_days`` is the shortest history judged at all; ``min_sharpe`` the smallest gross
    annualised Sharpe ratio worth pursuing; ``confidence`` the probability the deflated Sharpe
    ratios must reach; ``max_more_years`` the most extra history "needs more data" may ask for
    (beyond it the result is too weak to confirm: no edge); ``material_cost_multiple`` the
    break-even cost multiple below which costs count as material; ``alpha`` the largest
    acceptable SPA p-value; ``spike_fails`` turns an isolated best cell on the grid into a
    ``selection_luck`` outcome.
    """

    min_days: int = 126
    min_sharpe: float = 0.3
    confidence: float = 0.95
    max_more_years: float = 10.0
    material_cost_multiple: float = 5.0
    alpha: float = 0.05
    spike_fails: bool = False

    def __post_init__(self) -> None:
        for name in ("confidence", "alpha"):
            value = getattr(self, name)
            if not 0.0 < value < 1.0:
                raise HunchbookError(f"verdict threshold '{name}': expected a probability "
                                     f"between 0 and 1, got {value}")
        for name in ("min_days", "max_more_years", "material_cost_multiple"):
            if not getattr(self, name) > 0:
                raise HunchbookError(f"verdict threshold '{name}': expected a positive number, "
                                     f"got {getattr(self, name)}")


@dataclass(frozen=True)
class Check:
    """One check of the verdict: its key, a short name, the status, the figure it rests on
    and one plain sentence saying what it found."""

    key: str
    name: str
    status: str
    figure: str
    finding: str


@dataclass(frozen=True)
class Verdict:
    """Outcome of :func:`decide`: machine key, short label, next action, the reasons (the
    deciding check first), every check in order, and the key numbers."""

    outcome: str
    label: str
    action: str
    reasons: tuple[str, ...]
    numbers: dict[str, float | int | bool | None]
    checks: tuple[Check, ...] = ()


def warning(key: str, name: str, figure: str, finding: str) -> Check:
    """A check that only warns: facts about the run beyond its statistics (the holdout was
    already seen, the idea is mostly the same bet as one already promoted, ...), listed after
    the statistical checks and added to the reasons; it never decides the outcome."""
    return Check(key, name, "warn", figure, finding)


def decide(stats: FirstPassStats, thresholds: VerdictThresholds = VerdictThresholds(), *,
           warnings: Sequence[Check] = ()) -> Verdict:
    """Decide what a sweep's first-pass statistics say about the idea.

    Every check of the module docstring is run and listed; the first failing one decides.
    ``warnings`` (see :func:`warning`) are listed after the statistical checks and added to
    the reasons, in order.
    """
    t = thresholds
    found: list[tuple[Check, str | None]] = []  # each check and the outcome its failure gives
    for make in _CHECKS:
        found.append(make(stats, t))
    found += [(w, None) for w in warnings]
    outcome = next((fail for check, fail in found if check.status == "fail"), "passes")
    checks = tuple(check for check, _ in found)
    deciding = [c.finding for c in checks if c.status == "fail"][:1]
    if outcome == "passes":
        deciding = [_passing_sentence(stats)]
    warnings = [c.finding for c in checks if c.status == "warn"]
    return Verdict(outcome=outcome, label=LABELS[outcome], action=ACTIONS[outcome],
                   reasons=tuple(deciding + warnings), numbers=_numbers(stats), checks=checks)


Outcome = tuple[Check, "str | None"]


def _history(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    ok = s.n_days >= t.min_days
    finding = (f"{s.n_days:,} days of history." if ok else
               f"{s.n_days:,} days are too short a history to judge (at least "
               f"{t.min_days:,} days are needed).")
    return Check("history", "History", "pass" if ok else "fail", f"{s.n_days:,} days",
                 finding), "not_judged"


def _gross_edge(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    sr = s.gross.sharpe
    if math.isnan(sr):
        return Check("gross_edge", "Gross edge", "fail", "n/a",
                     "The chosen set's gross P&L never varies, so it has no Sharpe ratio."), \
            "no_edge"
    ok = sr >= t.min_sharpe
    finding = (f"Gross Sharpe ratio {sr:.2f} a year is {'at or above' if ok else 'below'} the "
               f"{t.min_sharpe:.2f} worth pursuing.")
    return Check("gross_edge", "Gross edge", _status(ok), f"{sr:.2f} a year", finding), "no_edge"


def _beats_luck(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    sr, sr0 = s.gross.sharpe, s.expected_max_sharpe
    trials = _trials_text(s)
    if math.isnan(sr):
        return Check("beats_luck", "Beats luck", "skip", "n/a",
                     "No Sharpe ratio to compare with luck."), None
    ok = sr > sr0
    if s.dsr_trials == 1:
        finding = (f"One trial: luck alone would give a Sharpe ratio of 0, and the gross Sharpe "
                   f"ratio is {sr:.2f} a year.")
    else:
        finding = (f"Gross Sharpe ratio {sr:.2f} a year is {'above' if ok else 'not above'} "
                   f"{sr0:.2f}, the best that {trials} would reach by luck alone"
                   + ("." if ok else ": no edge beyond what the search itself produces."))
    return Check("beats_luck", "Beats luck", _status(ok), f"{sr:.2f} vs {sr0:.2f}",
                 finding), "no_edge"


def _gross_dsr(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    return _deflated(s, t, "gross")


def _costs(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    gross_total, cost_total = s.costs.gross_total, s.costs.cost_total
    multiple = s.costs.break_even_multiple
    if not cost_total > 0 or not gross_total > 0:
        return Check("costs", "Costs", "skip", "n/a",
                     "No costs, or no gross profit for them to take."), None
    share = cost_total / gross_total
    material = multiple < t.material_cost_multiple
    net_fails = not s.net_dsr >= t.confidence
    figure = f"{_pct(share)} of gross"
    if net_fails and material:
        before = (f"Before costs the edge holds (gross DSR {_pct(s.gross_dsr)}), but net"
                  if s.gross_dsr >= t.confidence else "Net")
        finding = (f"{before} of costs the Sharpe ratio is {s.net.sharpe:.2f} a year and the net "
                   f"DSR only {_pct(s.net_dsr)}: costs take {_pct(share)} of gross P&L "
                   f"(break-even at {multiple:.2f} times the assumed costs).")
        return Check("costs", "Costs", "fail", figure, finding), "lost_to_costs"
    finding = (f"Costs take {_pct(share)} of gross P&L (break-even at {multiple:.2f} times the "
               "assumed costs)" + ("." if material or not net_fails else
                                   ": too little to blame for the net result."))
    return Check("costs", "Costs", "pass", figure, finding), None


def _net_dsr(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    return _deflated(s, t, "net")


def _deflated(s: FirstPassStats, t: VerdictThresholds, side: str) -> Outcome:
    series = s.gross if side == "gross" else s.net
    dsr = s.gross_dsr if side == "gross" else s.net_dsr
    key, name = f"{side}_dsr", f"{side.capitalize()} deflated Sharpe"
    if math.isnan(dsr):
        return Check(key, name, "skip", "n/a", f"No {side} deflated Sharpe ratio."), None
    ok = dsr >= t.confidence
    figure = _pct(dsr)
    if ok:
        return Check(key, name, "pass", figure,
                     f"{side.capitalize()} deflated Sharpe ratio {figure} reaches "
                     f"{_pct(t.confidence)} over {_trials_text(s)}."), None
    years = _more_years(s, series, t)
    if series.sharpe > s.expected_max_sharpe and years <= t.max_more_years:
        finding = (f"{side.capitalize()} Sharpe ratio {series.sharpe:.2f} a year beats luck "
                   f"({s.expected_max_sharpe:.2f}), but {s.n_days:,} days give a deflated "
                   f"Sharpe ratio of only {figure} ({_pct(t.confidence)} needed); about "
                   f"{years:.1f} more years at this Sharpe ratio would settle it.")
        return Check(key, name, "fail", figure, finding), "too_little_data"
    if math.isfinite(years):
        why = (f"and at least {t.max_more_years:g} more years would be needed to confirm a "
               "Sharpe ratio this close to luck")
    else:
        why = "and no amount of extra history would confirm a Sharpe ratio no better than luck"
    finding = (f"{side.capitalize()} deflated Sharpe ratio {figure} is below "
               f"{_pct(t.confidence)}, {why} ({series.sharpe:.2f} vs "
               f"{s.expected_max_sharpe:.2f}).")
    return Check(key, name, "fail", figure, finding), "no_edge"


def _more_years(s: FirstPassStats, series: object, t: VerdictThresholds) -> float:
    """Extra years for the deflated test to reach the confidence at the present Sharpe ratio
    (minimum track record length against SR0; Bailey & López de Prado 2012, 2014)."""
    from hunchbook.core.stats.psr import min_track_record_length

    sr0 = s.expected_max_sharpe / math.sqrt(s.periods)
    days = min_track_record_length(series.sharpe_per_period, series.skew, series.kurtosis,  # type: ignore[attr-defined]
                                   sr_star=sr0, alpha=1.0 - t.confidence)
    return max(days - s.n_days, 0.0) / s.periods if math.isfinite(days) else math.inf


def _spa(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    if s.spa is None:
        return Check("spa", "SPA test", "skip", "not run", "The SPA test was not run."), None
    p = s.spa.consistent
    ok = p <= t.alpha
    if s.spa_sets == 1:
        whom = f"the set {'beats' if ok else 'does not beat'}"
    else:
        whom = f"the {s.spa_sets:,} sets together {'beat' if ok else 'do not beat'}"
    finding = (f"SPA test p-value {p:.3f} is {'within' if ok else 'above'} {t.alpha:.3f}: "
               f"{whom} doing nothing.")
    return Check("spa", "SPA test", _status(ok), f"p = {p:.3f}", finding), "selection_luck"


def _stability(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    st = s.stability
    if st is None:
        return Check("stability", "Grid stability", "skip", "no grid",
                     "One parameter set or no grid: nothing to compare with."), None
    figure = f"{st.value:.2f} vs {st.neighbour_mean:.2f}"
    if not st.isolated:
        return Check("stability", "Grid stability", "pass", figure,
                     f"The chosen set's neighbours on the grid average a net Sharpe ratio of "
                     f"{st.neighbour_mean:.2f} against its {st.value:.2f}."), None
    finding = (f"Warning: the chosen set is an isolated spike on the grid (net Sharpe "
               f"{st.value:.2f} a year, its {_plural(st.n_neighbours, 'neighbour')} average "
               f"{st.neighbour_mean:.2f}).")
    return Check("stability", "Grid stability", "fail" if t.spike_fails else "warn", figure,
                 finding), "selection_luck"


def _selection(s: FirstPassStats, t: VerdictThresholds) -> Outcome:
    if s.selection_known:
        figure = (f"{s.n_trials:,} ({s.dsr_trials:,} effective)" if s.dsr_trials < s.n_trials
                  else f"{s.n_trials:,}")
        return Check("selection", "Selection counted", "pass", figure,
                     f"Every trial behind the result is counted ({_trials_text(s)})."), None
    return Check("selection", "Selection counted", "fail", "unknown",
                 "Uncorrected for selection: the number of trials behind this P&L is unknown, "
                 "so it cannot be promoted (give the number of trials)."), "not_judged"


_CHECKS: tuple[Callable[[FirstPassStats, VerdictThresholds], Outcome], ...] = (
    _history, _gross_edge, _beats_luck, _gross_dsr, _costs, _spa, _net_dsr, _stability,
    _selection)


def _passing_sentence(s: FirstPassStats) -> str:
    spa = "" if s.spa is None else f", SPA p-value {s.spa.consistent:.3f}"
    return (f"Net Sharpe ratio {s.net.sharpe:.2f} a year holds after costs and after selection "
            f"(net DSR {_pct(s.net_dsr)} over {_trials_text(s)}{spa}).")


def _trials_text(s: FirstPassStats) -> str:
    raw = s.n_trials
    if raw == 1:
        return "1 trial"
    if s.dsr_trials < raw:
        return f"{s.dsr_trials:,} effective of {raw:,} trials"
    return f"{raw:,} trials"


def _status(ok: bool) -> str:
    return "pass" if ok else "fail"


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
        "gross_dsr": stats.gross_dsr,
        "dsr": stats.net_dsr,
        "expected_max_sharpe": stats.expected_max_sharpe,
        "n_trials": stats.n_trials,
        "effective_trials": stats.dsr_trials,
        "selection_known": stats.selection_known,
        "spa_consistent": None if stats.spa is None else stats.spa.consistent,
        "spa_sets": stats.spa_sets,
        "break_even_cost_multiple": stats.costs.break_even_multiple,
        "isolated_spike": None if stats.stability is None else stats.stability.isolated,
    }
    return {k: (None if isinstance(v, float) and not math.isfinite(v) else v)
            for k, v in values.items()}
