"""The Desk dialog on the demo catalogue: ideas tested per period, the promoted idea's haircut
Sharpe ratios (recomputed with scipy and statsmodels: Harvey & Liu 2015, Journal of Portfolio
Management 42(1)), the worker thread, the period choice and Copy report."""

from __future__ import annotations

import math
import threading

from PySide6.QtGui import QGuiApplication
from scipy import stats
from statsmodels.stats.multitest import multipletests

from hunchbook.core.verdict import CAUTION
from hunchbook.desk import format_desk
from hunchbook.gui.main_window import MainWindow
from hunchbook.gui.widgets import desk_dialog as dialog_module
from hunchbook.gui.widgets.desk_dialog import DeskDialog


def _cells(table) -> list[list[str]]:
    return [[table.item(r, c).text() for c in range(table.columnCount())]
            for r in range(table.rowCount())]


def test_desk_dialog_on_the_demo(qtbot, window, monkeypatch):
    threads = []
    real = dialog_module.load_desk_report

    def recording(*args, **kwargs):
        threads.append(threading.current_thread())
        return real(*args, **kwargs)

    monkeypatch.setattr(dialog_module, "load_desk_report", recording)
    assert window.desk_action.shortcut().toString() == "Ctrl+D"
    window.desk_action.trigger()
    dialog = window.findChild(DeskDialog)
    assert dialog is not None and dialog.isVisible()
    with qtbot.waitSignal(dialog.report_shown, timeout=20000) as blocker:
        pass
    report = blocker.args[0]
    assert threads and threads[0] is not threading.main_thread()  # computed on a worker

    # the demo desk (hunchbook.demo.catalogue), all in 2025: the ideas with runs, the runs,
    # their sets, each idea's own trials (a family's shared count is not added twice) and the
    # promotions, counted from the catalogue's own records (the by-hand count is in
    # tests/store/test_desk_summary.py)
    cat = window.catalogue
    runs = cat.runs()
    tested = {r.idea_id for r in runs}
    trials = cat.db.execute("SELECT count(*) FROM (SELECT DISTINCT idea_id, strategy_key, "
                            "params FROM trials)").fetchone()[0]
    counts = [str(len(tested)), str(len(runs)), str(sum(r.set_count for r in runs)),
              str(trials),
              str(sum(cat.idea(i).stage == "promoted" for i in tested))]
    assert _cells(dialog.period_table) == [["2025", *counts], ["Total", *counts]]
    assert f"tested {counts[0]} ideas in {counts[3]} trials" in dialog.headline.text()
    (row,) = _cells(dialog.promoted_table)
    assert row[0] == "1 Two-average trend across the book"

    # recomputed: every tested idea's p-value (Student t, 12 x years - 1 df), statsmodels
    ideas = window.catalogue.desk_summary().ideas
    family = [2 * stats.t.sf(abs(i.net_sharpe) * math.sqrt(i.days / 252), 12 * i.days / 252 - 1)
              for i in ideas]
    k = [i.idea_id for i in ideas].index(1)
    years = ideas[k].days / 252
    for column, method in zip(row[4:], ("bonferroni", "holm", "fdr_by"), strict=True):
        p = multipletests(family, method=method)[1][k]
        hsr = stats.t.ppf(1 - p / 2, 12 * years - 1) / math.sqrt(years)
        cut = round(100 * (ideas[k].net_sharpe - hsr) / ideas[k].net_sharpe)
        assert column == f"{hsr:.2f} (-{cut} %)"
    bhy = multipletests(family, method="fdr_by")[1][k]
    assert f"Expected false promotions under BHY: {bhy:.2f} of 1" in dialog.notes.text()
    assert CAUTION.split(":")[0] in "".join(w.text() for w in dialog.findChildren(
        type(dialog.notes)))

    dialog.copy_report()
    assert QGuiApplication.clipboard().text() == format_desk(report)

    with qtbot.waitSignal(dialog.report_shown, timeout=20000) as blocker:
        dialog.period_box.setCurrentIndex(2)  # by month
    assert blocker.args[0].summary.period == "month"
    # every month from the first run's to the last run's, then the total
    months = sorted({r.recorded_at[:7] for r in cat.runs()})
    first, last = int(months[0][5:]), int(months[-1][5:])
    assert [r[0] for r in _cells(dialog.period_table)] == [
        *(f"2025-{m:02d}" for m in range(first, last + 1)), "Total"]


def test_desk_needs_a_catalogue(qtbot):
    win = MainWindow(remember=False, keep_layout=False)
    qtbot.addWidget(win)
    assert dialog_module.open_desk_dialog(win) is None
    assert win.last_error.startswith("Open a catalogue first")
