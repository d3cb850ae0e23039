"""The window's sections: a section added by one module and one registration line is shown,
given the idea and kept up to date; the registry drives tabs, shortcuts and ``--section``; the
Rules section's starter template."""

from __future__ import annotations

import dataclasses
import tomllib

import pytest
from PySide6.QtCore import Qt

from hunchbook.gui.sections import registry
from hunchbook.gui.sections.rules import starter_rules
from hunchbook.store.records import Idea
from tests.gui.desk_fixtures import (
    SUBMITTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
    open_window,
)
from tests.gui.extra_section import JournalCountSection


@pytest.fixture
def window_with_extra_section(qtbot, tmp_path_factory, tmp_path, short_data, monkeypatch):
    monkeypatch.setattr(registry, "SECTIONS", [*registry.SECTIONS, JournalCountSection])
    return open_window(qtbot, demo_catalogue_copy(tmp_path_factory, tmp_path), short_data)


def test_a_registered_section_is_shown_and_given_the_idea(qtbot, window_with_extra_section):
    """The extra section gets a tab, a View shortcut (Ctrl+6) and ``--section count``; it is
    given the catalogue, the user and each idea selected; its tab text and messages reach the
    window."""
    from hunchbook.gui.app import parse_args

    window = window_with_extra_section
    section = window.section("count")
    assert isinstance(section, JournalCountSection)
    assert window.tabs.indexOf(section) == 5
    assert window.tabs.tabText(5) == "Count"
    assert section.context.catalogue is window.catalogue
    assert section.context.user == "Test Reviewer"
    assert section.context.markets == tuple(window.library)

    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    entries = len(window.catalogue.journal(idea_id))
    assert section.idea_id == idea_id and section.shown[-1] == idea_id
    assert section.label.text() == f"{entries} journal entries"
    assert window.tabs.tabText(5) == f"Count ({entries})"
    assert window.tabs.tabToolTip(5) == f"{entries} journal entries"

    view = next(a for a in window.menuBar().actions() if a.text() == "&View").menu()
    shortcut = next(a for a in view.actions() if a.text() == "Count")
    assert shortcut.shortcut().toString() == "Ctrl+6"
    shortcut.trigger()
    assert window.current_section() == "count"
    assert parse_args(["--section", "count"]).section == "count"

    section.message.emit("Counted.")
    assert window.statusBar().currentMessage() == "Counted."


def test_a_write_in_one_section_refreshes_the_others(qtbot, window_with_extra_section):
    """A note added in the Journal section reaches the extra section (``idea_updated``); the
    extra section saying it wrote refreshes the Review section but not itself."""
    window = window_with_extra_section
    section = window.section("count")
    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    journal = window.section("journal")
    qtbot.keyClicks(journal.note, "Looked at the curve slope data.")
    qtbot.mouseClick(journal.add, Qt.MouseButton.LeftButton)
    entries = len(window.catalogue.journal(idea_id))
    assert section.label.text() == f"{entries} journal entries"

    review = window.section("review")
    review.comments.setPlainText("half-written comment")
    shown = len(section.shown)
    section.idea_changed.emit(idea_id)
    assert len(section.shown) == shown  # the writer is not refreshed
    assert review.comments.toPlainText() == ""  # the Review section was shown anew


def test_the_registry_names_every_section_once():
    """Keys and tab titles are unique; ``--section`` takes exactly the registered keys."""
    from hunchbook.gui.app import parse_args

    keys = registry.section_names()
    assert keys == ("idea", "rules", "runs", "journal", "review")
    assert len({s.tab_title for s in registry.SECTIONS}) == len(keys)
    for key in keys:
        assert parse_args(["--section", key]).section == key
    with pytest.raises(SystemExit):
        parse_args(["--section", "count"])


def _idea(title: str, markets: tuple[str, ...]) -> Idea:
    blank = {field.name: None for field in dataclasses.fields(Idea)}
    return Idea(**{**blank, "id": 1, "title": title, "markets": markets})


@pytest.mark.parametrize(("title", "markets"), [
    ("Carry in grains", ("CORN", "SOYBEAN")),
    ('A "quoted" title with a back\\slash', ()),
])
def test_starter_rules_come_from_the_template(title, markets):
    """The starter rule file (``resources/starter-rules.template``) is valid TOML read back by
    the standard library's tomllib (TOML 1.0 basic-string escapes), names the idea and its
    markets, and says to name markets when the idea has none."""
    text = starter_rules(_idea(title, markets))
    doc = tomllib.loads(text)
    assert doc["name"] == title
    assert doc["markets"] == list(markets)
    assert doc["signal"]["position"] == "sign(close - mean(close, n))"
    assert ("# Name the markets this idea trades" in text) == (not markets)
    assert "$" not in text


def test_a_section_without_show_idea_is_refused_when_written(qapp) -> None:
    """The interface is checked when a section class is created, not when it is first used."""
    from hunchbook.gui.sections.base import IdeaSection

    with pytest.raises(TypeError, match="must define show_idea"):
        type("Forgetful", (IdeaSection,), {})
