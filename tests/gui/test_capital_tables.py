"""The chosen set against its capital in the window and the report: the year-by-year table, the
*Monthly returns…* dialog, the sentence on the capital and (on the Statistics page) the one on
the two Sharpe ratios.

Checks against pandas on the stored daily P&L (reference library: pandas: calendar-year and
month sums).
"""

from __future__ import annotations

import dataclasses

import pytest

from hunchbook.core.capital_figures import MONTHS
from hunchbook.gui.html_report import report_html
from hunchbook.gui.widgets.capital_tables import NO_DAILY, YEAR_HEADING, MonthlyDialog
from hunchbook.gui.widgets.results_view import ResultsView
from tests.gui.run_records import record_runs


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    return record_runs(tmp_path_factory.mktemp("capital"))


def _column(model, label):
    columns = [model.headerData(c, _horizontal()).replace("\n", " ")  # the unit below
               for c in range(model.columnCount())]
    return columns.index(label)


def _horizontal():
    from PySide6.QtCore import Qt

    return Qt.Orientation.Horizontal


def test_the_year_table_holds_each_years_net_pnl_and_return(runs, qtbot):
    run = runs.two  # [sizing] capital = 1_000_000
    view = ResultsView()
    qtbot.addWidget(view)
    view.show_run(run, title="t")
    tables = view.capital_tables
    assert "1,000,000 USD" in tables.capital_note.text()
    model = tables.model
    net = run.daily_pnl["net_pnl"]
    sums = net.groupby(net.index.year).sum()
    assert [model.index(r, 0).data() for r in range(model.rowCount())] == [
        str(y) for y in sums.index]
    pnl, share = _column(model, "Net P&L (USD)"), _column(model, "Return (% of capital)")
    for r, total in enumerate(sums):
        assert model.index(r, pnl).data() == f"{total:,.0f}"
        assert model.index(r, share).data() == f"{100 * total / 1_000_000:.1f} %"
    labels = [view.performance.index(r, 0).data() for r in range(view.performance.rowCount())]
    assert "Annual return (% of capital)" in labels and "Capital (USD)" in labels


def test_the_monthly_dialog_sums_each_month(runs, qtbot):
    run = runs.two
    dialog = MonthlyDialog(run)
    qtbot.addWidget(dialog)
    model = dialog.model
    months = run.daily_pnl["net_pnl"].resample("ME").sum() / 1_000_000
    years = [model.index(r, 0).data() for r in range(model.rowCount())]
    for when, value in months.items():
        cell = model.index(years.index(str(when.year)), _column(model, MONTHS[when.month - 1]))
        assert cell.data() == f"{100 * value:.1f} %"


def test_without_daily_pnl_the_dialog_says_so(runs, qtbot):
    dialog = MonthlyDialog(dataclasses.replace(runs.two, daily_pnl=None))
    qtbot.addWidget(dialog)
    assert dialog.note.text() == NO_DAILY and dialog.model.rowCount() == 0


def test_the_report_carries_the_years_and_months(runs):
    page = report_html(idea=runs.idea, run=runs.two, rule_text="", images={})
    assert YEAR_HEADING in page and "Monthly net returns" in page
    assert "Return (% of capital)" in page and "Break-even per contract (USD/side)" in page


def test_the_statistics_page_says_why_its_sharpe_ratio_differs(runs, qtbot):
    # the headline Sharpe ratio is over the set's own days, the statistics' over the days all
    # sets share: where the two differ the Statistics page says so, with both day counts
    run = runs.two
    result = run.result
    fewer = dataclasses.replace(result, statistics=dataclasses.replace(
        result.statistics, n_days=result.chosen.performance.days - 170))
    view = ResultsView()
    qtbot.addWidget(view)
    view.show_run(dataclasses.replace(run, result=fewer), title="t")
    text = view.sharpe_note.text()
    assert f"{result.chosen.performance.days:,}" in text
    assert f"{result.chosen.performance.days - 170:,}" in text
    assert not view.sharpe_note.isHidden()
    same = dataclasses.replace(result, statistics=dataclasses.replace(
        result.statistics, n_days=result.chosen.performance.days))
    view.show_run(dataclasses.replace(run, result=same), title="t")
    assert view.sharpe_note.isHidden()
