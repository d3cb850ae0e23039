"""The review pack: one idea as a complete document for a committee, in HTML (printable) and
PDF.

The pack holds the idea and its rationale, every pre-registration version, every review
(checklist answers in words, comments, reviewer, date), the list of runs with their flags, the
chosen run in full (verdict and checks, figures, statistics, the held-out years, charts,
markets, parameter sets, rule file and record) and the whole journal. Sections are rendered in
the order of :data:`SECTIONS`: adding one is a function and one line there (the comparison with
the book, ``RunSummary.book``, follows the held-out years).

The page is the run report's (:mod:`hunchbook.gui.html_report`: its styles and tables) with a
print style sheet: page breaks before the big sections, tables and charts kept whole, nothing
interactive. The PDF is the same page laid out by Qt's rich-text engine and printed to PDF
(``QTextDocument.print_`` on a ``QPrinter`` in ``PdfFormat``): no browser engine, no display.
Every text from the catalogue is escaped.
"""

from __future__ import annotations

import base64
import datetime as dt
import os
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from hunchbook.catalogue import Catalogue
from hunchbook.core import formats
from hunchbook.core.atomic import write_atomically
from hunchbook.core.errors import HunchbookError
from hunchbook.core.formats import plural
from hunchbook.core.prereg import describe_space
from hunchbook.core.presenter import market_table, set_table
from hunchbook.core.verdict import CAUTION
from hunchbook.gui.charts.run_figures import (
    format_params,
    performance_rows,
    statistic_rows,
    verdict_text,
)
from hunchbook.gui.html_book import book_section
from hunchbook.gui.html_capital import capital_section
from hunchbook.gui.html_parts import escaped as _e
from hunchbook.gui.html_parts import table_html as _table
from hunchbook.gui.html_report import (
    _STYLE,
    CAPTIONS,
    _checks_table,
    _figures_table,
    _holdout_section,
    _idea_section,
    record_html,
    render_chart_images,
)
from hunchbook.gui.journal_html import entry_html
from hunchbook.store.entry_text import kind_label
from hunchbook.store.records import (
    Entry,
    HoldoutView,
    Idea,
    Preregistration,
    Review,
    RunRecord,
)
from hunchbook.store.vocab import CHECKLIST

#: Width of each chart in the pack: the page's width in a browser; in the PDF, in the
#: rich-text engine's pixels (96 a inch on most screens), a little less than the printable
#: width of A4 (about 7.1 inches).
PDF_IMAGE_WIDTH = 640
#: Height of the PDF's page footer (inches).
FOOTER_INCHES = 0.25

#: The print style sheet (and the pack's own styles).
PACK_STYLE = """
.ok { color: #26804a; } .outside { color: #9a6f00; font-weight: bold; }
p.figcaption { color: #666; font-size: 0.9em; }
table.runs td, table.runs th, table.journal td, table.journal th { vertical-align: top; }
table.journal td.when { white-space: nowrap; color: #555; }
.review { border: 1px solid #ddd; border-radius: 4px; padding: 0.4em 0.9em; margin: 0.6em 0; }
.answer-yes { color: #26804a; font-weight: bold; } .answer-no { color: #b02a2a;
  font-weight: bold; }
figure img { width: 100%; height: auto; }
@media print {
  body { max-width: none; margin: 0; padding: 0; font-size: 10pt; }
  table { font-size: 8.5pt; }
  th { white-space: nowrap; }
  a { color: inherit; text-decoration: none; }
  h2.major { page-break-before: always; break-before: page; }
  h2, h3 { page-break-after: avoid; break-after: avoid; }
  table, figure, .review, .verdict, pre, tr { page-break-inside: avoid; break-inside: avoid; }
  thead { display: table-header-group; }
  pre { white-space: pre-wrap; overflow: visible; }
  img { max-width: 100%; border: none; }
  [title] { text-decoration: none; }
}
@page { size: A4; margin: 16mm 14mm; }
"""


@dataclass(frozen=True)
class ReviewPack:
    """What the pack shows, read from the catalogue.

    ``run`` is the run shown in full (daily P&L decoded; None when the idea has no run) with
    its ``rule_text``, ``images`` its charts (PNG bytes by name) and ``held_out`` the idea's
    unlocking of its held-out years; ``prepared`` when the pack was made (None: not said).
    """

    idea: Idea
    preregistrations: tuple[Preregistration, ...]
    reviews: tuple[Review, ...]
    runs: tuple[RunRecord, ...]
    journal: tuple[Entry, ...]
    run: RunRecord | None = None
    rule_text: str = ""
    held_out: HoldoutView | None = None
    images: dict[str, bytes] = field(default_factory=dict)
    prepared: dt.datetime | None = None


def pack_from_catalogue(catalogue: Catalogue, idea_id: int, *, run_id: int | None = None,
                        prepared: dt.datetime | None = None,
                        charts: bool = True) -> ReviewPack:
    """Read an idea's pack (``run_id``: the run shown in full, default the latest; ``charts``
    draws its charts offscreen).

    Raises
    ------
    HunchbookError
        No such idea, or ``run_id`` is not one of its runs.
    """
    idea = catalogue.idea(idea_id)
    runs = tuple(catalogue.runs(idea.id))
    run = None
    if run_id is not None or runs:
        chosen = run_id if run_id is not None else runs[-1].id
        run = catalogue.run(chosen)
        if run.idea_id != idea.id:
            raise HunchbookError(f"run {chosen} is a run of idea {run.idea_id}, not of idea "
                                 f"{idea.id}")
    held_out = catalogue.holdout_view(idea.id)
    return ReviewPack(
        idea=idea, preregistrations=tuple(catalogue.preregistrations(idea.id)),
        reviews=tuple(catalogue.reviews(idea.id)), runs=runs,
        journal=tuple(catalogue.journal(idea.id)), run=run,
        rule_text=catalogue.revision(run.revision_id).text if run is not None else "",
        held_out=held_out,
        images=render_chart_images(run, held_out) if run is not None and charts else {},
        prepared=prepared)


def ensure_application() -> object:
    """The running Qt application, or a new one (the command line makes the pack without a
    window; keep the returned object while the pack is made)."""
    from PySide6.QtWidgets import QApplication

    return QApplication.instance() or QApplication(["hunchbook"])


# -- sections -------------------------------------------------------------------------------
#: A section of the pack: its heading, whether it starts a new printed page, and the function
#: that renders its body (None: the section is left out).
Section = tuple[str, bool, Callable[[ReviewPack], str | None]]


def _summary(pack: ReviewPack) -> str:
    idea, run = pack.idea, pack.run
    lines = [f"Idea {idea.id}, stage <strong>{_e(idea.stage)}</strong>; "
             f"{plural(len(pack.runs), 'run')}, {plural(idea.trial_count, 'trial')} counted; "
             f"{plural(len(pack.reviews), 'review')}; "
             f"{plural(len(pack.journal), 'journal entry', 'journal entries')}."]
    if run is not None:
        verdict = verdict_text(run)
        lines.append(f"Latest verdict shown here (run {run.id}): <strong>"
                     f"{_e(verdict.label)}</strong>. {_e(verdict.action)}")
    outside = [r for r in pack.runs if r.preregistration is not None
               and not r.preregistration.within]
    if outside:
        lines.append('<span class="outside">' + _e(
            f"{len(outside)} run(s) lie outside the pre-registration frozen at the first run "
            f"(runs {', '.join(str(r.id) for r in outside)}); each was allowed by an amendment "
            "with a reason, listed below.") + "</span>")
    elif pack.runs:
        lines.append('<span class="ok">Every checked run lies within the pre-registration '
                     "frozen at the first run.</span>")
    if pack.held_out is not None:
        lines.append(_e(f"The held-out years were unlocked once, by {pack.held_out.seen_by} "
                        f"on {formats.moment(pack.held_out.seen_at)}."))
    return "".join(f"<p>{line}</p>" for line in lines)


def _idea(pack: ReviewPack) -> str:
    return _idea_section(pack.idea)


def _preregistration(pack: ReviewPack) -> str:
    if not pack.preregistrations:
        return ("<p>Not pre-registered yet: the first run freezes the rationale, markets and "
                "parameter space.</p>")
    rows = "".join(
        f"<tr><td>{p.version}</td><td>{_e(formats.moment(p.frozen_at))}</td>"
        f"<td>{_e(p.frozen_by)}</td><td>{_e(', '.join(p.markets) or '(none)')}</td>"
        f"<td>{_e(describe_space(p.parameter_space))}</td>"
        f"<td>{_e('frozen at the first run' if p.version == 1 else p.reason)}</td></tr>"
        for p in pack.preregistrations)
    first, last = pack.preregistrations[0], pack.preregistrations[-1]
    rationale = ("" if last.rationale == first.rationale else
                 f"<p>Rationale as first registered:</p><blockquote>{_e(first.rationale)}"
                 "</blockquote>")
    return ('<table class="prereg"><thead><tr><th>Version</th><th>When</th><th>By</th>'
            "<th>Markets</th><th>Parameter space</th><th>Reason</th></tr></thead>"
            f"<tbody>{rows}</tbody></table>{rationale}")


def _reviews(pack: ReviewPack) -> str:
    if not pack.reviews:
        return "<p>No review yet.</p>"
    blocks = []
    for review in pack.reviews:
        answers = "".join(
            f'<li><span class="answer-{"yes" if review.checklist.get(key) else "no"}">'
            f'{"Yes" if review.checklist.get(key) else "No"}</span> \u2014 {_e(question)}</li>'
            for key, question in CHECKLIST.items())
        decision = {"accept": "Accepted for testing", "return": "Returned with comments"}.get(
            review.decision, review.decision)
        comments = review.comments or "(no comments)"
        blocks.append(
            f'<div class="review"><p><strong>{_e(decision)}</strong> by '
            f"{_e(review.reviewer)} on {_e(formats.moment(review.at))}.</p>"
            f"<ul>{answers}</ul><p>Comments: {_e(comments)}</p></div>")
    return "".join(blocks)


def _runs(pack: ReviewPack) -> str:
    if not pack.runs:
        return "<p>No run yet.</p>"
    rows = []
    for run in pack.runs:
        prereg = run.preregistration
        flag = ("not checked" if prereg is None else "within" if prereg.within
                else "OUTSIDE")
        css = "outside" if flag == "OUTSIDE" else "ok"
        sharpe = "" if run.chosen_net_sharpe is None else f"{run.chosen_net_sharpe:.2f}"
        rows.append(
            f"<tr><td>{run.id}</td><td>{_e(formats.date(run.recorded_at))}</td>"
            f"<td>{run.revision_number}</td><td>{run.set_count}</td>"
            f"<td>{_e(format_params(dict(run.chosen_params)))}</td>"
            f'<td class="num">{sharpe}</td><td>{_e(verdict_text(run).label)}</td>'
            f'<td class="num">{run.trial_count}</td><td class="{css}">{flag}</td></tr>')
    findings = "".join(f"<li>Run {r.id}: {_e(r.preregistration.finding)}</li>"
                       for r in pack.runs if r.preregistration is not None
                       and not r.preregistration.within)
    return ('<table class="runs"><thead><tr><th>Run</th><th>Date</th><th>Rev.</th>'
            '<th>Sets</th><th>Chosen set</th><th class="num">Net Sharpe</th><th>Verdict</th>'
            '<th class="num">Trials</th><th>Pre-registration</th></tr></thead><tbody>'
            + "".join(rows) + "</tbody></table>"
            + (f'<div class="flag"><p>Outside the pre-registration frozen at the first run:'
               f"</p><ul>{findings}</ul></div>" if findings else ""))


def _verdict(pack: ReviewPack) -> str | None:
    run = pack.run
    if run is None:
        return None
    verdict = verdict_text(run)
    reasons = "".join(f"<li>{_e(r)}</li>" for r in verdict.reasons)
    return (f'<p>Run {run.id} of {_e(formats.moment(run.recorded_at))} by '
            f"{_e(run.recorded_by)}; rule revision {run.revision_number}; chosen set "
            f"{_e(format_params(dict(run.chosen_params)))}.</p>"
            f'<div class="verdict {_e(verdict.outcome)}"><div class="label">'
            f"{_e(verdict.label)}</div><p><strong>{_e(verdict.action)}</strong></p>"
            f"<ul>{reasons}</ul>{_checks_table(verdict.checks)}</div>")


def _figures(pack: ReviewPack) -> str | None:
    run = pack.run
    if run is None or run.result is None:
        return None
    notes = "".join(f"<p>{_e(n)}</p>" for n in run.result.statistics.notes)
    return ("<h3>Chosen set over its whole history</h3>"
            + _figures_table(performance_rows(run)) + capital_section(run)
            + "<h3>How far to trust it (days all sets share)</h3>"
            + _figures_table(statistic_rows(run), explained=True) + notes)


def _held_out(pack: ReviewPack) -> str | None:
    return None if pack.run is None else _holdout_section(pack.run, pack.held_out)


def _charts(pack: ReviewPack) -> str | None:
    if not pack.images:
        return None
    return "".join(
        f'<figure><img alt="{_e(name)} chart" width="{PDF_IMAGE_WIDTH}" '
        f'src="data:image/png;base64,{base64.b64encode(png).decode("ascii")}">'
        f"<figcaption>{_e(CAPTIONS.get(name, ''))}</figcaption></figure>"
        for name, png in pack.images.items())


def _tables(pack: ReviewPack) -> str | None:
    result = pack.run.result if pack.run is not None else None
    if result is None:
        return None
    return ("<h3>Markets</h3>" + _table(market_table(result), "No per-market figures were "
                                        "recorded for this run.")
            + "<h3>Parameter sets</h3>" + _table(set_table(result), "No parameter sets "
                                                 "were recorded for this run."))


def _rule_file(pack: ReviewPack) -> str | None:
    return None if pack.run is None else f"<pre>{_e(pack.rule_text)}</pre>"


def _journal(pack: ReviewPack) -> str:
    if not pack.journal:
        return "<p>The journal is empty.</p>"
    rows = []
    for entry in pack.journal:
        note = ""
        if entry.corrects:
            note += f" (corrects entry {entry.corrects})"
        if entry.corrected_by:
            note += f" (corrected by entry {entry.corrected_by})"
        rows.append(f'<tr><td class="when">{_e(formats.moment(entry.at))}</td>'
                    f"<td>{_e(entry.by)}</td><td>{_e(kind_label(entry.kind))}</td>"
                    f'<td><div class="text">{entry_html(entry)}</div>{_e(note)}</td></tr>')
    return ('<table class="journal"><thead><tr><th>When</th><th>Who</th><th>Kind</th>'
            "<th>Entry</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _record(pack: ReviewPack) -> str | None:
    run = pack.run
    if run is None:
        return None
    return f"<dl>{record_html(run, recorded_at=formats.moment(run.recorded_at))}</dl>"


def _book(pack: ReviewPack) -> str | None:
    return None if pack.run is None else book_section(pack.run)


#: The pack's sections in order.
SECTIONS: list[Section] = [
    ("Summary", False, _summary),
    ("Idea and rationale", False, _idea),
    ("Pre-registration", True, _preregistration),
    ("Reviews", False, _reviews),
    ("Runs", True, _runs),
    ("Verdict of the run shown", True, _verdict),
    ("Figures", True, _figures),
    ("Held-out years", False, _held_out),
    ("Against the book", False, _book),
    ("Charts", True, _charts),
    ("Markets and parameter sets", True, _tables),
    ("Rule file", True, _rule_file),
    ("Journal", True, _journal),
    ("Run record", False, _record),
]


def pack_html(pack: ReviewPack) -> str:
    """The pack as one self-contained HTML page."""
    idea = pack.idea
    prepared = ("" if pack.prepared is None else
                f" Prepared {_e(formats.moment(pack.prepared.isoformat()))}.")
    body = []
    for title, new_page, render in SECTIONS:
        html = render(pack)
        if html is None:
            continue
        css = ' class="major"' if new_page else ""
        body.append(f"<section><h2{css}>{_e(title)}</h2>\n{html}</section>")
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{_e(f"Review pack: {idea.title}")}</title>
<style>{_STYLE}{PACK_STYLE}</style>
</head>
<body>
<h1>{_e(idea.title)}</h1>
<p class="meta">Review pack of idea {idea.id}, submitted by {_e(idea.submitted_by)}.{prepared}
</p>
{"".join(body)}
<p class="caution">{_e(CAUTION)}</p>
</body>
</html>
"""


def write_pack_html(path: str | os.PathLike[str], pack: ReviewPack) -> None:
    """Write the pack as HTML, atomically.

    Raises
    ------
    HunchbookError
        The folder is missing or the file cannot be written.
    """
    target = Path(path)
    try:
        write_atomically(target, pack_html(pack).encode("utf-8"))
    except OSError as exc:
        raise HunchbookError(f"review pack '{target}': could not write it "
                             f"({exc.strerror or exc})") from None


def print_html(html: str) -> str:
    """The page as Qt's rich-text engine lays it out for print: the print style sheet applied
    (that engine reads no ``@media`` block, so its rules are unwrapped), the major headings
    starting a page, tables as wide as the page."""
    html = html.replace('<h2 class="major">', '<h2 class="major" style="page-break-before: '
                                               'always">')
    html = re.sub(r"<table(?=[ >])", '<table width="100%" cellspacing="0" cellpadding="3"',
                  html)
    for tag, block in (("figure", "div"), ("figcaption", "p")):  # tags it does not know
        html = html.replace(f"<{tag}>", f'<{block} class="{tag}">').replace(
            f"</{tag}>", f"</{block}>")
    return re.sub(r"@media print \{(.*?)\n\}\n", r"\1\n", html, flags=re.DOTALL)


def write_pack_pdf(path: str | os.PathLike[str], pack: ReviewPack) -> int:
    """Print the pack to a PDF file (A4, a footer with the title and page numbers) through
    Qt's printing support and return its page count. Needs a Qt application (offscreen is
    enough: :func:`ensure_application`).

    Raises
    ------
    HunchbookError
        The folder is missing or the file cannot be written.
    """
    from PySide6.QtCore import QMarginsF, QRectF, QSizeF, Qt
    from PySide6.QtGui import (
        QFont,
        QGuiApplication,
        QPageLayout,
        QPageSize,
        QPainter,
        QTextDocument,
    )
    from PySide6.QtPrintSupport import QPrinter

    target = Path(path)
    if not target.parent.is_dir():
        raise HunchbookError(f"review pack '{target}': the folder does not exist")
    partial = target.with_name(f".{target.name}.partial")
    printer = QPrinter(QPrinter.PrinterMode.HighResolution)
    printer.setOutputFormat(QPrinter.OutputFormat.PdfFormat)
    printer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4),
                                      QPageLayout.Orientation.Portrait,
                                      QMarginsF(14, 14, 14, 12), QPageLayout.Unit.Millimeter))
    printer.setDocName(f"Review pack: {pack.idea.title}")
    printer.setOutputFileName(str(partial))
    # the rich-text engine lays text out at the screen's logical resolution: the page is given
    # in those pixels, then scaled onto the printer's, so that 10 pt prints as 10 pt
    dpi = QGuiApplication.primaryScreen().logicalDotsPerInchY()
    area = printer.pageRect(QPrinter.Unit.Inch)
    page = QSizeF(area.width() * dpi, (area.height() - FOOTER_INCHES) * dpi)
    document = QTextDocument()
    document.setPageSize(page)
    document.setHtml(print_html(pack_html(pack)))
    pages = document.pageCount()
    scale = printer.pageRect(QPrinter.Unit.DevicePixel).width() / page.width()
    painter = QPainter()
    if not painter.begin(printer):
        raise HunchbookError(f"review pack '{target}': could not write it")
    footer = QFont(painter.font())
    footer.setPointSizeF(7.5)
    try:
        for number in range(pages):
            if number:
                printer.newPage()
            painter.save()
            painter.scale(scale, scale)
            painter.translate(0, -number * page.height())
            document.drawContents(painter, QRectF(0, number * page.height(), page.width(),
                                                  page.height()))
            painter.restore()
            painter.setFont(footer)
            painter.drawText(QRectF(0, page.height() * scale, page.width() * scale,
                                    FOOTER_INCHES * dpi * scale),
                             int(Qt.AlignmentFlag.AlignBottom | Qt.AlignmentFlag.AlignRight),
                             f"Review pack: {pack.idea.title} \u2014 page {number + 1} of "
                             f"{pages}")
    finally:
        painter.end()
    try:
        os.replace(partial, target)
    except OSError as exc:
        partial.unlink(missing_ok=True)
        raise HunchbookError(f"review pack '{target}': could not write it "
                             f"({exc.strerror or exc})") from None
    return pages
