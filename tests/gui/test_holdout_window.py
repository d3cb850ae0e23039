"""The holdout through the real window: the boundary moved in its dialog (a reason required), a
quick run that stops at the boundary line, and the one unlocking of the idea's held-out years
(dates read and the unlocking run on workers, confirmed in a dialog naming who, the revision,
the set and the dates), whose figures and curves then show beside the in-sample ones."""

from __future__ import annotations

import datetime as dt
import threading

import numpy as np
import pandas as pd
from PySide6.QtCore import QDate, Qt
from PySide6.QtWidgets import QMessageBox

from hunchbook.core.presenter import format_params, format_value, holdout_rows
from hunchbook.gui.widgets.holdout_dialogs import BoundaryDialog, UnlockDialog
from tests.gui.desk_fixtures import (
    ACCEPTED_TITLE,
    idea_id_by_title,
)

BOUNDARY = dt.date(2018, 1, 2)


def _epoch(day: dt.date) -> float:
    # reference: pandas date arithmetic, seconds since 1970-01-01 (the Unix epoch, UTC)
    return float((pd.Timestamp(day) - pd.Timestamp("1970-01-01")) // pd.Timedelta(seconds=1))


def _set_boundary(qtbot, window) -> None:
    window.holdout.boundary_action.trigger()
    dialog = window.holdout.dialog
    assert isinstance(dialog, BoundaryDialog) and dialog.isVisible()
    assert "Now: 2025-01-02, set by Ines Marwood" in dialog.now.text()
    dialog.date.setDate(QDate(BOUNDARY.year, BOUNDARY.month, BOUNDARY.day))
    assert not dialog.set_button.isEnabled()  # no reason yet
    qtbot.keyClicks(dialog.reason, "hold out 2018 for the trend ideas")
    assert dialog.set_button.isEnabled()
    with qtbot.waitSignal(window.holdout.boundary_set, timeout=5000):
        qtbot.mouseClick(dialog.set_button, Qt.MouseButton.LeftButton)


def test_unlocking_through_the_window(qtbot, window, monkeypatch, tmp_path) -> None:
    from hunchbook import services

    _set_boundary(qtbot, window)
    setting = window.catalogue.holdout_boundary()
    assert (setting.boundary, setting.set_by) == (BOUNDARY, "Test Reviewer")
    assert window.catalogue.journal()[-1].text == (
        "Holdout boundary set to 2018-01-02 (was 2025-01-02): hold out 2018 for the trend "
        "ideas")

    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    with qtbot.waitSignal(window.quick_run.finished, timeout=120000) as blocker:
        assert window.quick_run.start() is not None
    run = window.catalogue.run(blocker.args[0])
    assert run.result.holdout_boundary == "2018-01-02"
    results = window.runs.results
    equity, drawdown = results.charts.equity, results.charts.drawdown
    # the boundary line stands at 2018-01-02 on both charts; nothing is drawn after it
    assert equity.boundary.x == drawdown.boundary.x == _epoch(BOUNDARY)
    assert equity.boundary.line.label.format == "holdout"
    x, _ = equity.net_curve.getOriginalDataset()
    assert x.max() < _epoch(BOUNDARY) and not equity.has_held_out
    panel = results.holdout
    assert panel.isVisible() and "locked: this run saw only the dates before 2018-01-02" \
        in panel.status.text()
    assert panel.unlock_button.isVisible() and panel.unlock_button.isEnabled()

    threads: dict[str, int] = {}
    real_unlock = services.unlock_holdout

    def unlock(*args, **kwargs):
        threads["unlock"] = threading.get_ident()
        return real_unlock(*args, **kwargs)

    monkeypatch.setattr(services, "unlock_holdout", unlock)
    qtbot.mouseClick(panel.unlock_button, Qt.MouseButton.LeftButton)
    qtbot.waitUntil(lambda: isinstance(window.holdout.dialog, UnlockDialog)
                    and window.holdout.dialog.isVisible(), timeout=20000)
    dialog = window.holdout.dialog
    # the held-out dates of the run's market, counted with pandas from its price file
    (market,) = run.result.markets
    dates = pd.read_csv(window.data_folder / f"{market}.csv", usecols=["date"])["date"]
    later = dates[dates >= "2018-01-02"]
    assert dialog.facts == {
        "Who": "Test Reviewer",
        "Rules": f"revision {run.revision_number} (of run {run.id})",
        "Chosen set": format_params(run.chosen_params),
        "Held-out dates": f"2018-01-02 to {later.max()} ({later.nunique():,} days)"}
    assert window.catalogue.holdout_view(idea_id) is None  # nothing before confirming
    with qtbot.waitSignal(window.holdout.unlocked, timeout=60000):
        qtbot.mouseClick(dialog.unlock_button, Qt.MouseButton.LeftButton)
    assert threads["unlock"] != threading.get_ident()  # never on the UI thread

    view = window.catalogue.holdout_view(idea_id)
    assert (view.seen_by, view.run_id) == ("Test Reviewer", run.id)
    entry = window.catalogue.journal(idea_id)[-1]
    assert (entry.by, entry.at) == ("Test Reviewer", view.seen_at)
    assert entry.text.startswith("Holdout unlocked by Test Reviewer: rule revision")
    # the held-out figures beside the in-sample ones, with who and when
    qtbot.waitUntil(lambda: "unlocked by Test Reviewer" in panel.status.text(), timeout=5000)
    assert panel.figures.isVisible() and not panel.unlock_button.isVisible()
    for row in holdout_rows(view.figures, "USD"):
        assert panel.cells()[("Held out", row.label)] == format_value(row.net, row.kind)
        if row.gross is not None:
            assert panel.cells()[("In-sample", row.label)] == format_value(row.gross, row.kind)
    assert panel.finding.text() == view.figures.finding()
    # the held-out curves continue the chosen set's after the line
    assert equity.has_held_out
    hx, hy = equity.held_net.getOriginalDataset()
    assert hx[0] == _epoch(BOUNDARY)
    np.testing.assert_allclose(
        hy, run.daily_pnl["net_pnl"].sum() + view.daily_pnl["net_pnl"].cumsum().to_numpy())
    dx, _ = drawdown.held.getOriginalDataset()
    assert dx[0] == _epoch(BOUNDARY) and len(dx) == len(view.daily_pnl)
    # a second unlocking is refused, naming who saw it and when
    window.holdout.unlock_action.trigger()
    assert f"already unlocked by Test Reviewer on {view.seen_at[:10]}" in window.last_error
    for box in window.findChildren(QMessageBox, "errorDialog"):
        box.close()
    # the exported report shows the boundary and the held-out figures
    report = tmp_path / "report.html"
    assert window.exports.export_report(report)
    page = report.read_text(encoding="utf-8")
    assert "<dt>Holdout boundary</dt><dd>2018-01-02</dd>" in page
    assert "<h2>Held-out years</h2>" in page and "Unlocked by Test Reviewer on" in page
    assert '<th class="num">In-sample</th><th class="num">Held out</th>' in page
    assert view.figures.finding() in page.replace("&#x27;", "'")
