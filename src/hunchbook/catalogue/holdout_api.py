"""The catalogue's holdout (part of :class:`hunchbook.catalogue.Catalogue`): the boundary
settings and each idea's one unlocking of its held-out years."""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from typing import TYPE_CHECKING

from hunchbook.core import formats
from hunchbook.core.formats import pct, plural
from hunchbook.store import db as dbmod
from hunchbook.store import holdout, ideas, journal, validate
from hunchbook.store import runs as runmod
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import HoldoutBoundary, HoldoutView, RunRecord
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    import pandas as pd

    from hunchbook.core.holdout import HoldoutFigures


class HoldoutAPI:
    """The holdout of an open catalogue (mixed into ``Catalogue``)."""

    db: Database
    _now: Callable[[], str]

    # -- holdout --------------------------------------------------------------------------
    def holdout_boundary(self) -> HoldoutBoundary | None:
        """The holdout boundary in force (runs see the dates before it), or None before one
        is set (the first quick run sets the default: see :func:`hunchbook.services.run_idea`)."""
        return holdout.current(self.db)

    def holdout_boundaries(self) -> list[HoldoutBoundary]:
        """Every setting of the holdout boundary, oldest first."""
        return holdout.boundaries(self.db)

    def set_holdout_boundary(self, boundary: dt.date | str, *, by: str,
                             reason: str) -> HoldoutBoundary:
        """Set the catalogue's holdout boundary (a date, or ``YYYY-MM-DD`` text) and return it.

        ``reason`` (required) says why, in the words of the person who sets it; the setting is
        journalled as a general ``decision`` entry naming the old and new dates. The date in
        force already returns the current setting unchanged (nothing is written). Ideas whose
        runs saw dates on or after a new, earlier boundary can no longer unlock their holdout.
        """
        boundary = holdout.clean_date(boundary, "boundary")
        by = validate.name(by, "by")
        reason = validate.text(reason, "reason")
        at = self._now()
        with dbmod.write(self.db):
            old = holdout.current(self.db)
            if old is not None and old.boundary == boundary:
                return old
            holdout.insert_boundary(self.db, boundary, reason=reason, by=by, at=at)
            was = f" (was {old.boundary.isoformat()})" if old is not None else ""
            journal.append(self.db, idea_id=None, kind="decision", by=by, at=at,
                           text=f"Holdout boundary set to {boundary.isoformat()}{was}: {reason}")
            new = holdout.current(self.db)
        assert new is not None
        return new

    def holdout_view(self, idea_id: int) -> HoldoutView | None:
        """The idea's unlocking of its held-out years (daily P&L decoded), or None while they
        are still locked."""
        return holdout.view(self.db, ideas.get(self.db, idea_id).id)

    def holdout_views(self) -> list[HoldoutView]:
        """Every idea's unlocking, oldest first (without daily P&L)."""
        return holdout.views(self.db)

    def unlock_problem(self, idea_id: int) -> str | None:
        """Why the idea's holdout cannot be unlocked now, in one sentence, or None when it can
        (its latest run is then the one an unlocking continues)."""
        return self._unlock_problem(ideas.get(self.db, idea_id).id)

    def _unlock_problem(self, idea_id: int) -> str | None:
        seen = holdout.view(self.db, idea_id, with_pnl=False)
        if seen is not None:
            return (f"its held-out years were already unlocked by "
                    f"{seen.seen_by} on {formats.date(seen.seen_at)} (continuing run "
                    f"{seen.run_id}); "
                    "they are seen once per idea")
        current = holdout.current(self.db)
        if current is None:
            return "the catalogue has no holdout boundary yet (a quick run sets one)"
        runs = holdout.run_boundaries(self.db, idea_id)
        if not runs:
            return "it has no run yet: run it before the boundary first"
        for run_id, edge in runs:
            if edge is None or edge > current.boundary:
                saw = "the whole history" if edge is None else f"the dates before {edge}"
                return (f"its run {run_id} saw {saw}, past the holdout "
                        f"boundary {current.boundary}: its held-out years are not unseen")
        last, edge = runs[-1]
        if edge != current.boundary:
            return (f"its latest run (run {last}) was made before {edge}, "
                    f"not at the boundary in force ({current.boundary}): run it again first")
        return None

    def record_holdout_view(self, idea_id: int, *, run_id: int, figures: HoldoutFigures,
                            daily_pnl: pd.DataFrame, data_fingerprint: str,
                            engine_version: str, by: str) -> HoldoutView:
        """Keep the one unlocking of an idea's held-out years and return it.

        ``run_id`` must be the idea's latest run (the in-sample run it continues); ``figures``
        what the chosen set did on the held-out dates (at the boundary in force);
        ``daily_pnl`` its daily P&L there (date index; columns ``gross_pnl``, ``cost``,
        ``net_pnl``). A ``run`` journal entry names who unlocked it, the revision, the set,
        the dates and the figures. Refused when :meth:`unlock_problem` has a reason.
        """
        by = validate.name(by, "by")
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            problem = self._unlock_problem(idea.id)
            if problem is not None:
                raise CatalogueError(problem, field=f"idea {idea.id}")
            current = holdout.current(self.db)
            run = runmod.of_idea(self.db, idea.id)[-1]
            assert current is not None
            if validate.integer(run_id, "run id") != run.id:
                raise CatalogueError(f"run {run_id} is not the latest run of idea {idea.id} "
                                     f"(run {run.id} is)", field="run_id")
            if figures.boundary != current.boundary.isoformat():
                raise CatalogueError(f"figures measured from {figures.boundary}, but the "
                                     f"boundary is {current.boundary}", field="figures")
            holdout.insert_view(
                self.db, idea_id=idea.id, revision_id=run.revision_id, run_id=run.id,
                chosen_params=run.chosen_params, boundary=current.boundary,
                data_fingerprint=data_fingerprint, engine_version=engine_version,
                figures=figures, daily_pnl=daily_pnl, by=by, at=at)
            self.db.execute("UPDATE ideas SET updated_at = ? WHERE id = ?", [at, idea.id])
            journal.append(self.db, idea_id=idea.id, kind="run", by=by, at=at,
                           text=_holdout_text(run, figures, by))
            view = holdout.view(self.db, idea.id)
        assert view is not None
        return view


def _holdout_text(run: RunRecord, figures: HoldoutFigures, by: str) -> str:
    chosen = ", ".join(f"{k}={v:g}" for k, v in run.chosen_params.items()) or "no parameters"
    psr = pct(figures.psr)
    return (f"Holdout unlocked by {by}: rule revision {run.revision_number}, chosen set "
            f"{chosen} (of run {run.id}) run once on the held-out dates {figures.first_date} "
            f"to {figures.last_date} ({plural(figures.days, 'day')} from the boundary "
            f"{figures.boundary}). Held-out PSR {psr}. {figures.finding()}")
