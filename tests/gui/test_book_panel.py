"""The run against the book in the results view and the HTML report: a run recorded in a
catalogue with two promoted ideas shows its correlations (equal to pandas on the stored daily
P&L), the book's Sharpe ratios and the bar chart with the threshold; a record without the
comparison says so; the report carries the section with every title escaped."""

from __future__ import annotations

import dataclasses
import html

import numpy as np
import pandas as pd
import pytest
from PySide6.QtWidgets import QScrollArea

from hunchbook.catalogue import Catalogue
from hunchbook.core.book import BOOK_CORRELATION_THRESHOLD, compare_with_book
from hunchbook.core.verdict import decide
from hunchbook.gui.charts.run_figures import format_value
from hunchbook.gui.html_book import BOOK_CAPTION
from hunchbook.gui.html_report import render_chart_images, report_html
from hunchbook.gui.widgets.book_panel import NOT_COMPARED
from hunchbook.gui.widgets.results_view import BOOK_PAGE
from tests.gui.run_records import HOSTILE_TITLE
from tests.store.helpers import accepted_idea, promote, run_summary

DAYS = 400


def _frame(net: np.ndarray) -> pd.DataFrame:
    cost = np.full(len(net), 10.0)
    return pd.DataFrame({"gross_pnl": net + cost, "cost": cost, "net_pnl": net},
                        index=pd.bdate_range("2021-01-04", periods=len(net), name="date"))


@pytest.fixture(scope="module")
def desk(tmp_path_factory):
    """Two promoted ideas (one with a hostile title) and a third idea's run recorded with its
    comparison; P&L share a common factor: x_k = a_k c + own noise (common practice, no
    source: the correlation of two such series is a1 a2 / sqrt((a1^2 + 1)(a2^2 + 1)))."""
    path = tmp_path_factory.mktemp("book") / "desk.sqlite"
    rng = np.random.default_rng(3)
    common = rng.standard_normal(DAYS)
    with Catalogue(path) as cat:
        for title, weight in ((HOSTILE_TITLE, 2.0), ("Carry in metals", 0.3)):
            idea = accepted_idea(cat, title=title)
            revision = cat.latest_revision(idea)
            net = 1000.0 * (weight * common + rng.standard_normal(DAYS)) + 50.0
            cat.record_run(idea, revision_id=revision.id, by="Nia", data_fingerprint="f" * 64,
                           engine_version="0.1.0", daily_pnl=_frame(net),
                           summary=run_summary([{"fast": 5.0, "slow": 50.0}], [0.4]))
            promote(cat, idea)
        idea = accepted_idea(cat, title="Variant")
        daily = _frame(800.0 * (2.0 * common + rng.standard_normal(DAYS)) + 40.0)
        book = compare_with_book(daily["net_pnl"], cat.promoted_pnl(exclude_idea=idea))
        summary = run_summary([{"fast": 5.0, "slow": 50.0}], [0.4])
        summary = dataclasses.replace(summary, book=book, verdict=decide(
            summary.statistics, warnings=book.warnings()))
        run_id = cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Theo",
                                summary=summary, data_fingerprint="f" * 64,
                                engine_version="0.1.0", daily_pnl=daily)
        promoted = [cat.run(cat.runs(i)[-1].id) for i in (1, 2)]
        return cat.run(run_id), promoted, cat.idea(idea)


def _cells(view) -> list[list[str]]:
    model = view.book_panel.model
    return [[model.index(r, c).data() for c in range(model.columnCount())]
            for r in range(model.rowCount())]


def test_the_panel_shows_the_record_and_the_record_equals_pandas(view, desk) -> None:
    run, promoted, _ = desk
    book = run.result.book
    # the stored figures against pandas on the stored daily P&L (reference: pandas corr)
    for row, other in zip(book.ideas, promoted, strict=True):
        rho = run.daily_pnl["net_pnl"].corr(other.daily_pnl["net_pnl"])
        assert row.correlation == pytest.approx(rho, abs=1e-12)
    assert book.ideas[0].correlation > BOOK_CORRELATION_THRESHOLD > book.ideas[1].correlation
    view.show_run(run, title="Variant")
    view.show_page(BOOK_PAGE)
    panel = view.book_panel
    assert panel.isVisible() and panel.table.isVisible() and panel.chart.isVisible()
    cells = _cells(view)
    # titles are shown verbatim (item views draw plain text, never markup)
    assert [c[0] for c in cells] == [f"1  {HOSTILE_TITLE}", "2  Carry in metals",
                                     "Book (2 ideas, equal risk)"]
    assert [c[1] for c in cells] == [format_value(v, "ratio") for v in (
        book.ideas[0].correlation, book.ideas[1].correlation, book.book_correlation)]
    assert [c[2] for c in cells] == [f"{DAYS:,}"] * 3
    assert panel.model.bold == frozenset(
        i for i, v in enumerate((book.ideas[0].correlation, book.ideas[1].correlation,
                                 book.book_correlation)) if v > BOOK_CORRELATION_THRESHOLD)
    assert panel.sharpe.text() == (
        f"Book Sharpe {book.sharpe_before:.2f} without this run, {book.sharpe_after:.2f} with "
        f"it at equal risk (change {book.sharpe_change:.2f}).")
    # the verdict's warning is in the banner
    assert "Mostly the same bet as idea 1" in view.banner.reasons.text()


def test_the_chart_draws_each_correlation_and_the_threshold(view, desk) -> None:
    run, _, _ = desk
    book = run.result.book
    view.show_run(run, title="Variant")
    view.show_page(BOOK_PAGE)
    chart = view.book_panel.chart
    assert chart.labels == ["idea 1", "idea 2", "book"]
    assert chart.bar_widths() == pytest.approx([book.ideas[0].correlation,
                                                book.ideas[1].correlation,
                                                book.book_correlation])
    assert chart.threshold.value() == BOOK_CORRELATION_THRESHOLD and chart.threshold.isVisible()
    # the panel fits its page: nothing is cut off on the right of the scrolled page
    scroll = view.book_panel.parentWidget().parentWidget().parentWidget()
    assert isinstance(scroll, QScrollArea)
    assert view.book_panel.width() <= scroll.viewport().width()
    assert chart.width() <= scroll.viewport().width()


def test_a_record_without_the_comparison_says_so(view, desk) -> None:
    run, _, _ = desk
    older = dataclasses.replace(run, result=dataclasses.replace(run.result, book=None))
    view.show_run(older, title="Variant")
    view.show_page(BOOK_PAGE)
    panel = view.book_panel
    assert panel.notes.text() == NOT_COMPARED
    assert not panel.table.isVisible() and not panel.chart.isVisible()
    view.clear()
    assert not panel.isVisible()


def test_the_html_report_has_the_section_and_the_chart(qtbot, desk) -> None:
    run, _, idea = desk
    images = render_chart_images(run)
    assert images["book"][:8] == b"\x89PNG\r\n\x1a\n"  # the PNG signature
    page = report_html(idea=idea, run=run, rule_text="", images=images)
    section = page[page.index("<h2>Against the book"):page.index("<h2>Held-out years")]
    assert "&lt;script&gt;" in section and "<script>" not in page
    book = run.result.book
    for value in (book.ideas[0].correlation, book.book_correlation, book.sharpe_before,
                  book.sharpe_after):
        assert f'<td class="num">{value:.2f}</td>' in section
    assert html.escape(BOOK_CAPTION, quote=True) in page  # the chart's caption
