"""The catalogue's reviews, families and desk rules (part of :class:`hunchbook.catalogue.
Catalogue`): reviewing an idea and its promotion with four eyes, variant links and family
trees, and the desk settings (the four-eyes rule relaxed, the desk's capital)."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from hunchbook.store import db as dbmod
from hunchbook.store import families, holdout, ideas, journal, settings, validate
from hunchbook.store import reviews as reviewmod
from hunchbook.store import revisions as revmod
from hunchbook.store import runs as runmod
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import DeskSetting, Family, Review, Revision, VariantLink
from hunchbook.store.setting_kinds import SettingValue
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import DESK_SETTINGS, REVIEW_KINDS

#: Added to a promotion review made without held-out years to see.
NOTHING_HELD_OUT = ("(No held-out years to see: the catalogue has no holdout boundary, or the "
                    "idea's runs already saw past it.)")


class ReviewsAPI:
    """Reviews, families and desk rules of an open catalogue (mixed into ``Catalogue``)."""

    db: Database
    _now: Callable[[], str]

    # -- reviews --------------------------------------------------------------------------
    def review(self, idea_id: int, *, reviewer: str, checklist: Mapping[str, bool],
               decision: str, comments: str) -> int:
        """Review an idea and return the review id.

        Two kinds of review (``REVIEW_KINDS``), told apart by the decision:

        - a submitted idea: ``checklist`` answers every item of ``CHECKLIST``; ``accept``
          (every item ticked, and the idea's latest rule revision a valid rule file that is
          not the unedited starter template; stage -> accepted) or ``return`` (comments
          required; stage -> returned);
        - a tested idea, the promotion review: ``checklist`` answers every item of
          ``PROMOTION_CHECKLIST``; ``promote`` (every item ticked; ``holdout_seen`` only when
          the idea's held-out years were unlocked, and left unticked only when there are none
          to see: no boundary, or runs that already saw past it, which the review then says;
          stage -> promoted) or ``decline`` (comments required; the idea stays tested).

        The reviewer must not be the idea's author unless the desk setting
        ``one_person_desk`` is on; such a review is recorded as made by the author and its
        journal entry says so. The review, and the stage change with the comments as its
        reason, are journalled.
        """
        reviewer = validate.name(reviewer, "reviewer")
        kind_name = reviewmod.kind_of(decision)
        kind = REVIEW_KINDS[kind_name]
        answers = reviewmod.clean_checklist(checklist, kind=kind_name)
        comments = validate.text(comments, "comments", required=False)
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            waived = ("holdout_seen",) if kind_name == "promotion" and not answers.get(
                "holdout_seen") and self._nothing_held_out(idea.id) else ()
            decision = reviewmod.check_decision(decision, answers, comments, waived=waived)
            if waived and decision == "promote":
                comments = (f"{comments} " if comments else "") + NOTHING_HELD_OUT
            if idea.stage != kind.stage:
                what = "promotion reviews are for tested ideas" if kind_name == "promotion" \
                    else "only submitted ideas are reviewed"
                raise CatalogueError(f"it is '{idea.stage}'; {what}",
                                     field=f"idea {idea.id}")
            problem = settings.author_review_problem(self.db, idea.submitted_by, reviewer)
            if problem is not None:
                raise CatalogueError(problem, field=f"idea {idea.id}")
            if decision == "accept":
                _check_rules_for_acceptance(idea.id, revmod.latest(self.db, idea.id))
            if answers.get("holdout_seen") and holdout.view(self.db, idea.id,
                                                            with_pnl=False) is None:
                raise CatalogueError(
                    f"the held-out years of idea {idea.id} have not been unlocked, so they "
                    "cannot have been seen: unlock them first, or leave holdout_seen unticked "
                    "and decline", field="checklist.holdout_seen")
            review_id = reviewmod.insert(self.db, idea.id, reviewer=reviewer, checklist=answers,
                                         decision=decision, comments=comments, at=at)
            by_author = settings.same_person(reviewer, idea.submitted_by)
            journal.append(self.db, idea_id=idea.id, kind="review", by=reviewer, at=at,
                           text=reviewmod.journal_text(answers, decision, comments,
                                                       by_author=by_author))
            if kind_name == "idea" and idea.reviewer is None:
                ideas.update(self.db, idea.id, {"reviewer": reviewer}, at=at)
            stage = kind.decisions[decision]
            if stage is not None:
                ideas.set_stage(self.db, idea.id, stage, by=reviewer, at=at,
                                reason=f"Review {review_id}: {comments or 'checklist complete.'}")
            else:
                self.db.execute("UPDATE ideas SET updated_at = ? WHERE id = ?", [at, idea.id])
        return review_id

    def _nothing_held_out(self, idea_id: int) -> bool:
        """True when no held-out years are left unseen for the idea to see: the catalogue has
        no boundary, or one of its runs already saw past it (runs made before holdouts)."""
        current = holdout.current(self.db)
        return current is None or any(edge is None or edge > current.boundary
                                      for _, edge in holdout.run_boundaries(self.db, idea_id))

    def acceptance_problem(self, idea_id: int) -> str | None:
        """Why the idea cannot be accepted for testing yet as far as its rules go (no rule
        file, the unedited starter template, or rules that do not parse), or ``None``."""
        idea = ideas.get(self.db, idea_id)
        try:
            _check_rules_for_acceptance(idea.id, revmod.latest(self.db, idea.id))
        except CatalogueError as exc:
            return exc.problem
        return None

    def reviews(self, idea_id: int) -> list[Review]:
        """The idea's reviews, oldest first."""
        return reviewmod.of_idea(self.db, ideas.get(self.db, idea_id).id)

    # -- families -------------------------------------------------------------------------
    def set_variant_of(self, idea_id: int, parent_id: int, *, by: str,
                       reason: str) -> VariantLink:
        """Record the idea as a variant of ``parent_id`` and return the link.

        Once per idea, and never undone: from then on the trials of the whole family (the tree
        of ideas linked as variants) count for each member's deflated Sharpe, so a variant
        does not start its trial count afresh. Refused for the idea itself, an idea already
        linked, or a parent that is one of the idea's own variants (a circle). Journalled on
        both ideas with who and why.
        """
        by = validate.name(by, "by")
        reason = validate.text(reason, "reason")
        at = self._now()
        with dbmod.write(self.db):
            idea = ideas.get(self.db, idea_id)
            parent = ideas.get(self.db, parent_id)
            problem = families.link_problem(self.db, idea.id, parent.id)
            if problem is not None:  # the problem names the ideas itself
                raise CatalogueError(problem)
            families.insert(self.db, idea.id, parent.id, reason=reason, by=by, at=at)
            families.refresh_trial_counts(self.db, idea.id)
            count = runmod.trial_count(self.db, idea.id)
            size = len(families.member_ids(self.db, idea.id))
            journal.append(self.db, idea_id=idea.id, kind="edit", by=by, at=at,
                           text=f"Recorded as a variant of idea {parent.id} '{parent.title}': "
                                f"{reason} Its family now has {size} ideas and {count} "
                                "trial(s), which all count for its deflated Sharpe.")
            journal.append(self.db, idea_id=parent.id, kind="edit", by=by, at=at,
                           text=f"Idea {idea.id} '{idea.title}' recorded as a variant of this "
                                f"idea: {reason}")
            for member in (idea.id, parent.id):
                self.db.execute("UPDATE ideas SET updated_at = ? WHERE id = ?", [at, member])
            link = families.link_of(self.db, idea.id)
        assert link is not None
        return link

    def variant_link(self, idea_id: int) -> VariantLink | None:
        """The link making the idea a variant of another, or None."""
        return families.link_of(self.db, ideas.get(self.db, idea_id).id)

    def family(self, idea_id: int) -> Family:
        """The idea's family as a tree (a lone idea is a family of one): each member's id,
        title, stage, author, last verdict and own trials, and the family's trial count."""
        return families.tree(self.db, ideas.get(self.db, idea_id).id)

    # -- desk rules -----------------------------------------------------------------------
    def desk_setting(self, key: str) -> SettingValue:
        """The desk setting in force (see ``DESK_SETTINGS``; its default until first set): on
        or off as a bool, an amount such as ``capital`` as a float (None: not set)."""
        return settings.current(self.db, settings.clean_key(key))

    def desk_settings(self) -> list[DeskSetting]:
        """Every setting of the desk rules, oldest first."""
        return settings.history(self.db)

    def set_desk_setting(self, key: str, value: Any, *, by: str, reason: str) -> DeskSetting:
        """Set a desk setting and return the setting in force; ``reason`` (required) says why.

        ``value`` as the setting's kind reads it (:mod:`hunchbook.store.setting_kinds`): on/off
        a bool or ``"on"``/``"off"``; an amount a positive number or its text
        (``"1000000"``), None or ``"none"`` to unset it. Journalled as a general ``decision``
        entry. Setting again the value last set writes nothing.

        Raises
        ------
        CatalogueError
            An unknown key or a value its kind does not read (one line naming the setting).
        """
        key = settings.clean_key(key)
        spec = DESK_SETTINGS[key]
        value = spec.kind.parse(value, key)
        by = validate.name(by, "by")
        reason = validate.text(reason, "reason")
        at = self._now()
        with dbmod.write(self.db):
            held = [s for s in settings.history(self.db) if s.key == key]
            if not held or held[-1].value != value:
                settings.insert(self.db, key, value, reason=reason, by=by, at=at)
                journal.append(self.db, idea_id=None, kind="decision", by=by, at=at,
                               text=f"Desk setting {key} {spec.kind.verb} "
                                    f"{spec.kind.stored(value)} ({spec.meaning}): {reason}")
                held = [s for s in settings.history(self.db) if s.key == key]
        return held[-1]


def _check_rules_for_acceptance(idea_id: int, revision: Revision | None) -> None:
    """Refuse to accept an idea whose parameter space is not declared in a valid rule file."""
    from hunchbook.core.errors import RuleError
    from hunchbook.core.rules import parse_rules
    from hunchbook.starter import STARTER_HINT, is_starter

    field = f"idea {idea_id}"
    if revision is None:
        raise CatalogueError("cannot accept an idea without a rule file: save its rules "
                             "(markets, [parameters] grid, [signal] position) first, or return "
                             "it with comments", field=field)
    if is_starter(revision.text):
        raise CatalogueError(f"cannot accept it: rule revision {revision.number}: "
                             f"{STARTER_HINT}", field=field)
    try:
        parse_rules(revision.text, file=f"rule revision {revision.number}")
    except RuleError as exc:
        raise CatalogueError(f"cannot accept it: its rule file does not parse ({exc}); fix and "
                             "save the rules, or return it with comments", field=field) from None
