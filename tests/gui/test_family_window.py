"""Families and four eyes through the real window: the family tree in the Idea section and the
"Variant of…" dialog, a bundle import carrying a family link, the review refused to its author
until the desk settings make it a one-person desk, the promotion review with its checklist, and
the catalogue's "Waiting for me" filter.

House rules (common practice, no source): a second person reviews and promotes; a family's
trials count for each member.
"""

from __future__ import annotations

from PySide6.QtCore import Qt

from hunchbook.catalogue import CHECKLIST, PROMOTION_CHECKLIST
from hunchbook.gui.desk_settings import DeskSettingsDialog
from hunchbook.gui.models import ID_ROLE, IdeaTableModel
from hunchbook.gui.widgets.family_panel import VariantDialog
from tests.gui.desk_fixtures import (
    SUBMITTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
    open_window,
)

PARENT = "Rates trend, traded slowly"
VARIANT = "Ten-year note trend with a volatility filter"
DRAFT = "Grain weather-premium fade"
TREND = "Two-average trend across the book"


def _trials_cell(window, idea_id: int) -> str:
    proxy = window.catalogue_panel.model
    for row in range(proxy.rowCount()):
        if proxy.index(row, 0).data(ID_ROLE) == idea_id:
            return proxy.index(row, IdeaTableModel.TRIALS).data()
    raise AssertionError(f"idea {idea_id} not in the table")


def _tree_rows(panel) -> list[tuple[int, list[str]]]:
    """(depth, cells) of every row of the family tree, top to bottom."""
    rows = []

    def walk(item, depth):
        rows.append((depth, [item.text(c) for c in range(item.columnCount())]))
        for k in range(item.childCount()):
            walk(item.child(k), depth + 1)

    for k in range(panel.tree.topLevelItemCount()):
        walk(panel.tree.topLevelItem(k), 0)
    return rows


def test_the_idea_section_shows_the_family_tree(qtbot, window):
    variant, parent = idea_id_by_title(window, VARIANT), idea_id_by_title(window, PARENT)
    window.select_idea(variant)
    window.show_section("idea")
    panel = window.section("idea").family
    family = window.catalogue.family(variant)
    assert _tree_rows(panel) == [
        (0, [f"{parent}  {PARENT}", "tested", "Promote", "8"]),
        (1, [f"{variant}  {VARIANT}", "tested", "No edge", "4"])]
    assert [m.own_trials for _, m in family.members()] == [8, 4] and family.trial_count == 12
    assert panel.tree.topLevelItem(0).child(0).font(0).bold()
    assert "A family of 2 ideas: 12 trials in all" in panel.summary.text()
    assert not panel.variant_button.isEnabled()
    assert "never changed" in panel.variant_button.toolTip()
    assert _trials_cell(window, variant) == _trials_cell(window, parent) == "12"
    # a double click on another member shows it
    item = panel.tree.topLevelItem(0)
    panel.tree.itemDoubleClicked.emit(item, 0)
    assert window.current_idea_id() == parent


def test_recording_a_variant_in_the_dialog(qtbot, window):
    draft, trend = idea_id_by_title(window, DRAFT), idea_id_by_title(window, TREND)
    window.select_idea(draft)
    window.show_section("idea")
    panel = window.section("idea").family
    assert panel.variant_button.isEnabled() and len(_tree_rows(panel)) == 1
    qtbot.mouseClick(panel.variant_button, Qt.MouseButton.LeftButton)
    dialog = window.findChild(VariantDialog, "variantDialog")
    assert dialog is not None and dialog.isVisible() and not dialog.ok.isEnabled()
    listed = [int(dialog.ideas.item(r).data(ID_ROLE)) for r in range(dialog.ideas.count())]
    assert draft not in listed and trend in listed
    qtbot.keyClicks(dialog.filter, "across the book")
    shown = [dialog.ideas.item(r) for r in range(dialog.ideas.count())
             if not dialog.ideas.item(r).isHidden()]
    assert [int(i.data(ID_ROLE)) for i in shown] == [trend]
    assert dialog.choose(trend) and not dialog.ok.isEnabled()  # a reason is required
    qtbot.keyClicks(dialog.reason, "Fades a seasonal premium the trend rides.")
    assert dialog.ok.isEnabled()
    qtbot.mouseClick(dialog.ok, Qt.MouseButton.LeftButton)
    link = window.catalogue.variant_link(draft)
    assert (link.parent_id, link.set_by) == (trend, "Test Reviewer")
    rows = [cells[0] for _, cells in _tree_rows(panel)]
    assert rows[0] == f"{trend}  {TREND}" and f"{draft}  {DRAFT}" in rows[1:]
    assert not panel.variant_button.isEnabled()
    # the draft no longer starts from zero trials: the family's count shows on both rows
    family = str(window.catalogue.family(trend).trial_count)
    assert _trials_cell(window, draft) == _trials_cell(window, trend) == family
    assert "trend rides" in window.catalogue.journal(draft)[-1].text


def test_a_bundle_import_in_the_window_carries_the_family_link(qtbot, window, tmp_path):
    variant, parent = idea_id_by_title(window, VARIANT), idea_id_by_title(window, PARENT)
    window.catalogue.export_bundle(variant, tmp_path / "variant.zip")
    window.catalogue.export_bundle(parent, tmp_path / "parent.zip")
    assert window.open_catalogue(tmp_path / "other-desk.sqlite")
    first = window.exports.import_bundle(tmp_path / "variant.zip", ask=False)
    assert "1 difference(s) kept" in window.statusBar().currentMessage()
    assert window.catalogue.variant_link(first) is None
    root = window.exports.import_bundle(tmp_path / "parent.zip", ask=False)
    again = window.exports.import_bundle(tmp_path / "variant.zip", ask=False)
    assert again == first and window.catalogue.variant_link(first).parent_id == root
    window.refresh_idea(first)
    window.show_section("idea")
    rows = _tree_rows(window.section("idea").family)
    assert [(depth, cells[0]) for depth, cells in rows] == [(0, f"{root}  {PARENT}"),
                                                            (1, f"{first}  {VARIANT}")]
    assert _trials_cell(window, first) == _trials_cell(window, root) == "12"


def test_the_author_does_not_review_until_the_desk_is_a_one_person_desk(
        qtbot, tmp_path_factory, tmp_path, short_data, monkeypatch):
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia Oduya-Fell")
    window = open_window(qtbot, demo_catalogue_copy(tmp_path_factory, tmp_path), short_data)
    idea = idea_id_by_title(window, SUBMITTED_TITLE)  # written by Nia
    window.select_idea(idea)
    window.show_section("review")
    panel = window.section("review")
    assert not panel.form.isVisible()
    assert "You wrote this idea: its review is made by someone else" in panel.status.text()
    assert window.tabs.tabText(window.tabs.indexOf(panel)) == "Review"
    window.desk_settings.action.trigger()
    dialog = window.desk_settings.dialog
    assert isinstance(dialog, DeskSettingsDialog) and dialog.isVisible()
    box = dialog.boxes["one_person_desk"]
    assert not box.isChecked() and not dialog.ok.isEnabled()
    box.setChecked(True)
    assert not dialog.ok.isEnabled()  # a reason is required
    qtbot.keyClicks(dialog.reason, "Ines and Theo are away this month.")
    qtbot.mouseClick(dialog.ok, Qt.MouseButton.LeftButton)
    assert window.catalogue.desk_setting("one_person_desk")
    assert panel.form.isVisible() and "One-person desk" in panel.status.text()
    for key in CHECKLIST:
        panel.checks[key].setChecked(True)
    qtbot.mouseClick(panel.accept_button, Qt.MouseButton.LeftButton)
    review = window.catalogue.reviews(idea)[-1]
    assert (review.reviewer, review.decision, review.by_author) == (
        "Nia Oduya-Fell", "accept", True)
    assert "one-person desk: reviewed by the author" in panel.history.toHtml()
    assert window.catalogue.journal(kind="decision")[-1].by == "Nia Oduya-Fell"


def test_the_promotion_review_in_the_window(qtbot, window):
    from hunchbook.demo.build import DATA_DIR, built_demo
    from hunchbook.services import unlock_holdout

    idea = idea_id_by_title(window, PARENT)  # by Nia; its last verdict says promote
    window.select_idea(idea)
    window.show_section("review")
    panel = window.section("review")
    assert window.tabs.tabText(window.tabs.indexOf(panel)) == "Review \u25cf"
    assert panel.form.isVisible() and panel.boxes["promotion"].isVisible()
    assert not panel.boxes["idea"].isVisible() and not panel.accept_button.isVisible()
    seen = panel.promotion_checks["holdout_seen"]
    assert not seen.isEnabled() and "not been unlocked" in seen.toolTip()
    for key in ("book_correlation_seen", "costs_checked"):
        panel.promotion_checks[key].setChecked(True)
    assert not panel.promote_button.isEnabled()
    assert "have not been unlocked" in panel.promote_button.toolTip()
    assert not panel.decline_button.isEnabled()
    qtbot.keyClicks(panel.comments, "Unlock the held-out year first.")
    qtbot.mouseClick(panel.decline_button, Qt.MouseButton.LeftButton)
    assert window.catalogue.reviews(idea)[-1].decision == "decline"
    assert window.catalogue.idea(idea).stage == "tested"

    unlock_holdout(window.catalogue, idea, built_demo() / DATA_DIR, by="Nia Oduya-Fell")
    window.refresh_idea(idea)
    assert seen.isEnabled()
    for key in PROMOTION_CHECKLIST:
        panel.promotion_checks[key].setChecked(True)
    assert panel.promote_button.isEnabled()
    panel.promotion_checks["costs_checked"].setChecked(False)
    assert not panel.promote_button.isEnabled()
    panel.promotion_checks["costs_checked"].setChecked(True)
    qtbot.mouseClick(panel.promote_button, Qt.MouseButton.LeftButton)
    assert window.catalogue.idea(idea).stage == "promoted"
    review = window.catalogue.reviews(idea)[-1]
    assert (review.kind, review.decision, review.reviewer) == ("promotion", "promote",
                                                               "Test Reviewer")
    assert not panel.form.isVisible()
    assert "Promoted by Test Reviewer" in panel.history.toPlainText()
    assert "Promotion declined by Test Reviewer" in panel.history.toPlainText()


def test_the_waiting_for_me_filter(qtbot, window):
    panel = window.catalogue_panel
    everything = set(panel.visible_ids())
    mine = {i.id for i in window.catalogue.list_ideas(waiting_for="Test Reviewer")}
    assert mine and mine < everything
    panel.waiting.setChecked(True)
    assert set(panel.visible_ids()) == mine
    assert panel.count.text() == f"{len(mine)} of {len(everything)} ideas"
    # reviewing one takes it off the list at once
    idea = idea_id_by_title(window, SUBMITTED_TITLE)
    assert idea in mine
    window.select_idea(idea)
    review = window.section("review")
    qtbot.keyClicks(review.comments, "Name the curve columns.")
    qtbot.mouseClick(review.return_button, Qt.MouseButton.LeftButton)
    assert idea not in panel.visible_ids()
    panel.clear_filters()
    assert not panel.waiting.isChecked() and set(panel.visible_ids()) == everything
