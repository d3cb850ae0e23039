"""The catalogue's lists (part of :class:`hunchbook.catalogue.Catalogue`): ideas filtered,
searched and sorted in SQL, whole or an ordered list of ids with their lines read a page at a
time, and the runs of every idea as short lines that leave the run records unparsed."""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

from hunchbook.store import runs as runmod
from hunchbook.store import search, settings, validate
from hunchbook.store.records import IdeaChoices, IdeaSummary, RunLine
from hunchbook.store.sqlite_lib import Database

#: The columns the "waiting for me" filter reads.
_NEXT_STEP_COLUMNS = ("id", "stage", "submitted_by", "reviewer", "last_verdict")


class ListingAPI:
    """The lists of an open catalogue (mixed into ``Catalogue``)."""

    db: Database

    def list_ideas(self, *, stage: str | None = None, verdict: str | None = None,
                   market: str | None = None, tag: str | None = None,
                   author: str | None = None, source_kind: str | None = None,
                   text: str | None = None, waiting_for: str | None = None,
                   limit: int | None = None) -> list[IdeaSummary]:
        """Ideas matching every filter given, most recently updated first.

        ``text`` is a full-text search: every word must appear (as a word or the start of one)
        in the title, hypothesis or rationale, or in one of the idea's journal entries.
        ``waiting_for`` keeps the ideas whose next step is this person's (see
        :meth:`next_step`).
        """
        rows = search.list_ideas(self.db, stage=stage, verdict=verdict, market=market, tag=tag,
                                 author=author, source_kind=source_kind, text=text,
                                 limit=None if waiting_for is not None else limit)
        if waiting_for is None:
            return rows
        keep = set(self._waiting(((r.id, r.stage, r.submitted_by, r.reviewer, r.last_verdict)
                                  for r in rows), waiting_for))
        mine = [r for r in rows if r.id in keep]
        return mine if limit is None else mine[:validate.integer(limit, "limit")]

    def idea_ids(self, *, order: str = "updated", descending: bool = True,
                 stage: str | None = None, verdict: str | None = None,
                 market: str | None = None, tag: str | None = None,
                 author: str | None = None, source_kind: str | None = None,
                 text: str | None = None, waiting_for: str | None = None,
                 among: Sequence[int] | None = None) -> list[int]:
        """The ids of the ideas matching every filter given (as :meth:`list_ideas`; ``among``
        keeps only these ids), sorted in SQL by ``order``: one of ``updated``, ``title``,
        ``stage``, ``verdict`` (its label), ``sharpe`` (the last net Sharpe ratio) or
        ``trials``; missing values last, ties by id in the same direction. Read the ideas'
        lines with :meth:`idea_summaries`, a page at a time."""
        filters: dict[str, Any] = dict(stage=stage, verdict=verdict, market=market, tag=tag,
                                       author=author, source_kind=source_kind, text=text,
                                       among=among)
        if waiting_for is None:
            return [r[0] for r in search.ordered(self.db, ("id",), order=order,
                                                 descending=descending, **filters)]
        rows = search.ordered(self.db, _NEXT_STEP_COLUMNS, order=order, descending=descending,
                              **filters)
        return self._waiting(rows, waiting_for)

    def idea_summaries(self, ids: Sequence[int]) -> list[IdeaSummary]:
        """The list lines of these ideas, in the order given (ids of no idea left out)."""
        return search.summaries(self.db, ids)

    def idea_choices(self) -> IdeaChoices:
        """The markets, tags and authors the ideas name (the idea list's filter choices)."""
        return search.choices(self.db)

    def run_lines(self, idea_id: int | None = None) -> list[RunLine]:
        """Runs oldest first, of one idea or of all, as short lines (idea, when, revision,
        verdict label) read without parsing the run records (see :meth:`runs` for those)."""
        if idea_id is not None:
            idea_id = validate.integer(idea_id, "idea id")
        return runmod.lines(self.db, idea_id)

    def _waiting(self, rows: Iterable[Sequence[Any]], user: str) -> list[int]:
        """The ids, in order, of the rows (id, stage, submitted_by, reviewer, last_verdict)
        whose next step is ``user``'s."""
        user = validate.name(user, "waiting_for")
        alone = settings.current(self.db, "one_person_desk")
        return [r[0] for r in rows
                if settings.next_step(r[1], r[2], r[3], user, one_person_desk=alone,
                                      last_verdict=r[4]) is not None]
