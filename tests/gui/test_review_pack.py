"""The review pack: the idea's rationale, pre-registration, every review in words, runs with
their flags, the chosen run in full and the journal; escaped; a print style sheet; and a PDF
written offscreen."""

from __future__ import annotations

import datetime as dt
import html
import re
import shutil
from html.parser import HTMLParser

import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.when import readable_time
from hunchbook.gui.html_book import book_section
from hunchbook.gui.journal_html import entry_html
from hunchbook.gui.review_pack import (
    SECTIONS,
    pack_from_catalogue,
    pack_html,
    print_html,
    write_pack_html,
    write_pack_pdf,
)
from tests.gui.run_records import HOSTILE_TITLE, record_runs

HOSTILE_NOTE = 'Ask <b>Ines</b> & "Theo" about </td></table><script>x()</script>'
HOSTILE_REVIEW = "Fine <i>if</i> costs < 2 ticks & the roll is right"


class _Text(HTMLParser):
    """The page's text and its tags, read by the standard library's HTML parser."""

    def __init__(self) -> None:
        super().__init__()
        self.text: list[str] = []
        self.tags: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


@pytest.fixture(scope="module")
def desk(tmp_path_factory):
    """The report tests' idea (hostile title, two runs, the second outside version 1) with a
    returned-then-accepted story: two reviews and hostile notes."""
    recorded = record_runs(tmp_path_factory.mktemp("pack"))
    path = recorded.path.with_name("pack.sqlite")
    shutil.copyfile(recorded.path, path)
    with Catalogue(path) as cat:
        cat.add_entry(idea_id=recorded.idea.id, kind="note", text=HOSTILE_NOTE, by="Theo")
        other = cat.add_idea(title="Second idea", hypothesis="h", submitted_by="Nia",
                             stage="submitted")
        cat.review(other, reviewer="Ines", decision="return", comments=HOSTILE_REVIEW,
                   checklist={k: k != "markets_named" for k in CHECKLIST})
    return recorded, path


@pytest.fixture(scope="module")
def pack(desk, qapp):
    """The idea's pack with its charts (drawn offscreen by the Qt application)."""
    recorded, path = desk
    with Catalogue(path, read_only=True) as cat:
        return pack_from_catalogue(cat, recorded.idea.id, prepared=dt.datetime(
            2025, 3, 4, 9, 15, tzinfo=dt.UTC))


def _parsed(page: str) -> _Text:
    parser = _Text()
    parser.feed(page)
    return parser


def test_the_pack_holds_rationale_reviews_runs_and_journal(pack) -> None:
    page = pack_html(pack)
    text = "".join(_parsed(page).text)
    assert pack.idea.rationale in text and pack.idea.hypothesis in text
    review = pack.reviews[0]
    assert f"Accepted for testing by {review.reviewer} on {readable_time(review.at)}" in text
    for question in CHECKLIST.values():  # every answer in words, beside its question
        assert f"Yes \u2014 {question}" in text
    assert "Comments: Go." in text
    for entry in pack.journal:  # every entry, in words (rendered), with a readable time
        assert entry_html(entry) in page
        assert readable_time(entry.at) in text
    assert not re.search(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d", text)  # no raw timestamps
    assert [r.id for r in pack.runs] == [pack.runs[0].id, pack.run.id]
    assert "OUTSIDE" in text and pack.run.preregistration.finding in text
    assert "Prepared 2025-03-04 09:15" in text
    table = re.search(r'<table class="prereg">.*?</table>', page).group(0)
    versions = re.findall(r"<tr><td>(\d)</td><td>", table)
    assert versions == ["1", "2"]  # both pre-registration versions, with the amendment's reason
    assert "A one-parameter channel rule is simpler to judge" in text
    # the comparison with the book, as the run report shows it (the section's own renderer)
    assert "Against the book" in text and book_section(pack.run) in page


def test_catalogue_text_is_escaped(pack) -> None:
    page = pack_html(pack)
    parsed = _parsed(page)
    assert "script" not in parsed.tags and "b" not in [t for t in parsed.tags if t == "i"]
    assert HOSTILE_TITLE in "".join(parsed.text) and HOSTILE_NOTE in "".join(parsed.text)
    assert html.escape(HOSTILE_NOTE, quote=True) in page


def test_a_returned_review_reads_as_no_with_its_comments(desk) -> None:
    _, path = desk
    with Catalogue(path, read_only=True) as cat:
        other = next(i.id for i in cat.list_ideas() if i.title == "Second idea")
        page = pack_html(pack_from_catalogue(cat, other, charts=False))
    text = "".join(_parsed(page).text)
    assert f"No \u2014 {CHECKLIST['markets_named']}" in text
    assert "Returned with comments by Ines" in text and HOSTILE_REVIEW in text
    assert "No run yet." in text and "Not pre-registered yet" in text


def test_the_print_style_sheet_breaks_pages_and_keeps_tables_whole(pack) -> None:
    """CSS 2.1 paged media (section 13.3 [memory]): page-break-before/-inside; the print
    block leaves nothing interactive (links print as text)."""
    page = pack_html(pack)
    media = re.search(r"@media print \{(.*?)\n\}", page, flags=re.DOTALL).group(1)
    assert "h2.major { page-break-before: always" in media
    assert re.search(r"table, figure, [^{]*tr \{ page-break-inside: avoid", media)
    assert "thead { display: table-header-group" in media
    majors = re.findall(r'<h2 class="major">([^<]+)</h2>', page)
    assert majors[:2] == ["Pre-registration", "Runs"] and "Journal" in majors
    # for Qt's rich-text engine the print rules are unwrapped and the breaks made inline
    printed = print_html(page)
    assert "@media" not in printed and "page-break-before: always" in printed
    assert printed.count('style="page-break-before: always"') == len(majors)


def test_sections_render_from_one_list(pack) -> None:
    """A new section is one entry of SECTIONS (the comparison with the book joins there)."""
    page = pack_html(pack)
    titles = [title for title, _, render in SECTIONS if render(pack) is not None]
    assert re.findall(r"<h2[^>]*>([^<]+)</h2>", page) == titles


def test_the_pdf_is_written_offscreen_with_pages_and_charts(pack, tmp_path) -> None:
    path = tmp_path / "pack.pdf"
    pages = write_pack_pdf(path, pack)
    data = path.read_bytes()
    assert data.startswith(b"%PDF-")  # ISO 32000-1 (PDF 1.7), 7.5.2 file header [memory]
    # each page object is /Type /Page (same, 7.7.3.3) [memory]; the charts are images
    assert len(re.findall(rb"/Type\s*/Page\b", data)) == pages > 5
    assert len(re.findall(rb"/Subtype\s*/Image", data)) >= len(pack.images) > 0
    assert not list(tmp_path.glob(".*partial"))
    html_path = tmp_path / "pack.html"
    write_pack_html(html_path, pack)
    assert html_path.read_text(encoding="utf-8") == pack_html(pack)


def test_a_pack_for_a_missing_folder_is_one_clear_error(pack, tmp_path) -> None:
    from hunchbook.core.errors import HunchbookError

    with pytest.raises(HunchbookError, match="does not exist"):
        write_pack_pdf(tmp_path / "missing" / "pack.pdf", pack)
    with pytest.raises(HunchbookError, match="could not write it"):
        write_pack_html(tmp_path / "missing" / "pack.html", pack)


def test_the_run_report_flags_a_run_outside_the_pre_registration(desk) -> None:
    from hunchbook.gui.html_report import report_html

    recorded, _ = desk
    outside = report_html(idea=recorded.idea, run=recorded.one, rule_text="", images={})
    within = report_html(idea=recorded.idea, run=recorded.two, rule_text="", images={})
    finding = recorded.one.preregistration.finding
    assert '<p class="flag"><strong>Flagged.</strong> ' + html.escape(finding) in outside
    assert 'class="flag"' not in within
    assert "within the pre-registration frozen at the first run (version 1 in force)" in within
