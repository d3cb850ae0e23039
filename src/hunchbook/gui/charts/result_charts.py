"""The set of charts of one run, built in one theme and filled from a run record."""

from __future__ import annotations

import pandas as pd
from PySide6.QtWidgets import QWidget

from hunchbook.gui.charts.book import BookChart
from hunchbook.gui.charts.contribution import ContributionChart
from hunchbook.gui.charts.cost_sensitivity import CostSensitivityChart
from hunchbook.gui.charts.drawdown import DrawdownChart
from hunchbook.gui.charts.equity import EquityChart
from hunchbook.gui.charts.heatmap import SweepHeatmap
from hunchbook.gui.charts.run_figures import (
    ParameterSpace,
    cost_curve,
    market_totals,
    parameter_space,
)
from hunchbook.gui.charts.sweep_profile import SweepProfile
from hunchbook.gui.charts.theme import ChartTheme, palette_theme
from hunchbook.store.records import RunRecord


def sweep_kind(space: ParameterSpace) -> str:
    """Which sweep chart suits a space: ``heatmap`` (two parameters), ``profile`` (one, or
    more than two) or ``none`` (a single set or no Sharpe ratios stored)."""
    if len(space.params) < 2 or all(s is None for s in space.net_sharpe):
        return "none"
    return "heatmap" if len(space.names) == 2 else "profile"


class ResultCharts:
    """Equity, drawdown (x-linked to equity), contribution, sweep (heatmap or profile),
    cost-sensitivity and against-the-book charts, created together in one theme."""

    def __init__(self, theme: ChartTheme | None = None) -> None:
        theme = theme or palette_theme()
        self.equity = EquityChart(theme=theme)
        self.drawdown = DrawdownChart(theme=theme)
        self.drawdown.setXLink(self.equity)
        self.contribution = ContributionChart(theme=theme)
        self.heatmap = SweepHeatmap(theme=theme)
        self.profile = SweepProfile(theme=theme)
        self.costs = CostSensitivityChart(theme=theme)
        self.book = BookChart(theme=theme)
        self.sweep = "none"

    def show_run(self, run: RunRecord) -> None:
        """Fill every chart from a run (charts without data are left empty)."""
        currency = run.result.currency if run.result else ""
        self.equity.set_daily(run.daily_pnl, currency=currency)
        self.drawdown.set_daily(run.daily_pnl, currency=currency)
        boundary = run.result.holdout_boundary if run.result else None
        self.equity.set_boundary(boundary)
        self.drawdown.set_boundary(boundary)
        self.contribution.set_totals(market_totals(run), currency=currency)
        self.costs.set_curve(*cost_curve(run))
        self.book.set_comparison(run.result.book if run.result else None)
        space = parameter_space(run)
        self.sweep = sweep_kind(space)
        chosen = dict(run.chosen_params) if run.chosen_params else None
        self.heatmap.clear_data()
        self.profile.clear_data()
        if self.sweep == "heatmap":
            self.heatmap.set_space(space, chosen)
        elif self.sweep == "profile":
            self.profile.set_space(space, chosen)

    def show_held_out(self, daily: pd.DataFrame | None) -> None:
        """Draw the held-out daily P&L after the shown run's curves (None: remove it)."""
        self.equity.set_held_out(daily)
        self.drawdown.set_held_out(daily)

    def clear(self) -> None:
        """Empty every chart."""
        for chart in (self.equity, self.drawdown, self.contribution, self.heatmap,
                      self.profile, self.costs, self.book):
            chart.clear_data()
        self.sweep = "none"

    def named(self) -> dict[str, QWidget]:
        """The charts that have something to show, by name, in report order."""
        out: dict[str, QWidget] = {}
        if self.equity.has_data:
            out["equity"] = self.equity
            out["drawdown"] = self.drawdown
        if self.sweep == "heatmap":
            out["sweep"] = self.heatmap
        elif self.sweep == "profile":
            out["sweep"] = self.profile
        if self.contribution.markets:
            out["contribution"] = self.contribution
        if self.costs.has_data:
            out["costs"] = self.costs
        if self.book.has_data:
            out["book"] = self.book
        return out
