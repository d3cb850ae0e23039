"""The idea catalogue and research journal: the Python API behind the desktop window, the
``hunchbook ideas|journal|runs|catalogue`` commands and notebooks.

One SQLite file holds a desk's ideas, rule revisions, pre-registrations, runs, journal and
reviews (see :mod:`hunchbook.store`). Open it with ``Catalogue(path)``; the schema is migrated
on open, after an automatic backup. Nothing is written to a file that is not a catalogue;
``Catalogue(path, read_only=True)`` writes nothing (beyond migrating an older catalogue); a file
this process cannot write (read-only file or folder) opens for reading. Every method raises
:class:`CatalogueError`, one line naming the file, for bad input and for SQLite's failures: a
damaged, locked or read-only file, a full disk. Every method that writes runs in one
transaction; group several with ``with catalogue.transaction():``. A ``Catalogue`` belongs to
the thread that made it (SQLite connections are per thread): open one per worker thread or
process. Several processes may write at once; each waits for the others' write lock (busy
timeout).

Example
-------
>>> cat = Catalogue("desk.sqlite")                                      # doctest: +SKIP
>>> idea = cat.add_idea(title="Carry in grains", hypothesis="...", submitted_by="Nia")
>>> cat.set_stage(idea, "submitted", by="Nia", reason="ready for review")
>>> cat.review(idea, reviewer="Ines", checklist={k: True for k in CHECKLIST},
...            decision="accept", comments="Go ahead.")
>>> rev = cat.save_rules(idea, open("carry.toml").read(), by="Nia")
>>> run_id = cat.record_run(idea, revision_id=rev.id, ...)              # see record_run
>>> cat.trial_count(idea), cat.idea(idea).last_verdict

API
---
Ideas: ``add_idea``, ``idea``, ``update_idea``, ``list_ideas``, ``set_stage``,
``idea_ids`` and ``idea_summaries`` (sorted in SQL, read a page at a time), ``idea_choices``,
``preregistrations``, ``amend_preregistration``, ``check_preregistration``. Rules:
``save_rules``, ``revisions``, ``latest_revision``, ``revision``. Runs: ``record_run``,
``trial_count``, ``trial_sharpes``, ``runs``, ``run_lines``, ``run``, ``promoted_pnl``.
Journal: ``add_entry``, ``correct_entry``, ``journal``. Reviews (idea and promotion reviews):
``review``, ``reviews``, ``next_step``. Families: ``set_variant_of``, ``variant_link``,
``family``. Desk rules: ``desk_setting``, ``desk_settings``, ``set_desk_setting``.
Holdout: ``holdout_boundary``, ``holdout_boundaries``, ``set_holdout_boundary``,
``holdout_view``, ``holdout_views``, ``unlock_problem``, ``record_holdout_view``.
Bundles: ``export_bundle``, ``import_bundle``. Upkeep: ``backup``, ``check``,
``schema_version``, ``transaction``, ``close``.
Desk: ``desk_summary`` (ideas tested, runs, trials and promotions per period).

Stages (``STAGES``): draft -> submitted -> accepted | returned; accepted -> tested (by
recording a run) -> promoted | shelved (see ``TRANSITIONS``). Accepting (or returning) and
promoting are reviews (``review`` with a decision of ``REVIEW_KINDS``), each with its
checklist, by someone other than the idea's author (four eyes) unless the desk setting
``one_person_desk`` is on, in which case the review says it was made by the author.

What ``record_run`` expects
---------------------------
``summary``: the run's :class:`~hunchbook.core.results.RunSummary` (every set's figures, the
chosen set, statistics and verdict; its ``verdict.outcome`` is what ``Idea.last_verdict``
holds and ``list_ideas(verdict=...)`` filters on). ``daily_pnl``: the chosen set's daily P&L,
a DataFrame with a date index and columns ``gross_pnl``, ``cost``, ``net_pnl``.

Trials
------
``trial_count`` counts distinct (strategy key, parameter set) pairs over all the runs of the
idea's family (the idea and the ideas recorded as its variants, or it as theirs: see
``set_variant_of``); a trial two members share counts once. The strategy key hashes the rule
file without its ``[parameters]`` table, ``name`` and ``description`` (see
:mod:`hunchbook.store.revisions` and :mod:`hunchbook.store.runs`). ``trial_sharpes`` gives one
annualised net Sharpe per trial (its latest run), for the variance the deflated Sharpe needs.

Holdout
-------
The catalogue has one holdout boundary at a time (every setting kept, journalled with who,
when and why): runs see only the dates before it (see :func:`hunchbook.services.run_idea`).
Each idea may unlock its held-out years once (:func:`hunchbook.services.unlock_holdout`):
``record_holdout_view`` keeps what was found there and refuses a second unlocking; it is
refused too while any run of the idea has seen dates on or after the boundary, or when its
latest run was made at another boundary (``unlock_problem`` says why).
"""

from __future__ import annotations

import contextlib
import datetime as dt
import functools
import os
import sqlite3
from collections.abc import Callable, Iterator, Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import platformdirs

from hunchbook.catalogue.holdout_api import HoldoutAPI
from hunchbook.catalogue.listing_api import ListingAPI
from hunchbook.catalogue.review_api import NOTHING_HELD_OUT, ReviewsAPI
from hunchbook.core import formats

if TYPE_CHECKING:
    from hunchbook.core.book import PromotedPnl
    from hunchbook.core.results import RunSummary
    from hunchbook.core.verdict import Check

from hunchbook.store import (
    bundles,
    check,
    desk,
    families,
    files,
    ideas,
    journal,
    migrations,
    opening,
    preregistration,
    promoted,
    run_scopes,
    settings,
    validate,
)
from hunchbook.store import db as dbmod
from hunchbook.store import revisions as revmod
from hunchbook.store import runs as runmod
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import (
    DataRead,
    Entry,
    Idea,
    ImportReport,
    Preregistration,
    Revision,
    RunRecord,
    TrialHistory,
)
from hunchbook.store.vocab import (
    CHECKLIST,
    FROZEN_FIELDS,
    PROMOTION_CHECKLIST,
    REVIEW_KINDS,
    RUN_ADVICE,
    RUNNABLE_STAGES,
    STAGES,
    TRANSITIONS,
    USER_ENTRY_KINDS,
)

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["CHECKLIST", "NOTHING_HELD_OUT", "PROMOTION_CHECKLIST", "REVIEW_KINDS", "STAGES",
           "TRANSITIONS", "Catalogue", "CatalogueError", "default_catalogue_path"]

#: Environment variable that overrides the default catalogue location.
CATALOGUE_ENV = "HUNCHBOOK_CATALOGUE"


def default_catalogue_path() -> Path:
    """``$HUNCHBOOK_CATALOGUE`` if set, else ``catalogue.sqlite`` in the user's data folder."""
    override = os.environ.get(CATALOGUE_ENV)
    if override:
        return Path(override)
    return platformdirs.user_data_path("hunchbook", appauthor=False) / "catalogue.sqlite"


def _explaining(method: Callable[..., Any]) -> Callable[..., Any]:
    """``method`` raising :class:`CatalogueError` for SQLite's failures on the file."""
    @functools.wraps(method)
    def call(self: Catalogue, *args: Any, **kwargs: Any) -> Any:
        try:
            return method(self, *args, **kwargs)
        except sqlite3.DatabaseError as exc:
            error = files.explain(exc, self.path)
            if error is None:
                raise
            raise error from None
    return call


def _explained(cls: type[Catalogue]) -> type[Catalogue]:
    """Wrap every public method of the class and of the parts it is made of with
    :func:`_explaining`."""
    for klass in reversed(cls.__mro__[:-1]):
        for name, member in list(vars(klass).items()):
            if callable(member) and not name.startswith("_"):
                setattr(cls, name, _explaining(member))
    return cls


@_explained
class Catalogue(ReviewsAPI, HoldoutAPI, ListingAPI):
    """An open catalogue file.

    Parameters
    ----------
    path
        The SQLite file (created if missing or empty and ``create`` is true).
    create
        Refuse a missing or empty file when false.
    clock
        Returns the current time (aware ``datetime``); the default is the system clock in UTC.
        The demo builder passes a clock that walks through invented dates.
    read_only
        Only read: a missing or empty file is refused and every write raises
        :class:`CatalogueError` (an older catalogue is still migrated, after a backup, when the
        file can be written).
    """

    def __init__(self, path: str | os.PathLike[str], *, create: bool = True,
                 clock: Callable[[], dt.datetime] | None = None,
                 read_only: bool = False) -> None:
        self.path = Path(path)
        self._clock = clock or dbmod.utc_now
        self.db = opening.open_catalogue_db(self.path, create=create, read_only=read_only)

    # -- upkeep ---------------------------------------------------------------------------
    def close(self) -> None:
        """Close the connection (the file stays consistent whether or not this is called)."""
        self.db.close()

    def __enter__(self) -> Catalogue:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @contextlib.contextmanager
    def transaction(self) -> Iterator[Catalogue]:
        """Group several writes into one transaction: all of them are kept, or none."""
        with dbmod.write(self.db):
            yield self

    def schema_version(self) -> int:
        """The schema version of the file (the number of migrations applied)."""
        return migrations.schema_version(self.db)

    def backup(self, path: str | os.PathLike[str]) -> None:
        """Copy the catalogue to a new file with SQLite's online backup API (safe while others
        write); an existing file is never overwritten."""
        dbmod.backup(self.db, path)

    def check(self) -> list[str]:
        """Problems found by integrity, foreign-key, full-text and record checks (empty: sound)."""
        return check.problems(self.db)

    def _now(self) -> str:
        return dbmod.timestamp(self._clock())

    # -- ideas ----------------------------------------------------------------------------
    def add_idea(self, *, title: str, hypothesis: str, rationale: str = "",
                 rationale_kind: str = "other", source_kind: str = "own",
                 citation: str | None = None, link: str | None = None, submitted_by: str,
                 reviewer: str | None = None, markets: Sequence[str] = (),
                 tags: Sequence[str] = (), stage: str = "draft") -> int:
        """Write a new idea (stage ``draft`` or ``submitted``) and return its id."""
        fields = ideas.clean_fields(dict(
            title=title, hypothesis=hypothesis, rationale=rationale,
            rationale_kind=rationale_kind, source_kind=source_kind, citation=citation,
            link=link, submitted_by=submitted_by, reviewer=reviewer, markets=markets, tags=tags,
            stage=stage))
        if fields["stage"] not in ("draft", "submitted"):
            raise CatalogueError("a new idea starts as 'draft' or 'submitted'", field="stage")
        at = self._now()
        with dbmod.write(self.db):
            idea_id = ideas.insert(self.db, fields, at=at)
            journal.append(self.db, idea_id=idea_id, kind="stage", by=fields["submitted_by"],
                           at=at, text=f"Idea written down (stage {fields['stage']}).")
        return idea_id

    def idea(self, idea_id: int) -> Idea:
        """The idea with this id."""
        return ideas.get(self.db, idea_id)

    def update_idea(self, idea_id: int, *, by: str, reason: str | None = None,
                    **fields: Any) -> Idea:
        """Edit an idea's fields (any of ``ideas.EDITABLE``) and return it as changed.

        Every change is journalled (``edit`` entry with old and new values). After the first
        run the rationale and markets are frozen by pre-registration: changing them needs a
        ``reason`` and writes a new pre-registration version and journal entry; the trial
        count keeps accumulating.
        """
        unknown = [k for k in fields if k not in ideas.EDITABLE]
        if unknown:
            raise CatalogueError(f"cannot edit {', '.join(unknown)} here (editable: "
                                 f"{', '.join(ideas.EDITABLE)}; the stage moves with set_stage)")
        by = validate.name(by, "by")
        clean = ideas.clean_fields(fields)
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            changed = {k: v for k, v in clean.items() if getattr(idea, k) != v}
            if not changed:
                return idea
            frozen = preregistration.current(self.db, idea.id)
            frozen_changes = [k for k in FROZEN_FIELDS if k in changed]
            if frozen is not None and frozen_changes:
                if reason is None:
                    raise CatalogueError(
                        f"{' and '.join(frozen_changes)} frozen by pre-registration at the "
                        f"first run ({formats.date(frozen.frozen_at)}); give a reason to change "
                        "it (a new pre-registration version is written)", field=f"idea {idea_id}")
                reason = preregistration.person_reason(reason)
            at = self._now()
            lines = [ideas.describe_change(k, getattr(idea, k), v) for k, v in changed.items()]
            ideas.update(self.db, idea.id, changed, at=at)
            journal.append(self.db, idea_id=idea.id, kind="edit", by=by, at=at,
                           text="Edited. " + "; ".join(lines)
                           + (f". Reason: {reason}" if reason else ""))
            if frozen is not None and frozen_changes:
                preregistration.amend(
                    self.db, ideas.get(self.db, idea.id), revmod.get(self.db, frozen.revision_id),
                    changed=[f"Changed {', '.join(frozen_changes)}."], by=by, reason=str(reason),
                    at=at, trials=runmod.trial_count(self.db, idea.id))
            return ideas.get(self.db, idea.id)

    def next_step(self, idea_id: int, user: str) -> str | None:
        """The idea's next step when it is ``user``'s to take, else None: ``review`` (a
        submitted idea someone else wrote, unless another reviewer is named on it),
        ``rework`` (their own returned idea), ``run`` (their own accepted idea),
        ``promotion review`` (a tested idea someone else wrote, whose last verdict says
        promote) or ``rework or shelve`` (their own tested idea with another verdict). On a
        one-person desk the author may take the reviewers' steps too."""
        idea = ideas.get(self.db, idea_id)
        return settings.next_step(idea.stage, idea.submitted_by, idea.reviewer,
                              validate.name(user, "user"),
                              one_person_desk=settings.current(self.db, "one_person_desk"),
                              last_verdict=idea.last_verdict)

    def set_stage(self, idea_id: int, stage: str, *, by: str, reason: str) -> None:
        """Move an idea along an allowed transition (see ``TRANSITIONS``); journalled.

        Promotion is not a plain stage change: it is a promotion review (:meth:`review` with
        the decision ``promote``), and moving to ``promoted`` here is refused.
        """
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            if stage == "promoted" and stage in TRANSITIONS[idea.stage]:
                raise CatalogueError(
                    "an idea is promoted by a promotion review, not a stage change: someone "
                    "other than its author answers the promotion checklist ("
                    + ", ".join(PROMOTION_CHECKLIST) + ") and decides 'promote' (hunchbook "
                    "ideas promote, or the window's Review section)", field=f"idea {idea.id}")
            ideas.set_stage(self.db, idea.id, stage, by=by, reason=reason, at=self._now())

    def preregistrations(self, idea_id: int) -> list[Preregistration]:
        """The idea's pre-registration versions, oldest first (empty before its first run)."""
        return preregistration.versions(self.db, ideas.get(self.db, idea_id).id)

    def amend_preregistration(self, idea_id: int, *, by: str, reason: str,
                              rationale: str | None = None,
                              markets: Sequence[str] | None = None,
                              rule_text: str | None = None) -> Preregistration:
        """Amend the idea's pre-registration after testing began and return the new version.

        ``rationale`` and ``markets`` are the new values (None: unchanged); ``rule_text`` a
        rule file whose ``[parameters]`` table becomes the pre-registered parameter space (kept
        as the idea's next rule revision, or its latest when identical). ``reason`` says why,
        in the words of the person amending (:func:`hunchbook.store.preregistration.
        person_reason`: at least three words, never a text the program writes). The change and
        the reason are journalled; trials keep counting. Runs outside version 1 are then
        recorded, each with a verdict warning naming what lies outside and this amendment.

        Raises
        ------
        CatalogueError
            Before the first run (nothing is frozen: edit the idea), a reason that is not a
            person's, a rule file that does not parse, or nothing that changes.
        """
        by = validate.name(by, "by")
        reason = preregistration.person_reason(reason)
        given = {k: v for k, v in (("rationale", rationale), ("markets", markets))
                 if v is not None}
        clean = ideas.clean_fields(given)
        if rule_text is not None:
            _check_rules_parse(idea_id, rule_text)
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            last = preregistration.current(self.db, idea.id)
            if last is None:
                raise CatalogueError(
                    f"idea {idea.id} has no pre-registration yet: its first run freezes the "
                    "rationale, markets and parameter space; until then edit the idea and its "
                    "rules freely", field=f"idea {idea.id}")
            revision = revmod.get(self.db, last.revision_id)
            lines = []
            if rule_text is not None:
                saved, created = revmod.save(self.db, idea.id, rule_text, by=by, at=at)
                if created:
                    journal.append(self.db, idea_id=idea.id, kind="edit", by=by, at=at,
                                   text=f"Rule file saved as revision {saved.number} "
                                        f"(SHA-256 {saved.sha256[:12]}).")
                if saved.parameter_space != last.parameter_space:
                    revision = saved
                    lines.append(f"Parameter space {_space(last.parameter_space)} -> "
                                 f"{_space(saved.parameter_space)} (rule revision "
                                 f"{saved.number}).")
            changed = {k: v for k, v in clean.items() if getattr(idea, k) != v}
            if changed:
                ideas.update(self.db, idea.id, changed, at=at)
                journal.append(self.db, idea_id=idea.id, kind="edit", by=by, at=at,
                               text="Edited. " + "; ".join(
                                   ideas.describe_change(k, getattr(idea, k), v)
                                   for k, v in changed.items()) + f". Reason: {reason}")
                lines += [f"Changed {ideas.describe_change(k, getattr(idea, k), v)}."
                          for k, v in changed.items()]
            if not lines:
                raise CatalogueError(
                    f"nothing to amend: the rationale, markets and parameter space given are "
                    f"those of pre-registration version {last.version}", field=f"idea {idea.id}")
            preregistration.amend(self.db, ideas.get(self.db, idea.id), revision,
                                  changed=lines, by=by, reason=reason, at=at,
                                  trials=runmod.trial_count(self.db, idea.id))
            new = preregistration.current(self.db, idea.id)
        assert new is not None
        return new

    def check_preregistration(self, idea_id: int, rule_text: str,
                              parameter_sets: Sequence[Mapping[str, float]]) -> tuple[Check, ...]:
        """Check a run of this rule text with these parameter sets against the idea's
        pre-registration before it runs, and return the verdict warnings it needs (one when
        it lies outside the pre-registration frozen at the first run; definitions in
        :mod:`hunchbook.core.prereg`). Writes nothing; :meth:`record_run` checks again.

        Raises
        ------
        CatalogueError
            The run lies outside the version in force (it needs an amendment with a reason
            first: the message says what to amend and how), or, before the first run, the
            rule file trades markets the idea does not name.
        """
        idea = ideas.get(self.db, idea_id)
        markets = run_scopes.rule_markets(rule_text)
        if preregistration.current(self.db, idea.id) is None:
            _first_run_markets(idea, markets)
            return ()
        found = run_scopes.scopes(self.db, idea.id, markets=markets,
                                  parameter_sets=parameter_sets)
        assert found is not None
        in_force, first = found
        if not in_force.within:
            raise CatalogueError(run_scopes.refusal(idea.id, in_force), field=f"idea {idea.id}")
        if first.within:
            return ()
        from hunchbook.core.prereg import outside_warning

        return (outside_warning(first, preregistration.amendments(self.db, idea.id,
                                                                  upto=in_force.version)),)

    # -- rule revisions -------------------------------------------------------------------
    def save_rules(self, idea_id: int, rule_text: str, *, by: str) -> Revision:
        """Keep a rule file (TOML text) as the idea's next revision and return it.

        Text identical to the latest revision returns that revision unchanged. Saving never
        amends the pre-registration: a run of a revision whose parameter space lies outside it
        waits for :meth:`amend_preregistration` with a person's reason.
        """
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            revision, created = revmod.save(self.db, idea.id, rule_text, by=by, at=at)
            if created:
                journal.append(self.db, idea_id=idea.id, kind="edit", by=by, at=at,
                               text=f"Rule file saved as revision {revision.number} "
                                    f"(SHA-256 {revision.sha256[:12]}).")
        return revision

    def revisions(self, idea_id: int) -> list[Revision]:
        """The idea's rule revisions, oldest first."""
        return revmod.of_idea(self.db, ideas.get(self.db, idea_id).id)

    def latest_revision(self, idea_id: int) -> Revision | None:
        """The idea's newest rule revision, if any."""
        return revmod.latest(self.db, ideas.get(self.db, idea_id).id)

    def revision(self, revision_id: int) -> Revision:
        """One rule revision by id."""
        return revmod.get(self.db, validate.integer(revision_id, "revision id"))

    # -- runs -----------------------------------------------------------------------------
    def record_run(self, idea_id: int, *, revision_id: int, summary: RunSummary,
                   data_fingerprint: str, engine_version: str, daily_pnl: pd.DataFrame,
                   by: str) -> int:
        """Record a run of an accepted idea and return its id.

        ``summary`` is the run's results record; ``daily_pnl`` the chosen set's daily P&L
        (date index; columns ``gross_pnl``, ``cost``, ``net_pnl``); see
        :func:`hunchbook.store.runs.clean`.

        The first run freezes the pre-registration (rationale, markets, parameter space; an
        idea that names no markets takes those its rule file trades). Every run is checked
        against it (:mod:`hunchbook.store.run_scopes`): one outside the version in force is
        refused (an amendment with a person's reason must come first); one outside version 1
        is recorded and flagged, and its verdict must carry the warning saying so
        (:meth:`check_preregistration` gives it). A run moves an ``accepted`` idea to
        ``tested``. A ``run`` journal entry carries the verdict, its reasons and the trial
        count.
        """
        clean = runmod.clean(summary=summary, data_fingerprint=data_fingerprint,
                             engine_version=engine_version, daily_pnl=daily_pnl)
        by = validate.name(by, "by")
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            if idea.stage not in RUNNABLE_STAGES:
                raise CatalogueError(
                    f"it is '{idea.stage}', and runs are recorded for ideas that are "
                    f"{', '.join(RUNNABLE_STAGES)}. {RUN_ADVICE[idea.stage]}",
                    field=f"idea {idea.id}")
            revision = revmod.get(self.db, validate.integer(revision_id, "revision id"))
            if revision.idea_id != idea.id:
                raise CatalogueError(f"rule revision {revision.id} belongs to idea "
                                     f"{revision.idea_id}, not {idea.id}", field="revision_id")
            markets = run_scopes.rule_markets(revision.text)
            if preregistration.current(self.db, idea.id) is None:
                if not idea.markets:
                    ideas.update(self.db, idea.id, {"markets": markets}, at=at)
                    idea = ideas.get(self.db, idea.id)
                _first_run_markets(idea, markets)
                preregistration.freeze(self.db, idea, revision, by=by, at=at)
            found = run_scopes.scopes(self.db, idea.id, markets=markets,
                                      parameter_sets=clean.parameter_sets)
            assert found is not None
            in_force, first = found
            if not in_force.within:
                raise CatalogueError(run_scopes.refusal(idea.id, in_force),
                                     field=f"idea {idea.id}")
            if not first.within and not _warned(summary):
                raise CatalogueError(
                    f"the run lies outside the pre-registration frozen at the first run "
                    f"({first.summary()}) but its verdict does not say so: give the verdict "
                    "the warning of Catalogue.check_preregistration", field="summary.verdict")
            run_id = runmod.insert(self.db, idea.id, revision, clean, by=by, at=at)
            run_scopes.insert(self.db, run_id, in_force, first,
                              run_scopes.finding(self.db, idea.id, in_force, first))
            journal.append(self.db, idea_id=idea.id, kind="run", by=by, at=at,
                           text=_run_text(run_id, revision, clean,
                                          runmod.trial_count(self.db, idea.id),
                                          len(families.member_ids(self.db, idea.id))))
            if idea.stage == "accepted":
                ideas.set_stage(self.db, idea.id, "tested", by=by, at=at, runs_recorded=1,
                                reason=f"First run recorded (run {run_id}).")
        return run_id

    def trial_count(self, idea_id: int) -> int:
        """Distinct (strategy, parameter set) trials ever run by the idea and the rest of its
        family, across revisions (definition in :mod:`hunchbook.store.runs`): the count its
        deflated Sharpe takes."""
        return runmod.trial_count(self.db, ideas.get(self.db, idea_id).id)

    def trial_sharpes(self, idea_id: int) -> list[float]:
        """Annualised net Sharpe of each trial of the idea's family (latest run of it), for the
        deflated Sharpe's variance across all trials; trials without a Sharpe are left out."""
        return runmod.trial_sharpes(self.db, ideas.get(self.db, idea_id).id)

    def prospective_trials(self, idea_id: int, rule_text: str,
                           parameter_sets: Sequence[Mapping[str, float]]) -> TrialHistory:
        """Trial count as it will stand once ``parameter_sets`` of this rule text have run,
        and the other trials of the idea's family with the rule text to recompute them: what
        the deflated Sharpe and the SPA test of a run need before the run is recorded. Writes
        nothing."""
        idea = ideas.get(self.db, idea_id)
        _, strategy_key, _ = revmod.analyse(rule_text)
        return runmod.prospective_trials(self.db, idea.id, strategy_key, parameter_sets)

    def runs(self, idea_id: int | None = None) -> list[RunRecord]:
        """Runs oldest first, of one idea or of all; without daily P&L (see :meth:`run`)."""
        if idea_id is not None:
            idea_id = ideas.get(self.db, idea_id).id
        return runmod.of_idea(self.db, idea_id)

    def run(self, run_id: int) -> RunRecord:
        """One run with its daily P&L decoded into ``daily_pnl``."""
        return runmod.get(self.db, run_id)

    def data_read(self, *, idea_id: int | None = None,
                  run_id: int | None = None) -> DataRead | None:
        """What a run read (``run_id``), or the idea's last run (``idea_id``): its whole-data
        fingerprint and one digest per market (None when not recorded); None when there is
        no such run. A run's changes since the run before are on its record
        (``RunSummary.data_changes``)."""
        if run_id is not None:
            found = runmod.data_read(self.db, run_id=validate.integer(run_id, "run id"))
            if found is None:
                raise CatalogueError(f"there is no run {run_id}", field="run")
            return found
        return runmod.data_read(self.db, idea_id=ideas.get(self.db, idea_id).id)

    def promoted_pnl(self, exclude_idea: int | None = None) -> list[PromotedPnl]:
        """The daily net P&L of each promoted idea's latest run (the book a new run is compared
        with, :mod:`hunchbook.core.book`), ``exclude_idea`` left out."""
        return promoted.promoted_pnl(self.db, exclude_idea)

    # -- journal --------------------------------------------------------------------------
    def add_entry(self, *, idea_id: int | None, kind: str, text: str, by: str) -> int:
        """Append a ``note`` or ``decision`` to an idea's journal (or the general journal when
        ``idea_id`` is ``None``) and return its id."""
        kind = validate.choice(kind, "kind", USER_ENTRY_KINDS)
        at = self._now()
        with dbmod.write(self.db):
            if idea_id is not None:
                idea_id = ideas.get(self.db, idea_id).id
                self.db.execute("UPDATE ideas SET updated_at = ? WHERE id = ?", [at, idea_id])
            return journal.append(self.db, idea_id=idea_id, kind=kind, text=text, by=by, at=at)

    def correct_entry(self, entry_id: int, text: str, *, by: str) -> int:
        """Append a correction of an entry (the entry itself never changes); returns its id."""
        at = self._now()
        with dbmod.write(self.db):
            entry = journal.get(self.db, validate.integer(entry_id, "entry id"))
            return journal.append(self.db, idea_id=entry.idea_id, kind="correction", text=text,
                                  by=by, at=at, corrects=entry.id)

    def journal(self, idea_id: int | None = None, *, kind: str | None = None,
                limit: int | None = None) -> list[Entry]:
        """Entries oldest first: of one idea, or of the whole catalogue when ``idea_id`` is
        ``None``; only the newest ``limit`` when given."""
        if idea_id is not None:
            idea_id = ideas.get(self.db, idea_id).id
        return journal.entries(self.db, idea_id, kind=kind, limit=limit)

    def entry(self, entry_id: int) -> Entry:
        """One journal entry by id."""
        return journal.get(self.db, validate.integer(entry_id, "entry id"))

    # -- desk -------------------------------------------------------------------------------
    def desk_summary(self, period: str = "year") -> desk.DeskSummary:
        """Ideas tested, runs, sets, new trials and promotions per ``period`` (``year``,
        ``quarter`` or ``month``), and every tested idea's latest figures (see
        :mod:`hunchbook.store.desk`). Writes nothing."""
        return desk.summary(self.db, period)

    # -- bundles --------------------------------------------------------------------------
    def export_bundle(self, idea_id: int, path: str | os.PathLike[str], *,
                      overwrite: bool = False) -> None:
        """Write the idea, its revisions, pre-registration, journal, reviews and runs to a
        bundle file (a zip of TOML, rule files, JSON and CSV)."""
        bundles.export(self.db, idea_id, path, at=self._now(), overwrite=overwrite)

    def import_bundle(self, path: str | os.PathLike[str], *, by: str) -> ImportReport:
        """Import a bundle: checked whole first, applied in one transaction, never
        overwriting (see :mod:`hunchbook.store.bundles`)."""
        by = validate.name(by, "by")
        with dbmod.write(self.db):
            return bundles.import_bundle(self.db, path, by=by, at=self._now())


def _check_rules_parse(idea_id: int, rule_text: str) -> None:
    """Refuse a rule file that does not parse as the one whose space is pre-registered."""
    from hunchbook.core.errors import RuleError
    from hunchbook.core.rules import parse_rules

    try:
        parse_rules(rule_text)
    except RuleError as exc:
        raise CatalogueError(f"the rule file does not parse ({exc}); fix it before "
                             "pre-registering its parameter space", field=f"idea {idea_id}"
                             ) from None


def _first_run_markets(idea: Idea, markets: Sequence[str]) -> None:
    """Refuse a first run trading markets the idea does not name (the first run freezes the
    idea's markets; until then they are edited freely)."""
    if not idea.markets:
        return
    extra = [m for m in markets if m not in idea.markets]
    if extra:
        raise CatalogueError(
            f"the rule file trades {', '.join(extra)}, not among the idea's markets "
            f"({', '.join(idea.markets)}); the first run freezes the idea's markets: add "
            f"{', '.join(extra)} to them first (command line: hunchbook ideas edit {idea.id} "
            f"--markets {','.join([*idea.markets, *extra])}; window: Idea section, Markets) "
            "or trade only the idea's markets", field=f"idea {idea.id}")


def _warned(summary: RunSummary) -> bool:
    """Whether the verdict carries the warning of a run outside the pre-registration."""
    from hunchbook.core.prereg import CHECK_KEY

    return any(check.key == CHECK_KEY for check in summary.verdict.checks)


def _space(space: dict[str, Any]) -> str:
    from hunchbook.core.prereg import describe_space

    return describe_space(space)


def _run_text(run_id: int, revision: Revision, run: runmod.RunInput, trials: int,
              family: int) -> str:
    chosen = ", ".join(f"{k}={v:g}" for k, v in run.chosen_params.items()) or "no parameters"
    sharpe = ("n/a" if run.chosen_net_sharpe is None else f"{run.chosen_net_sharpe:.2f}")
    verdict = run.result.verdict
    whose = f" (with its family of {family} ideas)" if family > 1 else ""
    changes = run.result.data_changes
    changed = "" if changes is None else f" {changes.sentence()}"
    return (f"Run {run_id} on rule revision {revision.number}: {len(run.parameter_sets)} "
            f"parameter set(s), trial count now {trials}{whose}; data "
            f"{run.data_fingerprint[:12]}, "
            f"engine {run.engine_version}.{changed} Chosen set {chosen}, net Sharpe {sharpe}. "
            f"Verdict: {verdict.label}. {' '.join(verdict.reasons)} Next: {verdict.action}"
            ).strip()
