"""The Journal section's timeline: notes rendered from Markdown (emphasis, links opened in the
browser), HTML typed into a note shown as text, automatic entries as sentences, corrections."""

from __future__ import annotations

import pytest
from PySide6.QtCore import QUrl
from PySide6.QtGui import QDesktopServices

from hunchbook.catalogue import Catalogue
from hunchbook.gui.journal_html import markdown_html, timeline_html
from tests.gui.desk_fixtures import (
    SUBMITTED_TITLE,
    demo_catalogue_copy,
    idea_id_by_title,
    open_window,
    short_demo_data,
)

HOSTILE = "<b>x</b> and <script>alert(1)</script>"


def test_markdown_emphasis_and_links():
    # the CommonMark specification (0.31), its examples of emphasis and of an inline link with
    # a title [memory: numbers of the examples not checked]
    assert markdown_html("*foo bar*") == "<p><em>foo bar</em></p>\n"
    assert markdown_html("**foo bar**") == "<p><strong>foo bar</strong></p>\n"
    assert markdown_html("[link](/uri \"title\")") == (
        '<p><a href="/uri" title="title">link</a></p>\n')
    # a bare web address becomes a link (linkify)
    assert '<a href="https://example.org/a?b=1">' in markdown_html("see https://example.org/a?b=1")


def test_raw_html_is_shown_as_text_never_rendered():
    shown = markdown_html(HOSTILE)
    assert "<b>" not in shown and "<script" not in shown
    assert "&lt;b&gt;x&lt;/b&gt;" in shown and "&lt;script&gt;" in shown
    # unsafe link schemes stay text (markdown-it's link validation)
    assert "<a " not in markdown_html("[x](javascript:alert(1))")


@pytest.fixture
def window(qtbot, tmp_path_factory, tmp_path):
    return open_window(qtbot, demo_catalogue_copy(tmp_path_factory, tmp_path),
                       short_demo_data(tmp_path_factory))


def test_the_panel_renders_notes_and_opens_links_in_the_browser(qtbot, window, monkeypatch):
    idea_id = idea_id_by_title(window, SUBMITTED_TITLE)
    window.select_idea(idea_id)
    window.show_section("journal")
    panel = window.section("journal")
    panel.note.setPlainText("Roll dates *look* wrong: see [the calendar](https://example.org/c)."
                            f"\n\n{HOSTILE}")
    assert panel.add_note()
    html = panel.view.toHtml()
    assert 'href="https://example.org/c"' in html and "font-style:italic" in html
    shown = panel.view.toPlainText()
    assert "<b>x</b> and <script>alert(1)</script>" in shown  # as typed, as text
    assert "Roll dates look wrong: see the calendar." in shown
    assert "rationale_not_data_mined" not in shown and "{" not in shown
    opened = []
    monkeypatch.setattr(QDesktopServices, "openUrl", lambda url: opened.append(url) or True)
    panel.view.anchorClicked.emit(QUrl("https://example.org/c"))
    assert opened == [QUrl("https://example.org/c")]
    assert panel.view.source().isEmpty()  # the view itself never navigates


def test_corrected_entries_are_in_italics_with_their_correction(tmp_path):
    with Catalogue(tmp_path / "c.sqlite") as cat:
        first = cat.add_entry(idea_id=None, kind="note", text="CORN and **SOYBEAN**", by="Theo")
        cat.correct_entry(first, "CORN only", by="Theo")
        html = timeline_html(cat.journal())
    assert "<i><p>CORN and <strong>SOYBEAN</strong></p>\n</i>" in html
    assert "Corrected later:" in html and html.count("CORN only") == 2
    assert "Correction \u00b7 Theo \u00b7 corrects entry 1" in html
