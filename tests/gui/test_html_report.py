"""The exported HTML report: self-contained, escaped, complete, written atomically."""

from __future__ import annotations

import base64
import dataclasses
import html
import re
from html.parser import HTMLParser

import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.verdict import LABELS
from hunchbook.gui.html_report import CAUTION
from hunchbook.gui.widgets.results_view import ResultsView
from tests.gui.run_records import HOSTILE_TITLE, TWO_PARAMETER_RULES, record_runs

#: First bytes of every PNG file (PNG specification, section 5.2 "PNG signature").
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


class _Tags(HTMLParser):
    """Start tags and attributes of a page, read by the standard library's HTML parser."""

    def __init__(self) -> None:
        super().__init__()
        self.tags: list[tuple[str, dict[str, str | None]]] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """A catalogue with one idea and two recorded runs (2015-2019 invented demo data)."""
    return record_runs(tmp_path_factory.mktemp("report"))


@pytest.fixture
def view(qtbot):
    widget = ResultsView()
    qtbot.addWidget(widget)
    return widget


@pytest.fixture
def report(view, runs, tmp_path):
    """The report of the two-parameter run, exported to a file, and its text."""
    path = tmp_path / "report.html"
    view.export_html(path, idea=runs.idea, run=runs.two, rule_text=TWO_PARAMETER_RULES)
    return path, path.read_text(encoding="utf-8")


def _images(text: str) -> list[bytes]:
    return [base64.b64decode(b) for b in
            re.findall(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', text)]


def test_report_carries_the_verdict_statistics_and_caution(report, runs):
    """Verdict label, action and reasons, the statistics, provenance and the caution."""
    _, text = report
    run = runs.two
    assert LABELS[run.result.verdict.outcome] in text
    for reason in run.result.verdict.reasons:
        assert html.escape(reason) in text
    assert html.escape(CAUTION) in text
    assert run.data_fingerprint in text and run.engine_version in text
    # the time as people read it, one format (ISO 8601 date, then hours:minutes in UTC)
    assert run.recorded_at not in text
    assert f"{run.recorded_at[:10]} {run.recorded_at[11:16]}" in text
    assert "Deflated Sharpe" in text and "Effective trials" in text
    # every check of the verdict, in order, with its figure and finding
    checks = text[text.index('<table class="checks">'):]
    positions = [checks.index(html.escape(c.finding)) for c in run.result.verdict.checks]
    assert positions == sorted(positions) and len(positions) >= 8
    assert all(f"<td>{html.escape(c.figure)}</td>" in text for c in run.result.verdict.checks)
    assert f"{100 * run.result.statistics.dsr:.1f} %" in text
    for m in run.result.chosen.markets:
        assert f"<td>{m.market}</td>" in text
        assert f"{m.net_total:,.0f}" in text
    assert html.escape(runs.idea.hypothesis) in text and html.escape(runs.idea.rationale) in text


def test_report_escapes_user_text(report, runs):
    """The title's script tag and the rule file's < and & arrive as text, not markup."""
    _, text = report
    assert "<script" not in text.lower()
    assert html.escape(HOSTILE_TITLE) in text
    assert html.escape(TWO_PARAMETER_RULES) in text
    assert "fast &lt; slow &amp; both" in text
    parser = _Tags()
    parser.feed(text)
    tags = [tag for tag, _ in parser.tags]
    assert "script" not in tags
    # the only external references are the embedded images' data URIs
    sources = [attrs.get("src") for tag, attrs in parser.tags if "src" in attrs]
    assert sources and all(s.startswith("data:image/png;base64,") for s in sources)
    assert not any(tag == "link" for tag in tags)


def test_report_embeds_every_chart_as_a_png(report):
    """Equity, drawdown, heatmap, per-market and cost charts decode to PNG files."""
    _, text = report
    images = _images(text)
    assert len(images) == 5
    for image in images:
        assert image.startswith(PNG_SIGNATURE)
        assert len(image) > 2000  # a drawn chart, not an empty picture


def test_report_of_an_old_record_still_writes(view, runs, tmp_path):
    """A run recorded by an earlier version in another shape, without daily P&L, gives a
    report with its outcome, the note why no figures show, and no charts."""
    old = dataclasses.replace(runs.one, result=None, daily_pnl=None, verdict_label="no_edge")
    path = tmp_path / "old.html"
    view.export_html(path, idea=runs.idea, run=old, rule_text="")
    text = path.read_text(encoding="utf-8")
    assert LABELS["no_edge"] in text and "earlier version" in text
    assert _images(text) == []


def test_export_replaces_a_file_whole_and_leaves_no_temporary_file(view, runs, tmp_path):
    """An existing report is replaced whole; only the report is left in the folder."""
    path = tmp_path / "report.html"
    path.write_text("old contents " * 100_000, encoding="utf-8")
    view.export_html(path, idea=runs.idea, run=runs.one, rule_text="rules")
    text = path.read_text(encoding="utf-8")
    assert text.startswith("<!DOCTYPE html>") and "old contents" not in text
    assert text.rstrip().endswith("</html>")
    assert [p.name for p in tmp_path.iterdir()] == ["report.html"]


def test_export_to_a_missing_folder_is_a_clear_error(view, runs, tmp_path):
    """Writing into a folder that does not exist raises HunchbookError naming the file."""
    target = tmp_path / "missing" / "report.html"
    with pytest.raises(HunchbookError, match="report.html"):
        view.export_html(target, idea=runs.idea, run=runs.two, rule_text="x")
    assert not target.parent.exists()


def test_report_says_which_markets_changed_since_the_last_run(runs):
    """The provenance list says the markets the test planted as changed, "not recorded" for a
    run without per-market digests, and nothing changed for a run whose data did not."""
    from hunchbook.core.data_changes import DataChanges
    from hunchbook.gui.html_report import record_html

    assert runs.two.result.market_fingerprints is not None
    changes = DataChanges(since_run=runs.one.id, changed=("CORN", "GOLD"))
    changed = dataclasses.replace(runs.two, result=dataclasses.replace(
        runs.two.result, data_changes=changes))
    text = record_html(changed, recorded_at="now")
    assert (f"<dd>Data changed since run {runs.one.id}: CORN, GOLD (prices differ).</dd>"
            in text)
    assert "<dd>no market changed (or a first run)</dd>" in record_html(runs.two,
                                                                        recorded_at="now")
    old = dataclasses.replace(runs.two, result=dataclasses.replace(
        runs.two.result, market_fingerprints=None))
    assert "<dd>not recorded</dd>" in record_html(old, recorded_at="now")
