"""A figure added to the presenter alone appears in the command line text, the window's table
and the HTML report (the record and the presenter are the only places a figure is defined)."""

from __future__ import annotations

import html

import pytest

from hunchbook.cli import main
from hunchbook.core import presenter
from hunchbook.core.presenter import Figure, format_value
from hunchbook.gui.html_report import report_html
from hunchbook.gui.widgets.figures_model import COL_LABEL, COL_NET, ValueRole
from hunchbook.gui.widgets.results_view import ResultsView
from tests.gui.run_records import TWO_PARAMETER_RULES, record_runs

LABEL = "Mean net P&L per day"


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    return record_runs(tmp_path_factory.mktemp("figure"))


@pytest.fixture
def extra_figure(monkeypatch):
    """The new figure: mean daily net P&L, from fields the record already has."""
    figure = Figure(LABEL, "money", None, lambda p: p.net.total / p.days,
                    "Net total / days of history.")
    monkeypatch.setattr(presenter, "PERFORMANCE_FIGURES",
                        [*presenter.PERFORMANCE_FIGURES, figure])


def test_a_new_figure_shows_in_the_cli_the_window_and_the_report(extra_figure, runs, qtbot,
                                                                 tmp_path, capsys):
    run = runs.two
    expected = run.daily_pnl["net_pnl"].mean()  # reference: pandas mean of the stored P&L

    view = ResultsView()
    qtbot.addWidget(view)
    view.show_run(run, title="t")
    model = view.performance
    row = [model.index(r, COL_LABEL).data() for r in range(model.rowCount())].index(LABEL)
    assert model.index(row, COL_NET).data(ValueRole) == pytest.approx(expected)

    page = report_html(idea=runs.idea, run=run, rule_text="", images={})
    assert html.escape(LABEL) in page and format_value(expected, "money") in page

    rules = tmp_path / "rules.toml"
    rules.write_text(TWO_PARAMETER_RULES)
    assert main(["run", str(rules), "--data", str(runs.data), "--params", "fast=10,slow=60",
                 "--workers", "1"]) == 0
    line = next(x for x in capsys.readouterr().out.splitlines() if x.startswith(LABEL))
    assert line.split()[-1] != "—"
