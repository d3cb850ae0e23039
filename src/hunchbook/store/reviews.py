"""Reviews: the checklist, the decision and comments, for each kind of review (see
:data:`hunchbook.store.vocab.REVIEW_KINDS`): a submitted idea accepted for testing or returned
with comments; a tested idea promoted or declined. The kind follows from the decision."""

from __future__ import annotations

import json
import uuid as uuidlib
from collections.abc import Mapping
from typing import Any

from hunchbook.store import chain, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Review
from hunchbook.store.settings import same_person
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import BY_AUTHOR, DECISION_LABELS, REVIEW_DECISIONS, REVIEW_KINDS


def kind_of(decision: Any, field: str = "decision") -> str:
    """The kind of review a decision belongs to (``idea`` or ``promotion``)."""
    return REVIEW_DECISIONS[validate.choice(decision, field, REVIEW_DECISIONS)]


def clean_checklist(checklist: Any, field: str = "checklist", *,
                    kind: str = "idea") -> dict[str, bool]:
    """Every item of the kind's checklist answered ``True`` or ``False``."""
    items = REVIEW_KINDS[kind].checklist
    if not isinstance(checklist, Mapping):
        raise CatalogueError("expected a table of checklist answers", field=field)
    unknown = [k for k in checklist if k not in items]
    missing = [k for k in items if k not in checklist]
    if unknown or missing:
        raise CatalogueError(
            "; ".join(filter(None, [unknown and f"unknown item(s) {', '.join(map(str, unknown))}",
                                    missing and f"unanswered item(s) {', '.join(missing)}"]))
            + f" (items: {', '.join(items)})", field=field)
    for key, answer in checklist.items():
        if not isinstance(answer, bool):
            raise CatalogueError("expected true or false", field=f"{field}.{key}")
    return {k: checklist[k] for k in items}


def check_decision(decision: Any, checklist: dict[str, bool], comments: str, *,
                   waived: tuple[str, ...] = ()) -> str:
    """A decision consistent with the checklist: the approving decision (accept, promote)
    needs every item ticked but the ``waived`` ones (items that cannot apply); returning or
    declining needs comments saying what to change."""
    kind = REVIEW_KINDS[kind_of(decision)]
    unmet = [k for k, ok in checklist.items() if not ok and k not in waived]
    if decision == kind.approves and unmet:
        other = "/".join(d for d in kind.decisions if d != decision)
        raise CatalogueError(f"cannot {decision} with unticked checklist item(s) "
                             f"{', '.join(unmet)}; {other} with comments instead",
                             field="decision")
    if decision in kind.needs_comments and not comments:
        raise CatalogueError("say in the comments what the author should change",
                             field="comments")
    return str(decision)


def insert(db: Database, idea_id: int, *, reviewer: str, checklist: dict[str, bool],
           decision: str, comments: str, at: str, review_uuid: str | None = None) -> int:
    """Write one review row (already validated) and return its id."""
    return chain.append(db, "reviews", {
        "uuid": review_uuid or str(uuidlib.uuid4()), "idea_id": idea_id, "reviewer": reviewer,
        "checklist": json.dumps(checklist), "decision": decision, "comments": comments,
        "at": at})


def of_idea(db: Database, idea_id: int) -> list[Review]:
    """The idea's reviews, oldest first."""
    rows = db.query("SELECT r.*, i.submitted_by FROM reviews r JOIN ideas i ON i.id = "
                    "r.idea_id WHERE r.idea_id = ? ORDER BY r.id", [idea_id])
    return [Review(id=r["id"], uuid=r["uuid"], idea_id=r["idea_id"], reviewer=r["reviewer"],
                   checklist=json.loads(r["checklist"]), decision=r["decision"],
                   comments=r["comments"], at=r["at"],
                   kind=REVIEW_DECISIONS.get(r["decision"], "idea"),
                   by_author=same_person(r["reviewer"], r["submitted_by"])) for r in rows]


def journal_text(checklist: dict[str, bool], decision: str, comments: str, *,
                 by_author: bool = False) -> str:
    """The review as one journal entry (saying so when the author reviewed their own idea)."""
    ticks = "; ".join(f"[{'x' if ok else ' '}] {key}" for key, ok in checklist.items())
    kind = "Promotion checklist" if REVIEW_DECISIONS[decision] == "promotion" else "Checklist"
    own = f" ({BY_AUTHOR[0].upper()}{BY_AUTHOR[1:]}.)" if by_author else ""
    return (f"{DECISION_LABELS[decision]}.{own} {kind}: {ticks}."
            + (f" Comments: {comments}" if comments else ""))
