"""Reviews: the checklist, the decision (accept for testing / return with comments), comments."""

from __future__ import annotations

import json
import uuid as uuidlib
from collections.abc import Mapping
from typing import Any

from hunchbook.store import chain, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Review
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import CHECKLIST, DECISIONS


def clean_checklist(checklist: Any, field: str = "checklist") -> dict[str, bool]:
    """Every item of :data:`~hunchbook.store.vocab.CHECKLIST` answered ``True`` or ``False``."""
    if not isinstance(checklist, Mapping):
        raise CatalogueError("expected a table of checklist answers", field=field)
    unknown = [k for k in checklist if k not in CHECKLIST]
    missing = [k for k in CHECKLIST if k not in checklist]
    if unknown or missing:
        raise CatalogueError(
            "; ".join(filter(None, [unknown and f"unknown item(s) {', '.join(map(str, unknown))}",
                                    missing and f"unanswered item(s) {', '.join(missing)}"]))
            + f" (items: {', '.join(CHECKLIST)})", field=field)
    for key, answer in checklist.items():
        if not isinstance(answer, bool):
            raise CatalogueError("expected true or false", field=f"{field}.{key}")
    return {k: checklist[k] for k in CHECKLIST}


def check_decision(decision: Any, checklist: dict[str, bool], comments: str) -> str:
    """A decision consistent with the checklist: accepting needs every item ticked, returning
    needs comments saying what to change."""
    decision = validate.choice(decision, "decision", DECISIONS)
    unmet = [k for k, ok in checklist.items() if not ok]
    if decision == "accept" and unmet:
        raise CatalogueError(f"cannot accept with unticked checklist item(s) {', '.join(unmet)};"
                             " return the idea with comments instead", field="decision")
    if decision == "return" and not comments:
        raise CatalogueError("say in the comments what the author should change",
                             field="comments")
    return decision


def insert(db: Database, idea_id: int, *, reviewer: str, checklist: dict[str, bool],
           decision: str, comments: str, at: str, review_uuid: str | None = None) -> int:
    """Write one review row (already validated) and return its id."""
    return chain.append(db, "reviews", {
        "uuid": review_uuid or str(uuidlib.uuid4()), "idea_id": idea_id, "reviewer": reviewer,
        "checklist": json.dumps(checklist), "decision": decision, "comments": comments,
        "at": at})


def of_idea(db: Database, idea_id: int) -> list[Review]:
    """The idea's reviews, oldest first."""
    return [Review(**{**{k: r[k] for k in Review.__dataclass_fields__},
                      "checklist": json.loads(r["checklist"])})
            for r in db.query("SELECT * FROM reviews WHERE idea_id = ? ORDER BY id", [idea_id])]


def journal_text(checklist: dict[str, bool], decision: str, comments: str) -> str:
    """The review as one journal entry."""
    ticks = "; ".join(f"[{'x' if ok else ' '}] {key}" for key, ok in checklist.items())
    verb = "Accepted for testing" if decision == "accept" else "Returned with comments"
    return f"{verb}. Checklist: {ticks}." + (f" Comments: {comments}" if comments else "")
