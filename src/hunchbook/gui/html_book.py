"""The "against the book" section of a run's HTML report: the correlations with the promoted
ideas and their book, the book's Sharpe ratio without and with the run, and what each figure
means (the chart is among the report's charts). Every text is escaped."""

from __future__ import annotations

from hunchbook.core.book_presenter import (
    BOOK_COLUMNS,
    book_notes,
    book_rows,
    book_table,
    threshold_sentence,
)
from hunchbook.core.presenter import format_value
from hunchbook.gui.html_parts import escaped as _e
from hunchbook.gui.html_parts import table_html
from hunchbook.gui.widgets.book_panel import NOT_COMPARED
from hunchbook.store.records import RunRecord

#: Caption of the chart in the report's charts.
BOOK_CAPTION = ("Correlation of the chosen set's daily net P&L with each promoted idea and with "
                "their book (the dashed line: the warning threshold).")


def book_section(run: RunRecord) -> str:
    """The section's HTML (without its heading)."""
    book = run.result.book if run.result is not None else None
    if book is None:
        return f"<p>{_e(NOT_COMPARED)}</p>"
    notes = "".join(f"<p>{_e(n)}</p>" for n in book_notes(book))
    if not book.ideas:
        return notes
    figures = "".join(
        f'<tr title="{_e(r.note)}"><td>{_e(r.label)}</td>'
        f'<td class="num">{_e(format_value(r.net, r.kind))}</td></tr>'
        for r in book_rows(book)) if book.book_ideas else ""
    meaning = "".join(f"<li><strong>{_e(x.label)}</strong>: {_e(x.note)}</li>"
                      for x in [*BOOK_COLUMNS, *(book_rows(book) if book.book_ideas else [])])
    return (table_html(book_table(book), "")
            + (f"<table><tbody>{figures}</tbody></table>" if figures else "")
            + notes + f"<ul>{meaning}</ul><p>{_e(threshold_sentence(book))}</p>")
