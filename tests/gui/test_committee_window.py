"""The window's side of the committee work: a quick run outside the pre-registration refused
and amended with a typed reason (the program's own text refused), its flag in the runs table;
two runs side by side; the review pack exported as HTML and PDF."""

from __future__ import annotations

import difflib

import pytest
from PySide6.QtWidgets import QMessageBox, QPushButton

from hunchbook.core.presenter import format_value
from hunchbook.demo.rules import BREAKOUT_MARKETS, BREAKOUT_WIDE
from hunchbook.gui.models import RunTableModel
from hunchbook.gui.widgets.idea_form import AmendDialog
from tests.gui.desk_fixtures import (
    TESTED_TITLE,
    idea_id_by_title,
)

#: The breakout idea's wider rules on one market more than it pre-registered.
WITH_CORN = BREAKOUT_WIDE.replace('"EQIDX"]', '"EQIDX", "CORN"]')


def _error_texts(window) -> list[str]:
    texts = []
    for box in window.findChildren(QMessageBox, "errorDialog"):
        if box.isVisible():
            texts.append(box.text())
            box.close()
    return texts


def test_a_quick_run_on_more_markets_is_refused_then_amended_and_flagged(qtbot, window):
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    runs, versions = window.catalogue.runs(idea_id), window.catalogue.preregistrations(idea_id)
    window.rules.editor.set_text(WITH_CORN)
    with qtbot.waitSignal(window.quick_run.failed, timeout=10000) as refused:
        assert window.quick_run.start() is None
    assert "market CORN was not pre-registered" in refused.args[0]
    assert "Amend with reason" in refused.args[0]
    box = window.quick_run.refusal_box
    assert box.isVisible() and box.text() == refused.args[0]
    assert window.catalogue.runs(idea_id) == runs and not window.quick_run.is_running()

    box.findChild(QPushButton, "amendFromRun").click()
    form = window.section("idea")
    dialogs = [d for d in form.findChildren(AmendDialog, "amendDialog") if d.isVisible()]
    assert window.current_section() == "idea" and len(dialogs) == 1
    dialog = dialogs[0]
    assert set(dialog.markets.chosen()) == {*BREAKOUT_MARKETS, "CORN"}  # proposed, ticked
    assert dialog.space.isHidden()  # the wider space is pre-registered already (version 2)

    qtbot.keyClicks(dialog.reason, "rule revision 4 saved")  # the program's text
    dialog.accept()
    assert any("what the program writes" in t for t in _error_texts(window))
    assert window.catalogue.preregistrations(idea_id) == versions

    dialog = form.open_amend_dialog(rule_text=WITH_CORN, markets=["CORN"])
    qtbot.keyClicks(dialog.reason, "Corn trends on the same late followers")
    dialog.accept()
    latest = window.catalogue.preregistrations(idea_id)[-1]
    assert latest.version == versions[-1].version + 1 and "CORN" in latest.markets
    assert latest.reason == "Corn trends on the same late followers"

    with qtbot.waitSignal(window.quick_run.finished, timeout=120000) as done:
        assert window.quick_run.start() is not None
    run = window.catalogue.run(done.args[0])
    assert not run.preregistration.within and "CORN" in run.preregistration.finding
    assert "Corn trends on the same late followers" in run.preregistration.finding
    model = window.runs.model
    row = model.row_of(run.id)
    cell = model.index(row, RunTableModel.PREREG)
    assert cell.data() == "\u26a0 outside" and cell.data(3) == run.preregistration.finding
    earlier = model.index(model.row_of(runs[0].id), RunTableModel.PREREG)
    assert earlier.data() == "within"
    assert run.preregistration.finding in window.runs.results.banner.reasons.text()


def test_a_space_saved_in_the_rules_is_offered_for_amendment(qtbot, window):
    """The Idea section's own Amend button offers the latest revision's parameter space when it
    differs from the pre-registered one."""
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    wider = BREAKOUT_WIDE.replace("stop = 200", "stop = 300")
    window.catalogue.save_rules(idea_id, wider, by="Test Reviewer")
    form = window.section("idea")
    dialog = form.open_amend_dialog()
    assert dialog.space.isVisible() and dialog.space.isChecked()
    assert "n 10 to 300 step 10" in dialog.space.text()
    qtbot.keyClicks(dialog.reason, "Longer channels for the slow markets")
    dialog.accept()
    latest = window.catalogue.preregistrations(idea_id)[-1]
    assert latest.parameter_space["n"]["stop"] == 300.0


def test_two_selected_runs_open_side_by_side(qtbot, window):
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("runs")
    panel = window.runs
    first, wide = (window.catalogue.run(r.id) for r in window.catalogue.runs(idea_id))
    assert not panel.compare_button.isEnabled()
    panel.table.selectAll()
    assert panel.selected_run_ids() == [first.id, wide.id] and panel.compare_button.isEnabled()
    panel.compare_button.click()
    dialog = panel.compare_dialog
    assert dialog is not None and dialog.isVisible()
    cells = {dialog.figures.item(r, 0).text(): [dialog.figures.item(r, c).text() if
                                                dialog.figures.item(r, c) else ""
                                                for c in range(1, 5)]
             for r in range(dialog.figures.rowCount())}
    for side, run in ((1, first), (3, wide)):
        performance = run.result.chosen.performance
        assert cells["Total P&L (USD)"][side - 1] == format_value(performance.gross.total, "money")
        assert cells["Total P&L (USD)"][side] == format_value(performance.net.total, "money")
    text_a = window.catalogue.revision(first.revision_id).text
    text_b = window.catalogue.revision(wide.revision_id).text
    shown = dialog.diff.toPlainText().splitlines()
    # difflib (Python's standard library) is the reference diff
    assert shown == list(difflib.unified_diff(text_a.splitlines(), text_b.splitlines(),
                                              fromfile=dialog.comparison.names[0],
                                              tofile=dialog.comparison.names[1],
                                              lineterm=""))
    assert "background-color" in dialog.diff_html(dialog.palette())
    names = [dialog.checks.item(r, 0).text() for r in range(dialog.checks.rowCount())]
    assert names[-1] == "Pre-registration"
    assert dialog.checks.item(len(names) - 1, 1).text() == "\u2013"  # run A has no warning
    assert dialog.equity.curve_a.getData()[1][-1] == pytest.approx(
        first.daily_pnl["net_pnl"].sum())
    assert dialog.equity.curve_b.getData()[1][-1] == pytest.approx(
        wide.daily_pnl["net_pnl"].sum())


def test_a_run_of_another_idea_is_picked_to_compare(qtbot, window):
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("runs")
    shown = window.runs.current_run()
    picker = window.runs.compare_with_any()
    assert picker.isVisible() and picker.table.rowCount() == len(window.catalogue.runs())
    other = next(r for r in window.catalogue.runs() if r.idea_id != idea_id)
    qtbot.keyClicks(picker.filter, "across the book")
    visible = [r for r in range(picker.table.rowCount()) if not picker.table.isRowHidden(r)]
    assert {picker.table.item(r, 0).text() for r in visible} == {"Two-average trend across "
                                                                  "the book"}
    row = next(r for r in visible if picker.table.item(r, 1).text() == str(other.id))
    picker.table.selectRow(row)
    picker.accept()
    dialog = window.runs.compare_dialog
    assert dialog.comparison.names[0].startswith(f"run {shown.id} ")
    assert dialog.comparison.names[1].startswith(f"run {other.id} ")


def test_the_review_pack_is_exported_as_html_and_pdf(qtbot, window, tmp_path):
    idea_id = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(idea_id)
    assert window.exports.pack_action in window.menuBar().actions()[0].menu().actions()
    html, pdf = tmp_path / "pack.html", tmp_path / "pack.pdf"
    assert window.exports.export_pack(html) and window.exports.export_pack(pdf)
    page = html.read_text(encoding="utf-8")
    assert "Reviews" in page and "@media print" in page and TESTED_TITLE in page
    assert pdf.read_bytes().startswith(b"%PDF-")
    assert "pages" in window.statusBar().currentMessage()
    assert not window.exports.export_pack(tmp_path / "missing" / "pack.pdf")
    assert any("does not exist" in t for t in _error_texts(window))
