"""Pre-registration: an idea's rationale, markets and parameter space, frozen at its first run.

Version 1 is written when the first run is recorded. A later change of any frozen part (an
edit of the rationale or markets, a rule revision with another parameter space) writes the
next version and a ``preregistration`` journal entry; the versions are never rewritten, and
trials keep counting across them.
"""

from __future__ import annotations

import json
import uuid as uuidlib
from typing import Any

from hunchbook.store import chain, journal
from hunchbook.store.records import Idea, Preregistration, Revision
from hunchbook.store.sqlite_lib import Database


def versions(db: Database, idea_id: int) -> list[Preregistration]:
    """Every pre-registration version of the idea, oldest first (empty before the first run)."""
    return [_record(r) for r in db.query(
        "SELECT * FROM preregistrations WHERE idea_id = ? ORDER BY version", [idea_id])]


def current(db: Database, idea_id: int) -> Preregistration | None:
    """The newest version, or ``None`` if the idea has not been run."""
    rows = list(db.query("SELECT * FROM preregistrations WHERE idea_id = ? ORDER BY version "
                         "DESC LIMIT 1", [idea_id]))
    return _record(rows[0]) if rows else None


def freeze(db: Database, idea: Idea, revision: Revision, *, by: str, at: str) -> None:
    """Write version 1 from the idea and the revision of its first run, and journal it."""
    _insert(db, idea.id, 1, idea.rationale, idea.markets, revision, by=by, at=at,
            reason="first run")
    journal.append(db, idea_id=idea.id, kind="preregistration", by=by, at=at, text=(
        f"Pre-registered at the first run: rationale, markets ({', '.join(idea.markets)}) and "
        f"the parameter space of rule revision {revision.number} "
        f"({_space_text(revision.parameter_space)}) are frozen."))


def amend(db: Database, idea: Idea, revision: Revision, *, changed: list[str], by: str,
          reason: str, at: str, trials: int) -> None:
    """Write the next version with the idea's current values and journal what changed.

    ``idea`` and ``revision`` hold the values after the change; ``changed`` lists one line per
    frozen part that changed; ``trials`` is the trial count so far.
    """
    last = current(db, idea.id)
    version = 1 if last is None else last.version + 1
    _insert(db, idea.id, version, idea.rationale, idea.markets, revision, by=by, at=at,
            reason=reason)
    journal.append(db, idea_id=idea.id, kind="preregistration", by=by, at=at, text=(
        f"Pre-registration changed after testing began (version {version}). "
        + " ".join(changed) + f" Reason: {reason.rstrip('.')}. Trials keep counting across "
        "the change "
        f"({trials} so far)."))


def _insert(db: Database, idea_id: int, version: int, rationale: str, markets: tuple[str, ...],
            revision: Revision, *, by: str, at: str, reason: str) -> None:
    chain.append(db, "preregistrations", {
        "uuid": str(uuidlib.uuid4()), "idea_id": idea_id, "version": version,
        "rationale": rationale, "markets": json.dumps(list(markets)),
        "parameter_space": json.dumps(revision.parameter_space, sort_keys=True),
        "revision_id": revision.id, "frozen_at": at, "frozen_by": by, "reason": reason})


def _space_text(space: dict[str, Any]) -> str:
    return json.dumps(space, sort_keys=True) if space else "no parameters"


def _record(row: dict[str, Any]) -> Preregistration:
    return Preregistration(
        idea_id=row["idea_id"], uuid=row["uuid"], version=row["version"],
        rationale=row["rationale"], markets=tuple(json.loads(row["markets"])),
        parameter_space=json.loads(row["parameter_space"]), revision_id=row["revision_id"],
        frozen_at=row["frozen_at"], frozen_by=row["frozen_by"], reason=row["reason"])
