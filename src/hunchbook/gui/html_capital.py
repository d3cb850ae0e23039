"""The report's part on the chosen set against its capital: where the capital came from, why the
two Sharpe ratios differ, the year-by-year table and the monthly returns."""

from __future__ import annotations

from hunchbook.core.presenter import SHARPE_NOTE, TRADE_NOTE, capital_sentence, sharpe_sentence
from hunchbook.core.presenter import year_table as _year_table
from hunchbook.gui.html_parts import escaped as _e
from hunchbook.gui.html_parts import table_html
from hunchbook.gui.widgets.capital_tables import YEAR_HEADING, monthly_returns_table
from hunchbook.store.records import RunRecord


def capital_section(run: RunRecord) -> str:
    """The part's HTML (placed under the chosen set's figures; empty without a result)."""
    result = run.result
    if result is None:
        return ""
    parts = [f"<p>{_e(capital_sentence(result))}</p>", f"<p>Trades: {_e(TRADE_NOTE)}</p>"]
    sentence = sharpe_sentence(result)
    if sentence is not None:
        parts.append(f"<p>{_e(sentence)}</p>")
    years = _year_table(result)
    if years.rows:
        parts += [f"<h3>{_e(YEAR_HEADING)}</h3>", table_html(years, "")]
    months = monthly_returns_table(run)
    if months is not None and months.rows:
        parts += ["<h3>Monthly net returns</h3>", table_html(months, "")]
    return "\n".join(parts)


def sets_note() -> str:
    """The line under the table of parameter sets: which days its Sharpe ratios cover."""
    return f"<p>Sharpe ratios: {_e(SHARPE_NOTE)}</p>"


__all__ = ["capital_section", "sets_note"]
