"""The data folder check dialog: the report table, the worker thread, and Copy report."""

from __future__ import annotations

import threading

import pandas as pd
import pytest
from PySide6.QtCore import Qt, QTimer
from PySide6.QtGui import QGuiApplication

from hunchbook.core import data_check as core_check
from hunchbook.core.data_check import format_data_check
from hunchbook.demo import DEMO_MARKETS, write_demo_data
from hunchbook.gui.widgets import data_check as dialog_module
from hunchbook.gui.widgets.data_check import HEADERS, DataCheckDialog

COL = {name: HEADERS.index(name) for name in HEADERS}


@pytest.fixture(scope="module")
def demo_folder(tmp_path_factory):
    return write_demo_data(tmp_path_factory.mktemp("demo"), start="2016-01-04",
                           end="2017-12-29")


@pytest.fixture
def broken_folder(tmp_path):
    """Demo data with a duplicate row in CRUDE, a bad date in GOLD, no CORN file and an
    extra file."""
    folder = write_demo_data(tmp_path / "data", start="2016-01-04", end="2017-12-29")
    crude = folder / "CRUDE.csv"
    lines = crude.read_text(encoding="utf-8").splitlines()
    lines.insert(20, lines[4])  # line 5 again as line 21
    crude.write_text("\n".join(lines) + "\n", encoding="utf-8")
    gold = folder / "GOLD.csv"
    lines = gold.read_text(encoding="utf-8").splitlines()
    lines[8] = "2016-13-01" + lines[8][10:]  # line 9
    gold.write_text("\n".join(lines) + "\n", encoding="utf-8")
    (folder / "CORN.csv").unlink()
    (folder / "SPARE.csv").write_text("date,close\n2020-01-02,1\n", encoding="utf-8")
    return folder


def _open(qtbot, folder):
    """Open the dialog and wait for its check to finish. The report comes through a queued
    signal, handled only once the event loop runs, so arming the wait after construction
    cannot miss it."""
    dialog = DataCheckDialog(folder)
    qtbot.addWidget(dialog)
    with qtbot.waitSignal(dialog.check_finished, timeout=20000) as blocker:
        dialog.show()
    return dialog, blocker.args[0]


def test_demo_folder_shows_every_market_ok(qtbot, demo_folder, qtmodeltester):
    """One row per demo market, status ok, row counts as pandas reads the CSV files
    (reference: pandas.read_csv)."""
    dialog, report = _open(qtbot, demo_folder)
    model = dialog.model
    qtmodeltester.check(model)
    assert model.rowCount() == len(DEMO_MARKETS)
    for row, market in enumerate(DEMO_MARKETS):
        frame = pd.read_csv(demo_folder / f"{market}.csv")
        assert model.index(row, COL["Market"]).data() == market
        assert model.index(row, COL["Status"]).data() == "ok"
        assert model.index(row, COL["Rows"]).data() == f"{len(frame):,}"
        assert model.index(row, COL["Contracts"]).data() == str(frame["contract"].nunique())
        assert model.index(row, COL["First"]).data() == frame["date"].min()
        assert model.index(row, COL["Last"]).data() == frame["date"].max()
    assert dialog.summary_label.text() == f"<b>{report.summary}</b>"
    assert "8 ok" in report.summary
    assert not dialog.is_running()
    assert dialog.progress_bar.isHidden()


def test_broken_folder_shows_each_problem_with_file_and_line(qtbot, broken_folder):
    """The table shows the same statuses and messages as the check itself, naming file and
    line (line 1 is the header: common practice)."""
    dialog, report = _open(qtbot, broken_folder)
    expected = core_check.check_data_folder(broken_folder)
    model = dialog.model
    shown = {model.index(r, COL["Market"]).data(): (model.index(r, COL["Status"]).data(),
                                                     model.index(r, COL["Message"]).data())
             for r in range(model.rowCount())}
    for check in expected.markets:
        if check.message:
            assert shown[check.market] == (core_check.STATUS_LABELS[check.status],
                                           check.message)
    assert shown["CRUDE"][0] == "error"
    assert shown["CRUDE"][1].startswith("CRUDE.csv, line 21: duplicate row")
    assert "first seen on line 5" in shown["CRUDE"][1]
    assert shown["GOLD"][1].startswith("GOLD.csv, line 9: column 'date'")
    assert shown["CORN"] == ("no file",
                             "no price file for market 'CORN' (expected CORN.csv)")
    assert shown["SPARE"][0] == "not in library"
    assert "1 without a price file" in dialog.summary_label.text()
    assert report == expected


def test_copy_report_puts_the_text_report_on_the_clipboard(qtbot, broken_folder):
    """Copy report copies exactly the text report of the check shown."""
    dialog, report = _open(qtbot, broken_folder)
    QGuiApplication.clipboard().clear()
    qtbot.mouseClick(dialog.copy_button, Qt.MouseButton.LeftButton)
    text = QGuiApplication.clipboard().text()
    assert text == format_data_check(report)
    assert "CRUDE.csv, line 21" in text


def test_ui_stays_responsive_while_the_check_runs(qtbot, demo_folder, monkeypatch):
    """While the worker is held inside the check, a 10 ms UI timer keeps ticking and the
    dialog shows it is busy; released, the report arrives."""
    release = threading.Event()
    entered = threading.Event()

    def slow_check(folder, *, progress=None):
        entered.set()
        release.wait(10)
        return core_check.check_data_folder(folder, progress=progress)

    monkeypatch.setattr(dialog_module, "check_data_folder", slow_check)
    ticks = []
    timer = QTimer()
    timer.timeout.connect(lambda: ticks.append(1))
    try:
        dialog = DataCheckDialog(demo_folder)
        qtbot.addWidget(dialog)
        dialog.show()
        timer.start(10)
        qtbot.waitUntil(entered.is_set, timeout=5000)
        qtbot.waitUntil(lambda: len(ticks) >= 10, timeout=5000)
        assert dialog.is_running()
        assert dialog.model.rowCount() == 0
        assert not dialog.copy_button.isEnabled()
        assert "Checking" in dialog.summary_label.text()
    finally:
        release.set()
        timer.stop()
    qtbot.waitUntil(lambda: not dialog.is_running(), timeout=20000)
    assert dialog.model.rowCount() == len(DEMO_MARKETS)
    assert dialog.copy_button.isEnabled()


def test_check_again_reads_the_folder_anew(qtbot, broken_folder):
    """After fixing a file outside the app, Check again shows the new state."""
    dialog, report = _open(qtbot, broken_folder)
    (broken_folder / "SPARE.csv").unlink()
    with qtbot.waitSignal(dialog.check_finished, timeout=20000) as blocker:
        qtbot.mouseClick(dialog.rerun_button, Qt.MouseButton.LeftButton)
    assert len(blocker.args[0].markets) == len(report.markets) - 1
    assert dialog.model.rowCount() == len(report.markets) - 1


def test_missing_folder_is_reported(qtbot, tmp_path):
    """A folder that does not exist gives an empty table and the reason in the summary."""
    dialog, report = _open(qtbot, tmp_path / "nope")
    assert dialog.model.rowCount() == 0
    assert "data folder not found" in dialog.summary_label.text()
    assert not report.ok


def test_quality_findings_listed_with_severity_market_and_rows(qtbot, tmp_path):
    """A close x10 (above that day's high: a close lies within [low, high], a fact of the
    trade) is listed as an error with its market, check and row; the market's status is
    error."""
    folder = write_demo_data(tmp_path / "data", start="2016-01-04", end="2017-12-29")
    frame = pd.read_csv(folder / "CORN.csv", dtype=str)
    frame.loc[300, "close"] = f"{float(frame.loc[300, 'close']) * 10:.4f}"
    frame.to_csv(folder / "CORN.csv", index=False)
    dialog, report = _open(qtbot, folder)
    table = dialog.findings_table
    assert not table.isHidden()
    rows = {tuple(table.item(r, c).text() for c in range(3)) for r in range(table.rowCount())}
    assert rows == {("error", "CORN", "high/low/close"), ("error", "CORN", "price spike")}
    assert all(frame.loc[300, "date"] in table.item(r, 3).text()
               for r in range(table.rowCount()))
    corn = DEMO_MARKETS.index("CORN")
    assert dialog.model.index(corn, COL["Status"]).data() == "error"
    assert not report.ok
