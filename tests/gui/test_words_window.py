"""The window's words: a new idea starts with valid rules naming its markets (and no other
idea's fields), an idea without runs says what to do next, the catalogue's headers say what
they show, a refused quick run gives the stage's own advice."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QDialogButtonBox

from hunchbook.core.rules import parse_rules
from hunchbook.gui.models import IdeaTableModel
from hunchbook.gui.widgets.new_idea import NewIdeaDialog
from hunchbook.store.vocab import RUN_ADVICE
from tests.gui.desk_fixtures import (
    ACCEPTED_TITLE,
    SUBMITTED_TITLE,
    TESTED_TITLE,
    idea_id_by_title,
)


def test_a_new_idea_starts_with_valid_rules_naming_its_markets(qtbot, window):
    window.select_idea(idea_id_by_title(window, TESTED_TITLE))  # another idea's rules first
    window.show_section("rules")
    window.new_idea_action.trigger()
    dialog = window.findChild(NewIdeaDialog)
    ok = dialog.buttons.button(QDialogButtonBox.StandardButton.Ok)
    qtbot.keyClicks(dialog.title, "Grain basis carry")
    qtbot.keyClicks(dialog.hypothesis, "Wide basis means the curve pays to hold.")
    assert not ok.isEnabled()  # no market ticked yet
    corn = dialog.market_list.findItems("CORN", Qt.MatchFlag.MatchExactly)[0]
    corn.setCheckState(Qt.CheckState.Checked)
    assert ok.isEnabled() and dialog.markets() == ("CORN",)
    qtbot.mouseClick(ok, Qt.MouseButton.LeftButton)
    idea = window.catalogue.idea(window.current_idea_id())
    assert list(idea.markets) == ["CORN"]
    spec = parse_rules(window.rules.text())  # valid from the start
    assert spec.markets == ("CORN",) and spec.name == "Grain basis carry"
    form = window.rules.editor.form
    assert not form.is_out_of_date() and form.name_edit.text() == "Grain basis carry"


def test_loaded_rules_with_an_error_show_none_of_the_last_ideas_fields(window):
    first = idea_id_by_title(window, TESTED_TITLE)
    window.select_idea(first)
    window.show_section("rules")
    assert window.rules.editor.form.name_edit.text()  # the tested idea's name is shown
    window.rules.editor.set_text('name = "Broken\nmarkets = ["CORN"]\n')
    form = window.rules.editor.form
    assert form.name_edit.text() == "" and form.is_out_of_date()


def test_an_idea_without_runs_says_what_to_do_next(window):
    accepted = idea_id_by_title(window, ACCEPTED_TITLE)
    window.select_idea(accepted)
    window.show_section("runs")
    runs = window.section("runs")
    assert runs.next_step.isVisibleTo(runs) and not runs.splitter.isVisibleTo(runs)
    text = runs.next_step.text()
    assert "accepted" in text and RUN_ADVICE["accepted"] in text and "Ctrl+R" in text
    window.select_idea(idea_id_by_title(window, SUBMITTED_TITLE))
    assert RUN_ADVICE["submitted"] in runs.next_step.text()
    window.select_idea(idea_id_by_title(window, TESTED_TITLE))  # has runs: the results
    assert runs.splitter.isVisibleTo(runs) and not runs.next_step.isVisibleTo(runs)


def test_a_quick_run_on_a_submitted_idea_gives_that_stages_advice(window):
    window.select_idea(idea_id_by_title(window, SUBMITTED_TITLE))
    assert window.quick_run.start() is None
    assert RUN_ADVICE["submitted"] in window.last_error
    assert "submit it for review" not in window.last_error


def test_the_catalogue_headers_say_net_sharpe(window):
    model = window.catalogue_panel.model
    header = model.headerData(IdeaTableModel.SHARPE, Qt.Orientation.Horizontal)
    tip = model.headerData(IdeaTableModel.SHARPE, Qt.Orientation.Horizontal,
                           Qt.ItemDataRole.ToolTipRole)
    assert "Net" in header and "Net Sharpe ratio" in tip
    table = window.catalogue_panel.table
    widths = [table.columnWidth(c) for c in range(model.columnCount())]
    # the title gets the room the other columns do not need
    assert widths[IdeaTableModel.TITLE] > widths[IdeaTableModel.VERDICT]
