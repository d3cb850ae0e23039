"""The main window driven through its real widgets: new idea, rules with an error, quick run
with progress and results, cancel, catalogue search and filters, idea form, review, journal,
drops, exports, settings and the screenshot option."""

from __future__ import annotations

import threading
from pathlib import Path

import pandas as pd
import pytest
from PySide6.QtCore import QMimeData, QPoint, QPointF, Qt, QTimer, QUrl
from PySide6.QtGui import QDragEnterEvent, QDropEvent
from PySide6.QtWidgets import QApplication, QDialogButtonBox, QLabel, QMessageBox

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.gui import feedback
from hunchbook.gui.drops import classify_drop
from hunchbook.gui.main_window import MainWindow
from hunchbook.gui.models import ID_ROLE, IdeaTableModel, verdict_label
from hunchbook.gui.widgets.new_idea import NewIdeaDialog
from tests.gui.desk_fixtures import (
    ACCEPTED_TITLE,
    SUBMITTED_TITLE,
    TESTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
    open_window,
)

MANY_SETS = """name = "Long sweep to cancel"
markets = ["TNOTE10", "EQIDX", "GOLD", "CRUDE"]

[parameters]
n = { start = 5, stop = 400, step = 1 }

[signal]
position = "sign(close - mean(close, n))"
"""

def _with_sweep_markets(window, idea_id: int) -> int:
    """Name the markets of :data:`MANY_SETS` on the idea before its first run (which freezes
    them: a first run on markets the idea does not name is refused)."""
    window.catalogue.update_idea(idea_id, by="Test Reviewer",
                                 markets=["TNOTE10", "EQIDX", "GOLD", "CRUDE"])
    return idea_id


HEAVY_RULES = """name = "Trend grid across the book"
markets = ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]

[parameters]
fast = { start = 2, stop = 150, step = 1 }
slow = [60, 120, 250]

[signal]
position = "sign(ewm(close, fast) - ewm(close, slow))"
"""


@pytest.fixture
def demo_catalogue(tmp_path_factory, tmp_path):
    return demo_catalogue_copy(tmp_path_factory, tmp_path)


@pytest.fixture
def window(qtbot, demo_catalogue, short_data):
    return open_window(qtbot, demo_catalogue, short_data)


def _row_cells(win: MainWindow, idea_id: int) -> dict[int, str]:
    proxy = win.catalogue_panel.model
    for row in range(proxy.rowCount()):
        if proxy.index(row, 0).data(ID_ROLE) == idea_id:
            return {c: proxy.index(row, c).data() for c in range(proxy.columnCount())}
    raise AssertionError(f"idea {idea_id} not in the table")


def _type_into_rules(qtbot, win: MainWindow, anchor: str, typed: str) -> None:
    """Put the cursor right after ``anchor`` in the rule text and type ``typed``."""
    edit = win.rules.editor.text_edit
    cursor = edit.textCursor()
    cursor.setPosition(edit.toPlainText().index(anchor) + len(anchor))
    edit.setTextCursor(cursor)
    edit.setFocus()
    qtbot.keyClicks(edit, typed)


def _close_error_dialogs(win: MainWindow) -> list[str]:
    texts = []
    for box in win.findChildren(QMessageBox, "errorDialog"):
        if box.isVisible():
            texts.append(box.text())
            box.close()
    return texts


def test_new_idea_through_the_dialog(qtbot, window):
    """Ctrl+N's action opens the dialog; typing a title and hypothesis, ticking a market and
    pressing OK writes a draft idea, selects it in the table and shows its Idea section."""
    window.new_idea_action.trigger()
    dialog = window.findChild(NewIdeaDialog)
    assert dialog is not None and dialog.isVisible()
    qtbot.keyClicks(dialog.title, "Grain basis carry")
    qtbot.keyClicks(dialog.hypothesis, "Wide basis means the curve pays to hold.")
    dialog.market_list.item(0).setCheckState(Qt.CheckState.Checked)
    qtbot.mouseClick(dialog.buttons.button(QDialogButtonBox.StandardButton.Ok),
                     Qt.MouseButton.LeftButton)
    idea_id = window.current_idea_id()
    assert idea_id is not None
    idea = window.catalogue.idea(idea_id)
    assert (idea.title, idea.stage, idea.submitted_by) == ("Grain basis carry", "draft",
                                                          "Test Reviewer")
    assert window.current_section() == "idea"
    assert window.section("idea").title.text() == "Grain basis carry"
    assert _row_cells(window, idea_id)[IdeaTableModel.STAGE] == "draft"


def test_rule_error_is_shown_and_blocks_the_run_until_fixed(qtbot, window):
    """Typing an unknown function shows the error under the rule text (once: not again in a
    status line) and marks the tab; the quick run refuses with an error dialog; deleting the
    typo clears it."""
    window.select_idea(idea_id_by_title(window, ACCEPTED_TITLE))
    window.show_section("rules")
    message = window.rules.editor.message
    _type_into_rules(qtbot, window, 'position = "', "nope(close) + ")
    qtbot.waitUntil(lambda: "nope" in message.text(), timeout=5000)
    shown = [label.text() for label in window.rules.findChildren(QLabel)
             if label.isVisible() and "nope" in label.text()]
    assert shown == [message.text()]
    assert "\u26a0" in window.tabs.tabText(1)
    assert "nope" in window.tabs.tabToolTip(1)
    assert window.quick_run.start() is None
    assert "nope" in window.last_error
    assert any("nope" in t for t in _close_error_dialogs(window))
    for _ in "nope(close) + ":
        qtbot.keyClick(window.rules.editor.text_edit, Qt.Key.Key_Backspace)
    qtbot.waitUntil(lambda: "Valid rule file" in message.text(), timeout=5000)
    assert window.tabs.tabText(1) == "Rules"


def test_quick_run_shows_the_verdict_everywhere(qtbot, window, demo_catalogue):
    """Ctrl+R on an accepted idea: progress shows while it runs, then the Runs section opens
    with the verdict in the banner and run list, the catalogue row and the store agree."""
    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("rules")
    assert window.quick_run.run_action.shortcut().toString() == "Ctrl+R"
    with qtbot.waitSignal(window.quick_run.started, timeout=5000):
        window.quick_run.run_action.trigger()
    assert window.quick_run.progress.isVisible() and window.quick_run.cancel_button.isVisible()
    with qtbot.waitSignal(window.quick_run.finished, timeout=60000) as blocker:
        pass
    run_id = blocker.args[0]
    run = window.quick_run
    assert not run.progress.isVisible() and not run.cancel_button.isVisible()

    with Catalogue(demo_catalogue) as cat:  # the store, read on its own connection
        runs = cat.runs(idea_id)
        assert [r.id for r in runs] == [run_id]
        stored = runs[0]
        assert cat.idea(idea_id).stage == "tested"
        assert cat.idea(idea_id).last_verdict == stored.result.verdict.outcome
    label = stored.result.verdict.label
    assert label == verdict_label(stored.result.verdict.outcome)

    assert window.current_section() == "runs"
    panel = window.runs
    assert panel.current_run().id == run_id
    assert panel.results.banner.label.text() == label
    assert panel.model.index(0, panel.model.VERDICT).data() == label
    cells = _row_cells(window, idea_id)
    assert cells[IdeaTableModel.VERDICT] == label
    assert cells[IdeaTableModel.STAGE] == "tested"
    assert cells[IdeaTableModel.TRIALS] == str(stored.trial_count)
    assert label in window.statusBar().currentMessage()


def test_quick_run_refused_for_a_draft_with_a_clear_message(qtbot, window):
    """A draft idea is not run: one clear line in an error dialog, nothing started."""
    draft = next(i.id for i in window.catalogue.list_ideas(stage="draft"))
    window.select_idea(draft)
    with qtbot.assertNotEmitted(window.quick_run.started):
        assert window.quick_run.start() is None
    assert "'draft'" in window.last_error
    assert "\n" not in window.last_error
    assert _close_error_dialogs(window)


def test_quick_run_refuses_the_unedited_starter_rules(qtbot, window):
    """Ctrl+R on the starter template records nothing and says what to fill in (common
    practice, no source: a placeholder is not the idea)."""
    from hunchbook.starter import starter_rules

    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    revisions = window.catalogue.revisions(idea_id)
    idea = window.catalogue.idea(idea_id)
    window.rules.editor.set_text(starter_rules(idea.title, idea.markets))
    with qtbot.assertNotEmitted(window.quick_run.started):
        assert window.quick_run.start() is None
    assert "unedited starter template" in window.last_error
    assert "[signal] position" in window.last_error
    assert _close_error_dialogs(window)
    assert window.catalogue.runs(idea_id) == []
    assert window.catalogue.revisions(idea_id) == revisions


def test_review_cannot_accept_an_idea_without_rules(qtbot, window):
    """The Review section's Accept stays off for an idea without a rule file, whatever is
    ticked, and says why; the catalogue refuses it too."""
    idea_id = window.catalogue.add_idea(title="No rules yet", hypothesis="h",
                                        submitted_by="Nia Oduya-Fell", stage="submitted")
    window.refresh_idea(idea_id)
    window.select_idea(idea_id)
    window.show_section("review")
    panel = window.section("review")
    for key in CHECKLIST:
        panel.checks[key].setChecked(True)
    assert panel.form.isVisible() and not panel.accept_button.isEnabled()
    assert "without a rule file" in panel.status.text()
    assert "without a rule file" in panel.accept_button.toolTip()
    assert not panel.decide("accept")
    assert window.catalogue.idea(idea_id).stage == "submitted"


def test_run_failure_shows_one_line_and_records_nothing(qtbot, window, tmp_path):
    """A data folder without price files: the run stops with a one-line error dialog."""
    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    window.set_data_folder(tmp_path)
    with qtbot.waitSignal(window.quick_run.failed, timeout=60000) as blocker:
        window.quick_run.start()
    assert "\n" not in blocker.args[0]
    assert _close_error_dialogs(window) == [blocker.args[0]]
    assert window.catalogue.runs(idea_id) == []
    assert window.quick_run.run_action.isEnabled()


def test_cancelled_sweep_records_nothing_and_the_window_stays_usable(qtbot, window,
                                                                      short_data):
    """Cancel right after the start of a 396-set sweep: no run or revision is stored, the
    progress bar goes away, and a following run works."""
    idea_id = _with_sweep_markets(window, idea_id_by_title(window, ACCEPTED_TITLE))
    window.select_idea(idea_id)
    revisions = window.catalogue.revisions(idea_id)
    window.rules.editor.set_text(MANY_SETS)
    with qtbot.waitSignal(window.quick_run.cancelled, timeout=60000):
        assert window.quick_run.start() is not None
        qtbot.mouseClick(window.quick_run.cancel_button, Qt.MouseButton.LeftButton)
    assert window.catalogue.runs(idea_id) == []
    assert window.catalogue.revisions(idea_id) == revisions
    assert window.catalogue.idea(idea_id).stage == "accepted"
    assert not window.quick_run.is_running() and not window.quick_run.progress.isVisible()
    assert window.quick_run.run_action.isEnabled()
    assert "cancelled" in window.statusBar().currentMessage()

    window.rules.editor.set_text(MANY_SETS.replace("stop = 400", "stop = 7"))
    with qtbot.waitSignal(window.quick_run.finished, timeout=60000) as blocker:
        window.quick_run.start()
    assert [r.id for r in window.catalogue.runs(idea_id)] == [blocker.args[0]]


@pytest.mark.parametrize("yes", [False, True], ids=["declined", "confirmed"])
def test_a_long_sweep_asks_first_in_the_window(qtbot, window, short_data, monkeypatch, yes):
    """A sweep above the confirmation threshold shows its estimate and waits for the answer:
    no cancels it with nothing recorded, yes runs it."""
    monkeypatch.setattr("hunchbook.core.sweep_estimate.CONFIRM_SECONDS", 0.0)
    asked = []

    def answer(parent, title, text, *args):
        asked.append(text)
        return QMessageBox.StandardButton.Yes if yes else QMessageBox.StandardButton.No

    monkeypatch.setattr(QMessageBox, "question", answer)
    idea_id = _with_sweep_markets(window, idea_id_by_title(window, ACCEPTED_TITLE))
    window.select_idea(idea_id)
    window.rules.editor.set_text(MANY_SETS.replace("stop = 400", "stop = 9"))
    signal = window.quick_run.finished if yes else window.quick_run.cancelled
    with qtbot.waitSignal(signal, timeout=60000):
        assert window.quick_run.start() is not None
    assert len(asked) == 1 and "This sweep: 5 parameter sets x" in asked[0]
    assert len(window.catalogue.runs(idea_id)) == (1 if yes else 0)
    assert not window.quick_run.is_running()


def test_quick_run_works_off_the_ui_thread_while_the_ui_keeps_turning(qtbot, window,
                                                                        monkeypatch):
    """The run (``run_idea`` and its sweep's progress reports) happens on a worker thread,
    never on the UI thread; and in the middle of the sweep, at its first progress report, the
    worker waits until a UI timer has fired three times, which only happens when the UI event
    loop keeps turning during the run. No clock is read: a slow machine makes this slower, not
    red (the UI-thread gap in milliseconds is measured by benchmarks/ui_stall.py)."""
    from hunchbook import services

    ui_thread = threading.get_ident()
    threads: dict[str, int] = {}
    first_report: list[tuple[int, int]] = []
    mid_sweep, ui_turned = threading.Event(), threading.Event()
    ticks_mid_sweep: list[int] = []
    real_run_idea = services.run_idea

    def run_idea(*args, progress, **kwargs):
        threads["run_idea"] = threading.get_ident()

        def report(done: int, total: int) -> None:
            if not mid_sweep.is_set():
                threads["progress"] = threading.get_ident()
                first_report.append((done, total))
                mid_sweep.set()
                ui_turned.wait(60)
            progress(done, total)

        return real_run_idea(*args, progress=report, **kwargs)

    def tick() -> None:
        if mid_sweep.is_set():
            ticks_mid_sweep.append(1)
            if len(ticks_mid_sweep) >= 3:
                ui_turned.set()

    monkeypatch.setattr(services, "run_idea", run_idea)
    idea_id = _with_sweep_markets(window, idea_id_by_title(window, ACCEPTED_TITLE))
    window.select_idea(idea_id)
    window.rules.editor.set_text(MANY_SETS.replace("stop = 400", "stop = 40"))
    timer = QTimer(window, interval=10)
    timer.timeout.connect(tick)
    timer.start()
    try:
        with qtbot.waitSignal(window.quick_run.finished, timeout=120000) as blocker:
            assert window.quick_run.start() is not None
    finally:
        timer.stop()
    [(done, total)] = first_report
    assert 0 < done < total  # the worker waited with the sweep begun and not over
    assert ui_turned.is_set()
    assert len(ticks_mid_sweep) >= 3
    assert set(threads) == {"run_idea", "progress"}
    assert ui_thread not in threads.values()
    assert [r.id for r in window.catalogue.runs(idea_id)] == [blocker.args[0]]


def test_search_and_filters_narrow_the_table(qtbot, window):
    """The search box runs the catalogue's full-text search; filters combine with it."""
    panel = window.catalogue_panel
    assert panel.model.rowCount() == 16
    window.find_action.trigger()
    qtbot.keyClicks(panel.search, "grid")
    expected = {i.id for i in window.catalogue.list_ideas(text="grid")}
    qtbot.waitUntil(lambda: set(panel.visible_ids()) == expected, timeout=3000)
    assert 0 < len(expected) < 16
    panel.stage.setCurrentIndex(panel.stage.findData("tested"))
    both = {i.id for i in window.catalogue.list_ideas(text="grid", stage="tested")}
    assert set(panel.visible_ids()) == both
    assert panel.count.text() == f"{len(both)} of 16 ideas"
    panel.clear_filters()
    panel.author.setCurrentIndex(panel.author.findData("Theo Brackwater"))
    theo = {i.id for i in window.catalogue.list_ideas(author="Theo Brackwater")}
    assert set(panel.visible_ids()) == theo


def test_sorting_the_table_by_a_header_click(qtbot, window):
    """Clicking the Trials header sorts by the raw trial counts."""
    table = window.catalogue_panel.table
    header = table.horizontalHeader()
    x = header.sectionViewportPosition(IdeaTableModel.TRIALS) + 5
    qtbot.mouseClick(header.viewport(), Qt.MouseButton.LeftButton,
                     pos=header.viewport().rect().center().__class__(x, 5))
    counts = [int(t or 0) for t in (window.catalogue_panel.model.index(
        r, IdeaTableModel.TRIALS).data() for r in range(16))]
    assert counts in (sorted(counts), sorted(counts, reverse=True))
    assert counts != [counts[0]] * 16


def test_idea_form_autosaves_and_journals_the_edit(qtbot, window):
    """Typing in the hypothesis saves after a pause through update_idea (journalled)."""
    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    edit = window.section("idea").hypothesis
    edit.setFocus()
    edit.end(False)
    qtbot.keyClicks(edit, " Mostly in winter.")
    qtbot.waitUntil(lambda: window.catalogue.idea(idea_id).hypothesis.endswith(
        "Mostly in winter."), timeout=5000)
    assert "Mostly in winter." in window.catalogue.journal(idea_id)[-1].text


def test_frozen_fields_are_read_only_and_amended_with_a_reason(qtbot, window):
    """A tested idea's rationale and markets are frozen; amending with a reason writes a
    new pre-registration version."""
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    form = window.section("idea")
    assert form.rationale.isReadOnly() and not form.markets.isEnabled()
    assert form.amend.isVisible() and "frozen" in form.frozen_note.text()
    versions = len(window.catalogue.preregistrations(idea_id))
    dialog = form.open_amend_dialog()
    dialog.rationale.setPlainText("Breakouts attract late trend followers.")
    qtbot.keyClicks(dialog.reason, "Clarified after the desk meeting")
    dialog.accept()
    assert len(window.catalogue.preregistrations(idea_id)) == versions + 1
    assert window.catalogue.idea(idea_id).rationale == "Breakouts attract late trend followers."


def test_review_accepts_a_submitted_idea(qtbot, window):
    """Ticking the checklist and pressing Accept moves the idea to accepted everywhere."""
    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("review")
    panel = window.section("review")
    assert panel.form.isVisible() and not panel.accept_button.isEnabled()
    for key in CHECKLIST:
        panel.checks[key].setChecked(True)
    qtbot.keyClicks(panel.comments, "Clear mechanism; go.")
    qtbot.mouseClick(panel.accept_button, Qt.MouseButton.LeftButton)
    assert window.catalogue.idea(idea_id).stage == "accepted"
    review = window.catalogue.reviews(idea_id)[-1]
    assert (review.decision, review.reviewer, review.comments) == (
        "accept", "Test Reviewer", "Clear mechanism; go.")
    assert _row_cells(window, idea_id)[IdeaTableModel.STAGE] == "accepted"
    assert not panel.form.isVisible()


def test_journal_note_and_confirmed_shelving(qtbot, window, monkeypatch):
    """A note is appended; shelving asks first and does nothing when the answer is no."""
    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("journal")
    panel = window.section("journal")
    qtbot.keyClicks(panel.note, "Checked the inventory data source.")
    qtbot.mouseClick(panel.add, Qt.MouseButton.LeftButton)
    assert window.catalogue.journal(idea_id)[-1].text == "Checked the inventory data source."
    assert len(panel.entries) == len(window.catalogue.journal(idea_id))
    assert "Checked the inventory data source." in panel.view.toPlainText()

    window.catalogue.set_stage(idea_id, "draft", by="Test Reviewer", reason="rework")
    panel.show_idea(idea_id)
    panel.stage.setCurrentIndex(panel.stage.findData("shelved"))
    qtbot.keyClicks(panel.reason, "No data to test it")
    answers = iter([False, True])
    monkeypatch.setattr(feedback, "confirm", lambda *args: next(answers))
    qtbot.mouseClick(panel.move, Qt.MouseButton.LeftButton)
    assert window.catalogue.idea(idea_id).stage == "draft"
    qtbot.mouseClick(panel.move, Qt.MouseButton.LeftButton)
    assert window.catalogue.idea(idea_id).stage == "shelved"
    assert _row_cells(window, idea_id)[IdeaTableModel.STAGE] == "shelved"


def test_save_rules_makes_a_new_revision(qtbot, window):
    """Save rules (Ctrl+S) keeps the editor's text as the idea's next revision."""
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    before = len(window.catalogue.revisions(idea_id))
    _type_into_rules(qtbot, window, "markets = [", '"CORN", ')
    assert window.save_rules_action.shortcut().toString() == "Ctrl+S"
    window.save_rules_action.trigger()
    revisions = window.catalogue.revisions(idea_id)
    assert len(revisions) == before + 1
    assert revisions[-1].text == window.rules.editor.text()
    assert f"revision {revisions[-1].number}" in window.statusBar().currentMessage()


def test_dropped_files_go_where_they_belong(qtbot, window, short_data, tmp_path):
    """A rule file loads into the Rules editor, a CSV chooses its folder as data folder,
    other files are refused with a message."""
    rules = tmp_path / "trend.toml"
    rules.write_text(HEAVY_RULES, encoding="utf-8")
    other = tmp_path / "notes.toml"
    other.write_text('title = "not rules"\n', encoding="utf-8")
    assert classify_drop(rules) == ("rules", rules)
    assert classify_drop(short_data / "CRUDE.csv") == ("data", short_data)
    assert classify_drop(short_data) == ("data", short_data)
    assert classify_drop(other) is None

    window.select_idea(idea_id_by_title(window, ACCEPTED_TITLE))
    window.set_data_folder(None)
    mime = QMimeData()
    mime.setUrls([QUrl.fromLocalFile(str(rules)), QUrl.fromLocalFile(str(short_data / "GOLD.csv"))])
    point, action = QPoint(300, 300), Qt.DropAction.CopyAction
    buttons, keys = Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier
    enter = QDragEnterEvent(point, action, mime, buttons, keys)
    QApplication.sendEvent(window, enter)  # the drag comes over the window: it is taken
    assert enter.isAccepted()
    QApplication.sendEvent(window, QDropEvent(QPointF(point), action, mime, buttons, keys))
    assert window.rules.editor.text() == HEAVY_RULES
    assert window.current_section() == "rules"
    assert window.data_folder == short_data
    window.drops.handle([other])
    assert "not a rule file" in window.statusBar().currentMessage()


def test_bundle_export_and_confirmed_import(qtbot, window, tmp_path, monkeypatch):
    """An idea exported as a bundle and dropped on another catalogue is imported after the
    confirmation, with its runs."""
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    bundle = tmp_path / "idea.zip"
    assert window.exports.export_bundle(bundle)
    runs = len(window.catalogue.runs(idea_id))
    assert window.open_catalogue(tmp_path / "other.sqlite")
    monkeypatch.setattr(feedback, "confirm", lambda *args: False)
    window.drops.handle([bundle])
    assert window.catalogue.list_ideas() == []
    monkeypatch.setattr(feedback, "confirm", lambda *args: True)
    window.drops.handle([bundle])
    [imported] = window.catalogue.list_ideas()
    assert imported.title == TESTED_TITLE
    assert len(window.catalogue.runs(imported.id)) == runs
    assert window.current_idea_id() == imported.id


def test_pnl_csv_and_report_exports(qtbot, window, tmp_path):
    """The shown run's daily P&L is written as CSV (read back with pandas), and the HTML
    report names the verdict."""
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("runs")
    run = window.runs.current_run()
    assert window.exports.export_pnl_csv(tmp_path / "pnl.csv")
    back = pd.read_csv(tmp_path / "pnl.csv", index_col="date", parse_dates=True)
    # the chosen set's P&L, and the walk-forward test's out-of-sample net P&L beside it
    assert list(back.columns) == ["gross_pnl", "cost", "net_pnl", "walk_forward_net"]
    assert len(back) == len(run.daily_pnl)
    assert back["net_pnl"].sum() == pytest.approx(run.daily_pnl["net_pnl"].sum())
    assert window.exports.export_report(tmp_path / "report.html")
    html = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert run.result.verdict.label in html


def test_heatmap_cell_shows_that_sets_curves(qtbot, window):
    """A heatmap click (the results view's set_requested) computes that set on a worker
    and overlays it."""
    idea_id = idea_id_by_title(window, "Rates trend, traded slowly")
    window.select_idea(idea_id)
    window.show_section("runs")
    run = window.runs.current_run()
    params = dict(run.parameter_sets[0])
    with qtbot.waitSignal(window.runs.curves_shown, timeout=30000) as blocker:
        window.runs.results.set_requested.emit(params)
    assert blocker.args == [params]
    # the picked set is judged with every trial of the run, never as one trial (Bailey & Lopez
    # de Prado 2014: the deflated Sharpe ratio of a selected result counts all the trials)
    note = window.runs.results.pick_note
    stats = run.result.statistics
    assert note.isVisible() and f"one of the run's {stats.n_trials} trials" in note.text()
    assert "never as one trial" in note.text()


def test_layout_and_paths_are_remembered(qtbot, demo_catalogue, short_data):
    """The last catalogue, data folder and splitter sizes come back in a new window."""
    first = MainWindow()
    qtbot.addWidget(first)
    first.open_catalogue(demo_catalogue)
    first.set_data_folder(short_data)
    first.show()
    first.splitter.setSizes([300, 900])
    sizes = first.splitter.sizes()
    first.close()
    second = MainWindow()
    qtbot.addWidget(second)
    second.show()
    assert second.remembered_paths() == (demo_catalogue, short_data)
    assert second.splitter.sizes() == sizes


def test_screenshot_option_writes_a_png(qtbot, demo_catalogue, short_data, tmp_path):
    """``--screenshot`` renders the window with the chosen idea and section and exits 0."""
    from hunchbook.gui.app import main

    shot = tmp_path / "shots" / "runs.png"
    status = main(["--catalogue", str(demo_catalogue), "--data", str(short_data), "--idea",
                   "2", "--section", "runs", "--size", "1200x800", "--screenshot", str(shot)])
    assert status == 0
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    width, height = int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")
    assert (width, height) == (1200, 800)
    QApplication.processEvents()


def test_demo_opens_on_the_accepted_idea_with_its_data(qtbot, tmp_path, monkeypatch):
    """``--demo`` shows the window at once, prepares the demo desk and data on a worker (never
    on the UI thread), then opens the 16-idea catalogue with the accepted idea selected and
    sets the data folder."""
    import threading

    from hunchbook.demo import build as demo_build
    from hunchbook.gui.app import parse_args, start

    threads = []
    prepare = demo_build.prepare_demo

    def recorded(dest, **kwargs):
        threads.append(threading.current_thread())
        return prepare(dest, **kwargs)

    monkeypatch.setattr(demo_build, "prepare_demo", recorded)
    session = start(parse_args(["--demo"]))
    qtbot.addWidget(session.window)
    try:
        win = session.window
        assert session.wait_for_demo_data()
        assert threads and threading.main_thread() not in threads
        assert win.catalogue_panel.model.rowCount() == 16
        assert win.catalogue.idea(win.current_idea_id()).stage == "accepted"
        assert (win.data_folder / "markets.toml").is_file()
        assert len(win.library) == 8
        assert not win.remembered_paths()[0]
        assert win.user == "Test Reviewer"  # $HUNCHBOOK_USER wins over the demo's lead
    finally:
        session.window.close()
        session.cleanup()
    assert session.temp_dir is None


def test_unknown_idea_for_the_screenshot_is_reported(qtbot, demo_catalogue):
    """An ``--idea`` that does not exist leaves a status message, not a crash."""
    from hunchbook.gui.app import parse_args, start

    session = start(parse_args(["--catalogue", str(demo_catalogue), "--idea", "999"]))
    qtbot.addWidget(session.window)
    assert "no idea 999" in session.window.statusBar().currentMessage()


def test_bad_size_option_is_refused():
    """``--size`` must be WIDTHxHEIGHT."""
    from hunchbook.gui.app import parse_args

    with pytest.raises(SystemExit):
        parse_args(["--size", "big"])


def test_closing_remembers_nothing_of_a_demo(qtbot, tmp_path):
    """A window that does not remember paths leaves the settings' paths alone."""
    win = MainWindow(remember=False)
    qtbot.addWidget(win)
    win.open_catalogue(tmp_path / "c.sqlite")
    win.set_data_folder(tmp_path)
    assert win.remembered_paths() == (None, None)


def test_path_helpers_are_plain(tmp_path: Path):
    """A missing path is nothing to drop; a zip archive is a bundle."""
    import zipfile

    assert classify_drop(tmp_path / "missing.toml") is None
    archive = tmp_path / "b.zip"
    with zipfile.ZipFile(archive, "w") as z:
        z.writestr("x.txt", "x")
    assert classify_drop(archive) == ("bundle", archive)


def test_a_quick_run_on_changed_data_says_which_market_changed(qtbot, window, short_data,
                                                               tmp_path):
    """A second quick run after one close of one market was moved (the market the test plants)
    says so in the status bar and under the verdict banner, against the first run."""
    import shutil

    idea_id = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(idea_id)
    with qtbot.waitSignal(window.quick_run.finished, timeout=60000) as blocker:
        assert window.quick_run.start() is not None
    first = blocker.args[0]
    assert "Data changed" not in window.statusBar().currentMessage()
    market = next(iter(window.catalogue.run(first).result.market_fingerprints))
    changed = tmp_path / "changed"
    shutil.copytree(short_data, changed)
    path = changed / f"{market}.csv"
    lines = path.read_text(encoding="utf-8").splitlines()
    header = lines[0].split(",")
    cells = lines[1].split(",")
    for name in ("open", "high", "low", "close"):  # the whole first bar, so it stays consistent
        if name in header:
            column = header.index(name)
            cells[column] = repr(float(cells[column]) + 0.5)  # before any boundary
    lines[1] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    window.set_data_folder(changed)
    with qtbot.waitSignal(window.quick_run.finished, timeout=60000):
        assert window.quick_run.start() is not None
    sentence = f"Data changed since run {first}: {market} (prices differ)."
    assert window.statusBar().currentMessage().endswith(sentence)
    assert window.runs.results.data_note.text() == sentence
