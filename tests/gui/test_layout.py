"""The window at the sizes it must work at (1280 x 720, 1440 x 900, 1920 x 1080): in every
section, on the demo desk, with an idea that has runs and one that has none, no label, header,
button or chart text is cut short (see :mod:`tests.gui.layout_check`); at 900 px high the
verdict, the headline figures and the equity curve are in view without scrolling.

The checker's own tests first: each kind of problem it looks for is made on purpose and must be
found (so the window tests can fail).
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import QCoreApplication
from PySide6.QtGui import QStandardItemModel
from PySide6.QtWidgets import QLabel, QPushButton, QTableView, QVBoxLayout, QWidget

from hunchbook.gui.sections.registry import section_names
from tests.gui.desk_fixtures import demo_catalogue_copy, short_demo_data
from tests.gui.layout_check import layout_problems

SIZES = ((1280, 720), (1440, 900), (1920, 1080))
#: Demo ideas: one with a run (its results shown), one without any.
WITH_RUNS, WITHOUT_RUNS = 16, 9


def _shown(qtbot, widget: QWidget, width: int, height: int) -> QWidget:
    qtbot.addWidget(widget)
    widget.resize(width, height)
    widget.show()
    qtbot.waitExposed(widget)
    QCoreApplication.processEvents()
    return widget


# -- the checker finds what it looks for ----------------------------------------------------

def test_checker_finds_a_label_too_narrow_for_its_text(qtbot):
    box = QWidget()
    label = QLabel("A sentence far too long for the narrow box it has been given", box)
    label.setGeometry(0, 0, 60, 20)
    _shown(qtbot, box, 200, 100)
    assert any("label" in p and "width" in p for p in layout_problems(box))
    label.setGeometry(0, 0, 190, 20)
    label.setText("Fits")
    assert layout_problems(box) == []


def test_checker_finds_a_wrapped_label_too_short_for_its_lines(qtbot):
    box = QWidget()
    label = QLabel("word " * 60, box)
    label.setWordWrap(True)
    label.setGeometry(0, 0, 120, 20)
    _shown(qtbot, box, 200, 100)
    assert any("height" in p for p in layout_problems(box))


def test_checker_finds_a_header_section_narrower_than_its_text(qtbot):
    box = QWidget()
    table = QTableView()
    model = QStandardItemModel(2, 2, table)
    model.setHorizontalHeaderLabels(["Values / start", "Stop"])
    table.setModel(model)
    table.horizontalHeader().resizeSection(0, 20)
    QVBoxLayout(box).addWidget(table)
    _shown(qtbot, box, 300, 200)
    assert any("Values / start" in p for p in layout_problems(box))


def test_checker_finds_a_squeezed_button(qtbot):
    box = QWidget()
    QPushButton("Compare with a run of any idea", box).setGeometry(0, 0, 50, 24)
    _shown(qtbot, box, 300, 100)
    assert any("button" in p for p in layout_problems(box))


def test_checker_finds_a_chart_title_and_axis_label_cut(qtbot):
    import pyqtgraph as pg

    chart = pg.PlotWidget()
    chart.getPlotItem().setTitle("A chart title much wider than the small chart it sits on")
    chart.getPlotItem().setLabel("left", "An axis label longer than the axis is high")
    _shown(qtbot, chart, 160, 120)
    problems = layout_problems(chart)
    assert any("title" in p for p in problems)
    assert any("axis label" in p for p in problems)


# -- the window at each size ----------------------------------------------------------------

@pytest.fixture(scope="module")
def catalogue_and_data(tmp_path_factory):
    return (demo_catalogue_copy(tmp_path_factory, tmp_path_factory.mktemp("layout")),
            short_demo_data(tmp_path_factory))


@pytest.fixture
def window(qtbot, catalogue_and_data):
    from hunchbook.core.runners import InProcess
    from hunchbook.gui.main_window import MainWindow

    catalogue, data = catalogue_and_data
    win = MainWindow(runner=InProcess(), keep_layout=False)
    qtbot.addWidget(win)
    assert win.open_catalogue(catalogue)
    win.set_data_folder(data)
    return win


def _show(qtbot, win, size: tuple[int, int], idea: int, section: str) -> None:
    win.resize(*size)
    win.show()
    qtbot.waitExposed(win)
    assert win.select_idea(idea)
    win.show_section(section)
    _settle()


def _settle() -> None:
    """Let posted layout requests and resizes run (a few rounds: one layout can post
    another)."""
    for _ in range(6):
        QCoreApplication.sendPostedEvents()
        QCoreApplication.processEvents()


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
@pytest.mark.parametrize("idea", (WITH_RUNS, WITHOUT_RUNS), ids=("runs", "no-runs"))
def test_nothing_is_cut_short_in_any_section(qtbot, window, size, idea):
    assert bool(window.catalogue.runs(idea)) == (idea == WITH_RUNS)
    problems = []
    for section in section_names():
        _show(qtbot, window, size, idea, section)
        assert window.size().width() == size[0]
        problems += [f"{section}: {p}" for p in layout_problems(window)]
    if idea == WITH_RUNS:  # each page of the results in front in turn
        window.show_section("runs")
        pages = window.runs.results.pages
        for index in range(pages.count()):
            pages.setCurrentIndex(index)
            _settle()
            problems += [f"runs, {pages.tabText(index)}: {p}" for p in layout_problems(window)]
    assert not problems, "\n".join(problems)


@pytest.mark.parametrize("size", SIZES[1:], ids=lambda s: f"{s[0]}x{s[1]}")
def test_verdict_figures_and_equity_in_view_without_scrolling(qtbot, window, size):
    _show(qtbot, window, size, WITH_RUNS, "runs")
    results = window.runs.results
    area = window.runs.results_area
    assert area.verticalScrollBar().maximum() == 0 and area.horizontalScrollBar().maximum() == 0
    for widget in (results.banner, results.performance_table, results.charts.equity):
        assert widget.isVisible()
        top_left = widget.mapTo(area.viewport(), widget.rect().topLeft())
        bottom_right = widget.mapTo(area.viewport(), widget.rect().bottomRight())
        assert area.viewport().rect().contains(top_left)
        assert area.viewport().rect().contains(bottom_right)
    table = results.performance_table
    assert table.verticalScrollBar().maximum() == 0  # every headline figure in view
    assert results.charts.equity.height() >= 200


@pytest.mark.parametrize(("width", "columns"), ((1400, 3), (620, 2), (330, 1)))
def test_the_banner_puts_as_many_columns_of_checks_as_fit(qtbot, width, columns):
    """A narrow banner stacks its checks in fewer columns instead of running past its edge."""
    from hunchbook.core.verdict import Check
    from hunchbook.gui.charts.run_figures import VerdictText
    from hunchbook.gui.widgets.verdict_banner import VerdictBanner

    banner = VerdictBanner()
    checks = tuple(Check(f"k{i}", f"Check number {i}", "pass", f"{i}.00 of a long figure",
                         "found") for i in range(9))
    banner.set_verdict(VerdictText("passes", "Promote", "Promote the idea.",
                                   ("A reason in one sentence.",), checks))
    box = QWidget()
    QVBoxLayout(box).addWidget(banner)
    _shown(qtbot, box, width, 400)
    _settle()
    assert banner.checks.columns == columns
    assert layout_problems(box) == []
    rows = -(-len(checks) // columns)
    names = [name for _, _, name, _ in banner.checks.rows]
    assert len({name.y() for name in names}) == rows  # as many lines as the columns need


def test_the_rules_splitter_keeps_its_place_between_sessions(qtbot, catalogue_and_data):
    """Where the form and the text part is kept on closing and found again at the next start
    (the settings are the test's own, see conftest)."""
    from hunchbook.core.runners import InProcess
    from hunchbook.gui.main_window import MainWindow

    first = MainWindow(runner=InProcess())
    _shown(qtbot, first, 1440, 900)
    first.show_section("rules")
    splitter = first.rules.editor.splitter
    total = sum(splitter.sizes())
    splitter.setSizes([total - 300, 300])
    moved = splitter.sizes()
    first.close()
    second = MainWindow(runner=InProcess())
    _shown(qtbot, second, 1440, 900)
    _settle()
    second.show_section("rules")
    _settle()
    assert second.rules.editor.splitter.sizes() == moved
    assert second.splitter.sizes() == first.splitter.sizes()  # the catalogue's width too


def test_a_new_window_shares_its_width_between_catalogue_and_idea(qtbot, window):
    """Without a kept layout the idea gets its least width and the catalogue the rest, up to
    what its columns want; a narrow catalogue leaves out its spare columns."""
    from hunchbook.gui.main_window import IDEA_MIN_WIDTH
    from hunchbook.gui.widgets.catalogue_panel import SPARE_COLUMNS

    _show(qtbot, window, (1280, 720), WITH_RUNS, "idea")
    catalogue, idea = window.splitter.sizes()
    assert idea >= IDEA_MIN_WIDTH
    header = window.catalogue_panel.table.horizontalHeader()
    assert all(header.isSectionHidden(c) for c in SPARE_COLUMNS)
    window.splitter.setSizes([catalogue + idea - IDEA_MIN_WIDTH + 400, IDEA_MIN_WIDTH - 400])
    _settle()
    assert not any(header.isSectionHidden(c) for c in SPARE_COLUMNS)  # room again: shown
