"""The results view shows a real recorded run: verdict, figures, curves, heatmap and clicks."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QColor, QPalette

from hunchbook.api import Study
from hunchbook.core.verdict import ACTIONS, LABELS
from hunchbook.gui.charts.run_figures import format_value
from hunchbook.gui.widgets.figures_model import COL_GROSS, COL_LABEL, COL_NET, ValueRole
from hunchbook.gui.widgets.verdict_banner import OUTCOME_HUES, banner_colours
from tests.gui.run_records import HOSTILE_TITLE, TWO_PARAMETER_RULES, record_runs


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """A catalogue with one idea and two recorded runs (2015-2019 invented demo data)."""
    return record_runs(tmp_path_factory.mktemp("results"))


def _cells(model, column):
    """Figure label -> value (ValueRole) of one column of a figures model."""
    return {model.index(r, COL_LABEL).data(): model.index(r, column).data(ValueRole)
            for r in range(model.rowCount())}


def _epoch_seconds(index: pd.DatetimeIndex) -> np.ndarray:
    # reference: pandas date arithmetic, seconds since 1970-01-01 (the Unix epoch, UTC)
    return ((index - pd.Timestamp("1970-01-01")) // pd.Timedelta(seconds=1)).to_numpy(float)


def test_banner_shows_the_stored_verdict(view, runs):
    """Label and action are the standard ones of the stored outcome; every reason is shown."""
    run = runs.two
    view.show_run(run, title=HOSTILE_TITLE)
    outcome = run.result.verdict.outcome
    assert view.banner.label.text() == LABELS[outcome]
    assert view.banner.action.text() == ACTIONS[outcome]
    assert run.result.verdict.reasons
    for reason in run.result.verdict.reasons:
        assert reason in view.banner.reasons.text()
    # the title is user input: shown verbatim as plain text, never as markup
    assert view.banner.subtitle.textFormat() == Qt.TextFormat.PlainText
    assert HOSTILE_TITLE in view.banner.subtitle.text()


def test_performance_table_holds_the_stored_portfolio_figures(view, runs, qtmodeltester):
    """Each gross/net cell carries the number stored in the run summary."""
    run = runs.two
    view.show_run(run, title="t")
    model = view.performance
    qtmodeltester.check(model)
    portfolio = run.result.chosen.performance
    gross, net = _cells(model, COL_GROSS), _cells(model, COL_NET)
    for label, key in [("Total P&L (USD)", "total"), ("Annual mean (USD)", "ann_mean"),
                       ("Annual volatility (USD)", "ann_vol"), ("Sharpe ratio", "sharpe"),
                       ("t-statistic", "t_stat"), ("Max drawdown (USD)", "max_drawdown")]:
        assert gross[label] == getattr(portfolio.gross, key)
        assert net[label] == getattr(portfolio.net, key)
    for label, key in [("Trades per year", "trades_per_year"),
                       ("Contracts per year", "contracts_per_year"),
                       ("Total cost (USD)", "cost_total"),
                       ("Cost share of gross (%)", "cost_share_of_gross"),
                       ("Break-even per contract (USD/side)", "break_even_cost")]:
        assert net[label] == getattr(portfolio, key)
        assert gross[label] is None
    # the stored totals are the sums of the stored daily P&L (reference: pandas sum)
    assert net["Total P&L (USD)"] == pytest.approx(run.daily_pnl["net_pnl"].sum())
    assert gross["Total P&L (USD)"] == pytest.approx(run.daily_pnl["gross_pnl"].sum())
    # shown text: two decimals for ratios, thousands separators for money (common practice)
    row = [model.index(r, COL_LABEL).data() for r in range(model.rowCount())].index("Sharpe ratio")
    assert model.index(row, COL_NET).data() == f"{portfolio.net.sharpe:.2f}"
    labels = [model.index(r, COL_LABEL).data() for r in range(model.rowCount())]
    row = labels.index("Total P&L (USD)")
    assert model.index(row, COL_NET).data() == f"{portfolio.net.total:,.0f}"


def test_statistics_table_holds_psr_dsr_spa_and_min_trl(view, runs, qtmodeltester):
    """PSR, DSR (labelled with the trial count), SPA p-value and MinTRL are the stored ones."""
    run = runs.two
    view.show_run(run, title="t")
    model = view.statistics
    qtmodeltester.check(model)
    stats = run.result.statistics
    gross, net = _cells(model, COL_GROSS), _cells(model, COL_NET)
    assert gross["Probabilistic Sharpe (vs 0)"] == stats.gross.psr
    assert net["Probabilistic Sharpe (vs 0)"] == stats.net.psr
    assert net["Deflated Sharpe"] == stats.dsr and gross["Deflated Sharpe"] == stats.gross_dsr
    assert net["Trials counted"] == 12 and net["Effective trials"] == stats.dsr_trials
    assert net[f"SPA p-value ({stats.spa_sets} sets)"] == stats.spa.consistent
    assert net["Min. track record (years)"] == stats.net.min_trl_years
    assert net["Break-even cost multiple"] == stats.costs.break_even_multiple
    assert stats.n_trials == run.trial_count == 12


def test_equity_and_drawdown_curves_follow_the_daily_pnl(view, runs):
    """Curves are the cumulative daily P&L on epoch-second dates; drawdown below the peak."""
    run = runs.two
    view.show_run(run, title="t")
    daily = run.daily_pnl
    x_ref = _epoch_seconds(daily.index)
    gross_ref = daily["gross_pnl"].cumsum().to_numpy()  # reference: pandas cumsum
    net_ref = daily["net_pnl"].cumsum().to_numpy()
    for curve, ref in [(view.charts.equity.gross_curve, gross_ref),
                       (view.charts.equity.net_curve, net_ref)]:
        x, y = curve.getOriginalDataset()  # getData() is the view's downsampled copy
        np.testing.assert_array_equal(x, x_ref)
        np.testing.assert_allclose(y, ref, rtol=1e-12, atol=1e-6)
    # drawdown = equity minus its running peak, the start counting as a peak of 0
    # (reference: pandas cummax, as in the usual definition of drawdown)
    equity = daily["net_pnl"].cumsum()
    dd_ref = (equity - equity.clip(lower=0.0).cummax()).to_numpy()
    _, dd = view.charts.drawdown.curve.getOriginalDataset()
    np.testing.assert_allclose(dd, dd_ref, rtol=1e-12, atol=1e-6)
    assert -dd.min() == pytest.approx(run.result.chosen.performance.net.max_drawdown)
    item = view.charts.equity.getPlotItem()
    assert item.clipToViewMode() and item.downsampleMode()[1]  # clip to view, auto downsample


def test_contribution_bars_are_the_stored_market_totals(view, runs):
    """One gross and one net bar per market, as long as the stored per-market totals."""
    run = runs.two
    view.show_run(run, title="t")
    markets = run.result.chosen.markets
    assert view.charts.contribution.markets == [m.market for m in markets]
    gross, net = view.charts.contribution.bar_widths()
    assert gross == [m.gross_total for m in markets]
    assert net == [m.net_total for m in markets]


def test_cost_curve_is_the_stored_cost_sensitivity(view, runs):
    """Net Sharpe against cost multiple as stored; the break-even lies where it crosses 0."""
    run = runs.two
    view.show_run(run, title="t")
    costs = run.result.statistics.costs
    x, y = view.charts.costs.curve.getOriginalDataset()
    np.testing.assert_array_equal(x, costs.multiples)
    np.testing.assert_array_equal(y, costs.net_sharpe)
    # net Sharpe at 1x equals the chosen set's net Sharpe over the statistics' days
    assert y[list(x).index(1.0)] == pytest.approx(run.result.statistics.net.sharpe)


def test_heatmap_is_the_grid_of_stored_net_sharpes(view, runs):
    """Image shape is (fast values x slow values); each cell holds its set's net Sharpe."""
    run = runs.two
    view.show_run(run, title="t")
    heatmap = view.charts.heatmap
    assert view.sweep_slot.currentWidget() is heatmap
    image = heatmap.image.image
    fast, slow = [10.0, 20.0, 40.0], [60.0, 120.0, 180.0, 240.0]  # the rule file's grid
    assert image.shape == (len(fast), len(slow))
    assert len(run.result.sets) == image.size
    for s in run.result.sets:
        i, j = fast.index(s.params["fast"]), slow.index(s.params["slow"])
        assert image[i, j] == s.net_sharpe
    # the chosen set is outlined on its cell (cells centred on their ticks)
    rect = heatmap.outline.rect()
    chosen = run.chosen_params
    assert heatmap.outline.isVisible()
    assert rect.center() == QPointF(slow.index(chosen["slow"]), fast.index(chosen["fast"]))
    ticks = heatmap.getPlotItem().getAxis("bottom")._tickLevels[0]
    assert [label for _, label in ticks] == ["60", "120", "180", "240"]


def _scroll_to(view, widget):
    """Bring the page of the parameter sets, where the sweep chart sits, to the front, as a
    user would."""
    from PySide6.QtWidgets import QApplication

    from hunchbook.gui.widgets.results_view import SETS_PAGE

    QApplication.processEvents()  # lay the tables out first
    view.show_page(SETS_PAGE)
    QApplication.processEvents()


def _cell_point(heatmap, row, col):
    """Widget position of a heatmap cell's centre."""
    box = heatmap.getPlotItem().getViewBox()
    return heatmap.mapFromScene(box.mapViewToScene(QPointF(col, row)))


def test_clicking_a_heatmap_cell_requests_its_set(view, runs, qtbot):
    """A left click on a cell emits set_requested with that cell's parameters."""
    view.show_run(runs.two, title="t")
    heatmap = view.charts.heatmap
    _scroll_to(view, heatmap)
    qtbot.wait(50)  # let the view settle its range before mapping positions
    with qtbot.waitSignal(view.set_requested, timeout=2000) as blocker:
        qtbot.mouseClick(heatmap.viewport(), Qt.MouseButton.LeftButton,
                         pos=_cell_point(heatmap, 2, 1))
    assert blocker.args == [{"fast": 40.0, "slow": 120.0}]
    with qtbot.assertNotEmitted(view.set_requested, wait=100):  # outside the grid: nothing
        qtbot.mouseClick(heatmap.viewport(), Qt.MouseButton.LeftButton,
                         pos=heatmap.mapFromScene(heatmap.getPlotItem().getAxis(
                             "left").sceneBoundingRect().center()))


def test_hovering_a_heatmap_cell_names_its_set_and_value(view, runs, qtbot):
    """Moving over a cell shows its parameters and net Sharpe in the tooltip."""
    run = runs.two
    view.show_run(run, title="t")
    heatmap = view.charts.heatmap
    _scroll_to(view, heatmap)
    qtbot.wait(50)
    qtbot.mouseMove(heatmap.viewport(), _cell_point(heatmap, 0, 3))
    qtbot.waitUntil(lambda: heatmap.toolTip() != "", timeout=2000)
    value = next(s.net_sharpe for s in run.result.sets
                 if s.params == {"fast": 10.0, "slow": 240.0})
    assert heatmap.toolTip() == f"fast=10, slow=240: net Sharpe {value:.2f}"


def test_show_set_curves_overlays_the_set_dashed(view, runs):
    """A clicked set's curves are added dashed, named in the legend; a second replaces them."""
    run = runs.two
    view.show_run(run, title="t")
    study = Study.from_text(TWO_PARAMETER_RULES, runs.data)
    params = {"fast": 20.0, "slow": 120.0}
    daily = study.run_set(params).portfolio[["gross_pnl", "cost", "net_pnl"]]
    view.show_set_curves(params, daily)
    equity = view.charts.equity
    net_item, gross_item = equity.overlays
    _, y = net_item.getOriginalDataset()
    np.testing.assert_allclose(y, daily["net_pnl"].cumsum().to_numpy())  # reference: pandas
    assert net_item.opts["pen"].style() == Qt.PenStyle.DashLine
    names = [label.text for _, label in equity.legend.items]
    assert "Net, fast=20, slow=120" in names and "Gross, fast=20, slow=120" in names
    assert view.charts.heatmap.shown.isVisible()
    view.show_set_curves({"fast": 10.0, "slow": 60.0}, daily)
    assert len(equity.overlays) == 2
    names = [label.text for _, label in equity.legend.items]
    assert "Net, fast=20, slow=120" not in names


def test_one_parameter_space_shows_net_sharpe_against_the_parameter(view, runs, qtbot):
    """A one-parameter run gets a line of net Sharpe by value; clicking a point asks for it."""
    run = runs.one
    view.resize(1200, 1000)  # room below the banner, which lists the pre-registration warning
    view.show_run(run, title="t")
    profile = view.charts.profile
    assert view.sweep_slot.currentWidget() is profile
    _scroll_to(view, profile)  # the figures above it may fill the column
    x, y = profile.line.getOriginalDataset()
    stored = sorted((s.params["n"], s.net_sharpe) for s in run.result.sets)
    np.testing.assert_array_equal(x, [n for n, _ in stored])
    np.testing.assert_array_equal(y, [s for _, s in stored])
    qtbot.wait(50)
    n, sharpe = stored[1]
    box = profile.getPlotItem().getViewBox()
    pos = profile.mapFromScene(box.mapViewToScene(QPointF(n, sharpe)))
    with qtbot.waitSignal(view.set_requested, timeout=2000) as blocker:
        qtbot.mouseClick(profile.viewport(), Qt.MouseButton.LeftButton, pos=pos)
    assert blocker.args == [{"n": n}]


def test_a_run_recorded_in_an_earlier_shape_still_shows(view, runs):
    """A run whose results record an earlier version wrote in another shape shows its
    outcome's standard words, a note why no figures are shown, and dashes, never made-up
    figures."""
    old = dataclasses.replace(runs.two, result=None, verdict_label="no_edge", daily_pnl=None)
    view.show_run(old, title="Old run")
    assert view.banner.label.text() == LABELS["no_edge"]
    assert view.banner.action.text() == ACTIONS["no_edge"]
    assert "earlier version" in view.banner.reasons.text()
    assert view.performance.rowCount() == view.statistics.rowCount() == 0
    for slot in (view.equity_slot, view.sweep_slot, view.contribution_slot, view.costs_slot):
        assert slot.currentWidget() is slot.note


def test_missing_figures_show_a_dash(view, runs):
    """Undefined figures (NaN) are shown as a dash, not as 'nan' or '0'."""
    assert format_value(None, "money") == format_value(math.nan, "ratio") == "—"
    result = runs.two.result
    nan = float("nan")
    blank = dataclasses.replace(result.statistics, dsr=nan, costs=dataclasses.replace(
        result.statistics.costs, break_even_multiple=nan))
    view.show_run(dataclasses.replace(runs.two, result=dataclasses.replace(
        result, statistics=blank)), title="t")
    net = {view.statistics.index(r, COL_LABEL).data(): view.statistics.index(r, COL_NET).data()
           for r in range(view.statistics.rowCount())}
    assert net["Deflated Sharpe"] == net["Break-even cost multiple"] == "—"


def test_clear_empties_the_view(view, runs):
    """After clear no run, no rows and no curves are shown."""
    view.show_run(runs.two, title="t")
    view.clear()
    assert view.run is None
    assert view.performance.rowCount() == 0 and view.statistics.rowCount() == 0
    x, _ = view.charts.equity.net_curve.getOriginalDataset()
    assert x is None or x.size == 0
    assert view.equity_slot.currentWidget() is view.equity_slot.note


def _relative_luminance(c: QColor) -> float:
    # WCAG 2.x definition of relative luminance (sRGB channels linearised)
    def lin(v: float) -> float:
        return v / 12.92 if v <= 0.03928 else ((v + 0.055) / 1.055) ** 2.4
    return 0.2126 * lin(c.redF()) + 0.7152 * lin(c.greenF()) + 0.0722 * lin(c.blueF())


def _contrast(a: QColor, b: QColor) -> float:
    # WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05); 3:1 is the minimum for large text
    la, lb = sorted((_relative_luminance(a), _relative_luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


@pytest.mark.parametrize("window", [QColor(239, 239, 239), QColor(45, 45, 48)],
                         ids=["light", "dark"])
def test_banner_label_is_readable_in_light_and_dark_palettes(window):
    """Every outcome's large label keeps WCAG large-text contrast (3:1) on its background."""
    palette = QPalette()
    palette.setColor(QPalette.ColorRole.Window, window)
    for outcome in OUTCOME_HUES:
        background, _, label = banner_colours(outcome, palette)
        assert _contrast(label, background) >= 3.0, outcome


def test_the_markets_changed_since_the_last_run_are_said_under_the_banner(view, runs):
    """A run whose data changed since the idea's last run says which markets, in the record's
    own sentence; a run without changes says nothing (the markets are planted by the test)."""
    from hunchbook.core.data_changes import DataChanges

    changes = DataChanges(since_run=runs.one.id, changed=("CORN",), new=("GOLD",))
    changed = dataclasses.replace(runs.two, result=dataclasses.replace(runs.two.result,
                                                                       data_changes=changes))
    view.show_run(changed, title="t")
    assert not view.data_note.isHidden()
    assert view.data_note.text() == (f"Data changed since run {runs.one.id}: CORN (prices "
                                     "differ); GOLD (new).")
    assert view.data_note.textFormat() == Qt.TextFormat.PlainText
    view.show_run(runs.two, title="t")
    assert view.data_note.isHidden()
    view.show_run(changed, title="t")
    view.clear()
    assert view.data_note.isHidden()
