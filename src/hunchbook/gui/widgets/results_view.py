"""Results of one run: verdict banner, gross/net figures, statistics, the run against the book,
the held-out years and charts."""

from __future__ import annotations

import os

import pandas as pd
from PySide6.QtCore import QEvent, Qt, Signal
from PySide6.QtGui import QFont, QPalette
from PySide6.QtWidgets import (
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QScrollArea,
    QStackedWidget,
    QTableView,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from hunchbook.core import formats
from hunchbook.core.presenter import sharpe_sentence
from hunchbook.core.verdict import Verdict
from hunchbook.gui.charts.result_charts import ResultCharts
from hunchbook.gui.charts.run_figures import (
    format_params,
    performance_rows,
    statistic_rows,
    verdict_text,
)
from hunchbook.gui.html_report import CAUTION, render_chart_images, write_html_report
from hunchbook.gui.widgets.book_panel import BookPanel
from hunchbook.gui.widgets.capital_tables import CapitalTables
from hunchbook.gui.widgets.figures_model import FiguresModel
from hunchbook.gui.widgets.holdout_panel import HoldoutPanel
from hunchbook.gui.widgets.read_only_table import read_only
from hunchbook.gui.widgets.verdict_banner import VerdictBanner, mix_colours
from hunchbook.store.records import HoldoutView, Idea, RunRecord


def run_subtitle(run: RunRecord, title: str) -> str:
    """One line naming a run: title, chosen set, sets and trials, date and author."""
    parts = [title] if title else []
    if run.chosen_params:
        parts.append(f"chosen set {format_params(dict(run.chosen_params))}")
    parts.append(f"{run.set_count} set{'s' if run.set_count != 1 else ''}, "
                 f"{run.trial_count} trial{'s' if run.trial_count != 1 else ''} counted")
    parts.append(f"rules revision {run.revision_number}")
    parts.append(f"run {formats.moment(run.recorded_at)} by {run.recorded_by}")
    return "  ·  ".join(parts)


def pick_sentence(params: dict, verdict: Verdict) -> str:
    """One line judging a set picked on the heatmap, with the run's trials."""
    trials = verdict.numbers.get("n_trials")
    effective = verdict.numbers.get("effective_trials")
    counted = (f"one of the run's {trials} trials ({effective} effective)"
               if trials and effective and effective != trials else
               f"one of the run's {trials} trials")
    reason = verdict.reasons[0] if verdict.reasons else ""
    return (f"Picked {format_params(dict(params))} (dashed): {verdict.label}, judged as "
            f"{counted}, never as one trial. {reason}")


def _heading(text: str) -> QLabel:
    label = QLabel(text)
    font = QFont(label.font())
    font.setBold(True)
    label.setFont(font)
    return label


#: The pages beside the headline figures, in order (the first is in front).
EQUITY_PAGE, STATISTICS_PAGE, SETS_PAGE = "Equity", "Statistics", "Sets"
MARKETS_PAGE, COSTS_PAGE, BOOK_PAGE = "Markets", "Costs", "Book"
YEARS_PAGE = "Years"
#: Least heights of the pages and of the curves on the first one (pixels): below them the
#: results scroll as a whole instead of squeezing the charts.
PAGES_MIN_HEIGHT, EQUITY_MIN_HEIGHT, DRAWDOWN_MIN_HEIGHT = 300, 170, 100


def _scrolled(widget: QWidget, *, top: bool = False) -> QScrollArea:
    """``widget`` in a frameless area that scrolls it up and down (never sideways); ``top``
    keeps it at its own height at the top, the room below it left blank."""
    scroll = QScrollArea()
    if top:
        holder = QWidget()
        column = QVBoxLayout(holder)
        column.setContentsMargins(0, 4, 0, 0)
        column.addWidget(widget)
        column.addStretch(1)
        widget = holder
    scroll.setWidget(widget)
    scroll.setWidgetResizable(True)
    scroll.setFrameShape(QFrame.Shape.NoFrame)
    scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
    return scroll


def _figures_table(model: FiguresModel) -> QTableView:
    table = read_only(QTableView(), select_rows=True)
    table.setModel(model)
    header = table.horizontalHeader()
    header.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
    for col in (1, 2):
        header.setSectionResizeMode(col, QHeaderView.ResizeMode.ResizeToContents)
    table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
    table.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAsNeeded)
    return table


class ChartSlot(QStackedWidget):
    """A place for one of several charts, or a note saying why there is none."""

    def __init__(self, charts: list[QWidget], note: str) -> None:
        super().__init__()
        self.note = QLabel(note)
        self.note.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.note.setWordWrap(True)
        self.note.setAutoFillBackground(True)
        self.note.setBackgroundRole(QPalette.ColorRole.Base)
        self.note.setMargin(12)
        self.addWidget(self.note)
        for chart in charts:
            self.addWidget(chart)

    def show_chart(self, chart: QWidget | None) -> None:
        """Show a chart of this slot, or the note when ``chart`` is None."""
        self.setCurrentWidget(self.note if chart is None else chart)


class ResultsView(QWidget):
    """What a run found, for deciding at a glance: the verdict banner on top, the headline
    figures on the left and pages on the right (the equity curve and drawdown in front; the
    statistics, the parameter sets, the markets, the costs and the book behind it; more through
    :meth:`add_page`).

    Signals: ``set_requested(dict)`` when a heatmap cell (or a point of the one-parameter
    chart) is clicked, with that parameter set; the owner computes its daily P&L and calls
    :meth:`show_set_curves`.
    """

    set_requested = Signal(dict)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.run: RunRecord | None = None
        self.banner = VerdictBanner()
        self.pick_note = QLabel()
        self.pick_note.setWordWrap(True)
        self.pick_note.setTextFormat(Qt.TextFormat.PlainText)
        self.pick_note.setObjectName("pickNote")
        self.data_note = QLabel()  # which markets' data changed since the idea's last run
        self.data_note.setWordWrap(True)
        self.data_note.setTextFormat(Qt.TextFormat.PlainText)
        self.data_note.setObjectName("dataNote")
        self.performance = FiguresModel(self)
        self.statistics = FiguresModel(self)
        self.performance_table = _figures_table(self.performance)
        self.statistics_table = _figures_table(self.statistics)
        self.holdout = HoldoutPanel()
        self.held_out: HoldoutView | None = None
        self.capital_tables = CapitalTables()  # figures against capital, years, months
        self.charts = ResultCharts()
        self.charts.heatmap.cell_clicked.connect(self.set_requested)
        self.charts.profile.point_clicked.connect(self.set_requested)
        c = self.charts
        self.equity_slot = ChartSlot([c.equity], "No daily P&L was recorded for this run.")
        self.drawdown_slot = ChartSlot([c.drawdown], "")
        self.sweep_slot = ChartSlot([c.heatmap, c.profile],
                                    "One parameter set: no sweep to compare.")
        self.contribution_slot = ChartSlot([c.contribution],
                                           "No per-market figures were recorded for this run.")
        self.costs_slot = ChartSlot([c.costs], "No cost sensitivity was recorded for this run.")
        self.book_panel = BookPanel(c.book)
        self.caution = QLabel(CAUTION)
        self.caution.setWordWrap(True)
        small = QFont(self.caution.font())
        small.setPointSizeF(small.pointSizeF() * 0.85)
        self.caution.setFont(small)

        summary = QWidget()  # the headline figures beside the pages, with the caution below
        column = QVBoxLayout(summary)
        column.setContentsMargins(0, 0, 4, 0)
        column.setSpacing(4)
        self.summary_heading = _heading("Chosen set over its whole history")
        column.addWidget(self.summary_heading)
        column.addWidget(self.performance_table)
        column.addWidget(self.caution)
        column.addStretch(1)
        self.summary = _scrolled(summary)  # more rows than the height: they scroll, never cut
        self.summary.setObjectName("resultsSummary")

        equity = QWidget()
        curves = QVBoxLayout(equity)
        curves.setContentsMargins(0, 4, 0, 0)
        curves.setSpacing(6)
        curves.addWidget(self.holdout)
        curves.addWidget(self.equity_slot, 3)
        curves.addWidget(self.drawdown_slot, 1)
        self.equity_slot.setMinimumHeight(EQUITY_MIN_HEIGHT)
        self.drawdown_slot.setMinimumHeight(DRAWDOWN_MIN_HEIGHT)
        trust = QWidget()
        trust_column = QVBoxLayout(trust)
        trust_column.setContentsMargins(0, 4, 0, 0)
        trust_column.addWidget(_heading("How far to trust it (days all sets share)"))
        self.sharpe_note = QLabel()  # why this Sharpe ratio differs from the headline one
        self.sharpe_note.setWordWrap(True)
        self.sharpe_note.setTextFormat(Qt.TextFormat.PlainText)
        self.sharpe_note.setObjectName("sharpeNote")
        trust_column.addWidget(self.sharpe_note)
        trust_column.addWidget(self.statistics_table)
        trust_column.addStretch(1)
        self.pages = QTabWidget()
        self.pages.setObjectName("resultPages")
        self.pages.setDocumentMode(True)
        self.pages.setMinimumHeight(PAGES_MIN_HEIGHT)
        book = _scrolled(self.book_panel, top=True)
        for title, page in ((EQUITY_PAGE, equity), (STATISTICS_PAGE, _scrolled(trust)),
                            (YEARS_PAGE, _scrolled(self.capital_tables, top=True)),
                            (SETS_PAGE, self.sweep_slot), (MARKETS_PAGE, self.contribution_slot),
                            (COSTS_PAGE, self.costs_slot), (BOOK_PAGE, book)):
            self.pages.addTab(page, title)

        body = QHBoxLayout()
        body.setSpacing(8)
        body.addWidget(self.summary)
        body.addWidget(self.pages, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(8, 8, 8, 6)
        layout.setSpacing(8)
        layout.addWidget(self.banner)
        layout.addWidget(self.data_note)
        layout.addWidget(self.pick_note)
        layout.addLayout(body, 1)
        self._recolour()
        self.clear()

    def changeEvent(self, event: QEvent) -> None:  # noqa: N802 (Qt override)
        """Follow palette changes (light/dark switch) in the muted caution line."""
        super().changeEvent(event)
        if event.type() == QEvent.Type.PaletteChange:
            self._recolour()

    def _recolour(self) -> None:
        palette = self.caution.palette()
        active = QPalette.ColorGroup.Active  # a disabled moment must not fix a grey colour
        muted = mix_colours(self.palette().color(active, QPalette.ColorRole.Window),
                            self.palette().color(active, QPalette.ColorRole.WindowText), 0.6)
        palette.setColor(QPalette.ColorRole.WindowText, muted)
        self.caution.setPalette(palette)

    def heightForWidth(self, width: int) -> int:  # noqa: N802 (Qt override)
        """The least height at ``width`` that shows every line of the banner and notes and
        the pages at their least height (the scroll area holding the view asks for it; the
        layout's own answer would be the charts' preferred heights, taller than any screen)."""
        layout = self.layout()
        margins = layout.contentsMargins()
        inner = width - margins.left() - margins.right()
        shown = [w for w in (self.banner, self.data_note, self.pick_note) if not w.isHidden()]
        lines = sum(w.heightForWidth(inner) if w.hasHeightForWidth() else w.sizeHint().height()
                    for w in shown)
        return (margins.top() + margins.bottom() + lines + layout.spacing() * len(shown)
                + (0 if self.pages.isHidden() else
                   max(self.pages.minimumSizeHint().height(), self.pages.minimumHeight())))

    def add_page(self, title: str, page: QWidget) -> int:
        """Add a page behind the others (for example a year-by-year table); its index."""
        return self.pages.addTab(page, title)

    def show_page(self, title: str) -> None:
        """Bring the page called ``title`` to the front (KeyError when there is none)."""
        for index in range(self.pages.count()):
            if self.pages.tabText(index) == title:
                self.pages.setCurrentIndex(index)
                return
        raise KeyError(f"no results page {title!r}")

    def _fit_tables(self) -> None:
        """Give each figures table the height of its rows and the headline column the width
        of its table, so no figure is cut or elided."""
        for table in (self.performance_table, self.statistics_table):
            table.resizeRowsToContents()
            rows = sum(table.rowHeight(r) for r in range(table.model().rowCount()))
            header = table.horizontalHeader()
            table.setFixedHeight(rows + header.sizeHint().height() + 2 * table.frameWidth())
            columns = sum(max(table.sizeHintForColumn(c), header.sectionSizeHint(c))
                          for c in range(table.model().columnCount()))
            table.setMinimumWidth(columns + 2 * table.frameWidth())
        scrollbar = self.summary.verticalScrollBar().sizeHint().width()
        self.summary.setFixedWidth(max(self.performance_table.minimumWidth(),
                                       self.summary_heading.sizeHint().width()) + scrollbar + 4)

    def show_run(self, run: RunRecord, *, title: str) -> None:
        """Show a recorded run (from ``Catalogue.run``, daily P&L decoded)."""
        self.run = run
        self.pick_note.hide()
        self.banner.set_verdict(verdict_text(run), subtitle=run_subtitle(run, title))
        changes = None if run.result is None else run.result.data_changes
        self.data_note.setText("" if changes is None else changes.sentence())
        self.data_note.setVisible(changes is not None)
        self.performance.set_rows(performance_rows(run))
        self.statistics.set_rows(statistic_rows(run))
        sentence = None if run.result is None else sharpe_sentence(run.result)
        self.sharpe_note.setText(sentence or "")
        self.sharpe_note.setVisible(sentence is not None)
        self._fit_tables()
        self.capital_tables.show_run(run)
        self.charts.show_run(run)
        self.book_panel.show_run(run)
        self.show_holdout(None, None)
        self._show_slots()
        self._show_body(True)

    def _show_body(self, shown: bool) -> None:
        """Figures and pages only while a run is shown (without one the banner says so)."""
        self.summary.setVisible(shown)
        self.pages.setVisible(shown)

    def show_holdout(self, view: HoldoutView | None, problem: str | None) -> None:
        """Show the shown run's idea's held-out years: ``view`` its unlocking (None: locked;
        its curves are drawn after the boundary when it continues this run) and ``problem``
        why it cannot be unlocked now (None: it can)."""
        self.held_out = view
        self.holdout.show_state(self.run, view, problem)
        continues = view is not None and self.run is not None and view.run_id == self.run.id
        self.charts.show_held_out(view.daily_pnl if continues and view is not None else None)

    def _show_slots(self) -> None:
        shown = self.charts.named()
        for slot, name in ((self.equity_slot, "equity"), (self.drawdown_slot, "drawdown"),
                           (self.sweep_slot, "sweep"), (self.contribution_slot, "contribution"),
                           (self.costs_slot, "costs")):
            slot.show_chart(shown.get(name))

    def show_set_curves(self, params: dict, daily: pd.DataFrame, *,
                        verdict: Verdict | None = None) -> None:
        """Overlay one parameter set's gross and net equity (dashed), replacing any earlier
        overlay; ``daily`` has a date index and gross_pnl, cost, net_pnl columns. ``verdict``
        judges the set as picked out of the run (with all the run's trials): it is shown in a
        line under the banner."""
        self.charts.equity.clear_overlays()
        self.charts.equity.add_overlay(dict(params), daily)
        self.charts.heatmap.mark_shown(dict(params))
        self.pick_note.setText("" if verdict is None else pick_sentence(params, verdict))
        self.pick_note.setVisible(verdict is not None)

    def clear(self) -> None:
        """Show no run."""
        self.run = None
        self.pick_note.hide()
        self.data_note.hide()
        self.banner.clear()
        self.performance.set_rows([])
        self.statistics.set_rows([])
        self._fit_tables()
        self.capital_tables.show_run(None)
        self.charts.clear()
        self.book_panel.show_run(None)
        self.holdout.show_state(None, None, None)
        self.held_out = None
        self._show_slots()
        self._show_body(False)

    def export_html(self, path: str | os.PathLike[str], *, idea: Idea, run: RunRecord,
                    rule_text: str) -> None:
        """Write a self-contained HTML report of a run (charts embedded as PNG images).

        Raises
        ------
        HunchbookError
            The file could not be written.
        """
        held_out = self.held_out if self.run is not None and self.run.id == run.id else None
        write_html_report(path, idea=idea, run=run, rule_text=rule_text,
                          images=render_chart_images(run, held_out), held_out=held_out)
