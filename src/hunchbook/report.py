"""Plain-text tables of run results, as printed by the command line."""

from __future__ import annotations

import math

from hunchbook.api import PORTFOLIO, SetResult, SweepReport
from hunchbook.core.rules.model import RuleSpec
from hunchbook.core.stats import FirstPassStats
from hunchbook.core.verdict import Verdict

#: How many parameter sets a sweep table lists.
SWEEP_ROWS = 10


def _money(x: float) -> str:
    return "n/a" if not math.isfinite(x) else f"{x:,.2f}"


def _ratio(x: float) -> str:
    return "n/a" if not math.isfinite(x) else f"{x:.2f}"


def _pct(x: float) -> str:
    return "n/a" if not math.isfinite(x) else f"{100 * x:.1f}%"


def _params(params: dict[str, float]) -> str:
    return ", ".join(f"{k}={v:g}" for k, v in params.items()) or "(none)"


def format_single(rules: RuleSpec, result: SetResult, currency: str) -> str:
    """The gross/net table of one parameter set: portfolio figures, then one line per market."""
    p = result.metrics[PORTFOLIO]
    g, n = p["gross"], p["net"]
    lines = [
        f"{rules.name}",
        f"Parameters: {_params(result.params)}    Markets: {', '.join(rules.markets)}",
        f"Rows: {p['first_date']} to {p['last_date']} ({p['days']:,} days, "
        f"{p['years']:.1f} years)    Currency: {currency}",
        "",
        f"{'Portfolio':<30}{'Gross':>16}{'Net':>16}",
        f"{'Total P&L':<30}{_money(g['total']):>16}{_money(n['total']):>16}",
        f"{'Annual mean':<30}{_money(g['ann_mean']):>16}{_money(n['ann_mean']):>16}",
        f"{'Annual volatility':<30}{_money(g['ann_vol']):>16}{_money(n['ann_vol']):>16}",
        f"{'Sharpe ratio (252 days)':<30}{_ratio(g['sharpe']):>16}{_ratio(n['sharpe']):>16}",
        f"{'t-statistic of mean':<30}{_ratio(g['t_stat']):>16}{_ratio(n['t_stat']):>16}",
        f"{'Max drawdown':<30}{_money(g['max_drawdown']):>16}{_money(n['max_drawdown']):>16}",
        "",
        f"{'Trades per year':<30}{p['trades_per_year']:>16,.1f}",
        f"{'Contracts traded per year':<30}{p['contracts_per_year']:>16,.1f}",
        f"{'Total cost':<30}{_money(p['cost_total']):>16}",
        f"{'Cost per year (average)':<30}{_money(p['cost_total'] / p['years']):>16}",
        f"{'Cost as share of gross P&L':<30}{_pct(p['cost_share_of_gross']):>16}",
        f"{'Break-even cost per contract':<30}{_money(p['break_even_cost']):>16}",
        "",
        f"{'Market':<12}{'Gross P&L':>15}{'Net P&L':>15}{'Gross SR':>10}{'Net SR':>10}"
        f"{'Contr./yr':>11}{'Cost':>14}{'Break-even':>12}",
    ]
    for market, m in result.metrics["markets"].items():
        lines.append(
            f"{market:<12}{_money(m['gross']['total']):>15}{_money(m['net']['total']):>15}"
            f"{_ratio(m['gross']['sharpe']):>10}{_ratio(m['net']['sharpe']):>10}"
            f"{m['contracts_per_year']:>11,.1f}{_money(m['cost_total']):>14}"
            f"{_money(m['break_even_cost']):>12}")
    return "\n".join(lines)


def format_sweep(report: SweepReport, currency: str) -> str:
    """The best parameter sets of a sweep, ranked by net Sharpe ratio."""
    rules = report.rules
    ranked = report.ranked()[:SWEEP_ROWS]
    lines = [
        f"{rules.name}",
        f"{len(report.sets)} parameter sets run over {', '.join(rules.markets)}; "
        f"best {len(ranked)} by net Sharpe ratio (currency {currency}).",
        "",
        f"{'Parameters':<34}{'Gross SR':>10}{'Net SR':>10}{'Net P&L':>16}{'Contr./yr':>11}"
        f"{'Break-even':>12}",
    ]
    for k in ranked:
        p = report.summaries[k][PORTFOLIO]
        lines.append(
            f"{_params(report.sets[k]):<34}{_ratio(p['gross']['sharpe']):>10}"
            f"{_ratio(p['net']['sharpe']):>10}{_money(p['net']['total']):>16}"
            f"{p['contracts_per_year']:>11,.1f}{_money(p['break_even_cost']):>12}")
    return "\n".join(lines)


def format_judgement(report: SweepReport) -> str:
    """The statistics of the chosen set and the verdict with its reasons."""
    params = report.sets[report.chosen]
    return format_statistics(report.statistics, report.verdict,
                             chosen=_params(params) if params else None)


def format_statistics(stats: FirstPassStats, verdict: Verdict, chosen: str | None = None) -> str:
    """Statistics of a chosen set's daily P&L and the verdict, as plain lines."""
    g, n = stats.gross, stats.net
    spa = "not run" if stats.spa is None else f"{stats.spa.consistent:.3f}"
    head = f"Statistics of the chosen set ({chosen})" if chosen else "Statistics"
    trials = f"over {stats.n_trials:,} trial{'s' if stats.n_trials != 1 else ''}"
    rows = [
        ("Sharpe ratio (annual)", _ratio(g.sharpe), _ratio(n.sharpe)),
        ("  standard error (non-normal)", _ratio(g.sharpe_se), _ratio(n.sharpe_se)),
        ("t-statistic / Newey-West t", f"{_ratio(g.t_stat)} / {_ratio(g.newey_west_t)}",
         f"{_ratio(n.t_stat)} / {_ratio(n.newey_west_t)}"),
        ("Probabilistic Sharpe (vs 0)", _pct(g.psr), _pct(n.psr)),
        ("Min. track record (years)", _ratio(g.min_trl_years), _ratio(n.min_trl_years)),
        ("Deflated Sharpe ratio", "", f"{_pct(stats.dsr)} {trials}"),
        ("SPA p-value (every set)", "", spa),
    ]
    lines = [f"{head}, {stats.n_days:,} common days:", f"{'':<32}{'Gross':>14}  {'Net':<14}"]
    lines += [f"{label:<32}{gross:>14}  {net:<14}".rstrip() for label, gross, net in rows]
    lines += [
        "",
        f"Verdict: {verdict.label}. {verdict.action}",
    ]
    lines += [f"  - {reason}" for reason in verdict.reasons]
    return "\n".join(lines)
