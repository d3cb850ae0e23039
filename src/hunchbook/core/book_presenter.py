"""What a run's comparison with the book shows, as rows and sentences: the one place for its
labels and explanations, read by the command line, the window and the HTML report (the figures
are defined in :mod:`hunchbook.core.book`)."""

from __future__ import annotations

import math

from hunchbook.core.book import BookComparison, IdeaCorrelation
from hunchbook.core.presenter import Column, Figure, FigureRow, Table, format_value, number

#: Heading of the comparison wherever it shows.
BOOK_HEADING = "Against the book (promoted ideas)"

#: One row per promoted idea, then one for the book.
BOOK_COLUMNS: list[Column[IdeaCorrelation]] = [
    Column("Correlation", "ratio", lambda c: c.correlation,
           "Correlation of the two daily net P&L series over the dates both have: 1 is the "
           "same bet, 0 an unrelated one, -1 the opposite bet."),
    Column("Days", "count", lambda c: c.days,
           "Common days: the dates on which both have P&L, those the correlation is measured "
           "on."),
]

#: The book's Sharpe ratio without and with the run (one value each).
BOOK_FIGURES: list[Figure[BookComparison]] = [
    Figure("Book Sharpe without this run", "ratio", None, lambda b: b.sharpe_before,
           "Annualised Sharpe ratio of the promoted ideas combined at equal risk (each scaled "
           "to the same daily volatility, then averaged), on the book's common days."),
    Figure("Book Sharpe with it at equal risk", "ratio", None, lambda b: b.sharpe_after,
           "The same with this run's chosen set joining as one more idea of equal risk."),
    Figure("Change in the book's Sharpe", "ratio", None, lambda b: b.sharpe_change,
           "With minus without: what the run would add to the book (negative: it would "
           "dilute it)."),
]


def book_label(book: BookComparison) -> str:
    """The book's row name: how many ideas it combines."""
    return f"Book ({book.book_ideas} idea{'' if book.book_ideas == 1 else 's'}, equal risk)"


def book_table(book: BookComparison) -> Table:
    """Each promoted idea's correlation with the run and its common days, then the book's."""
    columns = tuple(BOOK_COLUMNS)
    rows = [(f"{c.idea_id}  {c.title}", tuple(number(col.value(c)) for col in columns))
            for c in book.ideas]
    if book.book_ideas:
        rows.append((book_label(book), (number(book.book_correlation), float(book.book_days))))
    return Table("Promoted idea", columns, tuple(rows))


def book_rows(book: BookComparison) -> list[FigureRow]:
    """The book's Sharpe ratio without and with the run, and the change."""
    return [f.row(book) for f in BOOK_FIGURES]


def threshold_sentence(book: BookComparison) -> str:
    """What the threshold means, in one sentence."""
    return (f"A correlation above {book.threshold:.2f} with a promoted idea or with the book is "
            f"a warning in the verdict: mostly the same bet as one the desk already holds "
            f"(correlations need {book.min_days:,} common days).")


def book_notes(book: BookComparison) -> list[str]:
    """Why a figure is missing: each idea left without a correlation, and the book's note."""
    notes = [f"Idea {c.idea_id}: {c.note}." for c in book.ideas if c.note]
    return notes + ([book.note] if book.note else [])


def book_line(book: BookComparison) -> str:
    """The comparison in one line (lists of runs)."""
    if not book.ideas:
        return book.note
    top = max(book.ideas, key=lambda c: c.correlation if math.isfinite(c.correlation)
              else -math.inf)
    parts = [f"highest correlation {format_value(number(top.correlation), 'ratio')} "
             f"(idea {top.idea_id})"]
    if book.book_ideas:
        parts.append(f"book {format_value(number(book.book_correlation), 'ratio')}, Sharpe "
                     f"{format_value(number(book.sharpe_before), 'ratio')} -> "
                     f"{format_value(number(book.sharpe_after), 'ratio')} with it")
    return "Against the book: " + "; ".join(parts) + "."


__all__ = ["BOOK_COLUMNS", "BOOK_FIGURES", "BOOK_HEADING", "book_label", "book_line",
           "book_notes", "book_rows", "book_table", "threshold_sentence"]
