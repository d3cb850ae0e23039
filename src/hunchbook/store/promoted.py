"""The promoted ideas' daily net P&L: what a new run is compared with (the book, see
:mod:`hunchbook.core.book`).

Each promoted idea contributes the chosen set's daily net P&L of its latest run, latest by
time as for the idea's last verdict (:func:`hunchbook.store.runs.insert`); a promoted idea
without a run has nothing to compare and is left out.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from hunchbook.store import pnl
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    from hunchbook.core.book import PromotedPnl

_LATEST = (
    "SELECT i.id, i.title, r.id AS run_id, r.daily_pnl FROM ideas i JOIN runs r ON r.id = ("
    "SELECT id FROM runs WHERE idea_id = i.id ORDER BY recorded_at DESC, id DESC LIMIT 1) "
    "WHERE i.stage = 'promoted' AND i.id IS NOT ? ORDER BY i.id")


def promoted_pnl(db: Database, exclude_idea: int | None = None) -> list[PromotedPnl]:
    """Each promoted idea's latest run's daily net P&L, ideas in id order (``exclude_idea``
    left out: the idea being run)."""
    from hunchbook.core.book import PromotedPnl

    return [PromotedPnl(idea_id=row[0], title=row[1], run_id=row[2],
                        net=pnl.decode(row[3])["net_pnl"])
            for row in db.execute(_LATEST, [exclude_idea])]
