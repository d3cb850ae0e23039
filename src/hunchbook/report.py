"""Plain-text tables of run results, as printed by the command line."""

from __future__ import annotations

import math
from collections.abc import Sequence

from hunchbook.api import PORTFOLIO, SetResult
from hunchbook.core.rules.model import RuleSpec

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


def format_sweep(rules: RuleSpec, results: Sequence[SetResult], currency: str) -> str:
    """The best parameter sets of a sweep, ranked by net Sharpe ratio."""
    def net_sharpe(r: SetResult) -> float:
        value = r.metrics[PORTFOLIO]["net"]["sharpe"]
        return value if math.isfinite(value) else -math.inf

    ranked = sorted(results, key=net_sharpe, reverse=True)[:SWEEP_ROWS]
    lines = [
        f"{rules.name}",
        f"{len(results)} parameter sets run over {', '.join(rules.markets)}; "
        f"best {len(ranked)} by net Sharpe ratio (currency {currency}).",
        "Every set counts as a trial: the best of many looks better than it is.",
        "",
        f"{'Parameters':<34}{'Gross SR':>10}{'Net SR':>10}{'Net P&L':>16}{'Contr./yr':>11}"
        f"{'Break-even':>12}",
    ]
    for r in ranked:
        p = r.metrics[PORTFOLIO]
        lines.append(
            f"{_params(r.params):<34}{_ratio(p['gross']['sharpe']):>10}"
            f"{_ratio(p['net']['sharpe']):>10}{_money(p['net']['total']):>16}"
            f"{p['contracts_per_year']:>11,.1f}{_money(p['break_even_cost']):>12}")
    return "\n".join(lines)
