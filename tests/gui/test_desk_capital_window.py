"""The desk's capital in the window: *File ▸ Desk settings…* shows it as a number field (empty:
not set) beside the on/off settings and saves it through the catalogue with a reason; a field
that is not a positive amount keeps OK off and says why in one line; a quick run of a rule file
without ``[sizing] capital`` is then measured against it. House rule (common practice, no
source): a capital is a positive amount of money, and a desk-wide change says why."""

from __future__ import annotations

from PySide6.QtCore import Qt

from hunchbook.catalogue import Catalogue
from hunchbook.core.presenter import capital_sentence
from hunchbook.core.runners import InProcess
from hunchbook.gui.desk_settings import DeskSettingsDialog
from hunchbook.gui.workers import RunIdeaWorker
from tests.gui.desk_fixtures import ACCEPTED_TITLE, demo_catalogue_copy, short_demo_data
from tests.gui.test_workers import RULES  # no [sizing]: no capital of its own


def test_the_dialog_sets_the_desk_capital(qtbot, window) -> None:
    window.desk_settings.action.trigger()
    dialog = window.desk_settings.dialog
    assert isinstance(dialog, DeskSettingsDialog) and dialog.isVisible()
    field = dialog.amounts["capital"]
    assert field.text() == "" and field.placeholderText() == "not set"
    assert "one_person_desk" in dialog.boxes and not dialog.ok.isEnabled()
    qtbot.keyClicks(dialog.reason, "The desk's allocation for the year.")
    qtbot.keyClicks(field, "-5")
    assert not dialog.ok.isEnabled() and dialog.problem.isVisible()
    assert dialog.problem.text().startswith("capital: expected a positive amount")
    field.clear()
    qtbot.keyClicks(field, "1,000,000")
    assert dialog.ok.isEnabled() and not dialog.problem.isVisible()
    assert dialog.changes() == {"capital": 1_000_000.0}
    qtbot.mouseClick(dialog.ok, Qt.MouseButton.LeftButton)
    assert window.catalogue.desk_setting("capital") == 1_000_000.0
    assert window.catalogue.desk_setting("one_person_desk") is False  # left as it was
    latest = window.catalogue.desk_settings()[-1]
    assert (latest.key, latest.reason) == ("capital", "The desk's allocation for the year.")
    window.desk_settings.action.trigger()  # opened again: the amount in force, unset by clearing
    dialog = window.desk_settings.dialog
    assert dialog.amounts["capital"].text() == "1000000"
    dialog.amounts["capital"].clear()
    assert dialog.changes() == {"capital": None}
    dialog.reject()


def test_a_quick_run_picks_up_the_desk_capital(qtbot, tmp_path_factory, tmp_path) -> None:
    """The window's quick run goes through run_idea on its own connection: a rule file
    without a capital is measured against the desk's."""
    path = demo_catalogue_copy(tmp_path_factory, tmp_path)
    with Catalogue(path) as cat:
        idea = next(i.id for i in cat.list_ideas() if i.title == ACCEPTED_TITLE)
        cat.set_desk_setting("capital", 750_000, by="Ines", reason="The desk's allocation.")
    worker = RunIdeaWorker(path, idea, RULES, short_demo_data(tmp_path_factory),
                           by="Test Reviewer", runner=InProcess())
    with qtbot.waitSignal(worker.signals.finished, timeout=60000) as blocker:
        worker.start()
    summary = blocker.args[0].summary
    assert (summary.capital.capital, summary.capital.capital_source) == (750_000.0,
                                                                          "desk setting")
    assert "the desk's capital setting" in capital_sentence(summary)
