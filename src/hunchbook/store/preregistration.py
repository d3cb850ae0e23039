"""Pre-registration: an idea's rationale, markets and parameter space, frozen at its first run.

Version 1 is written when the first run is recorded (the markets are the idea's; an idea that
named none takes the markets its rule file trades). A later change of any frozen part is an
*amendment*: the next version, with the reason a person typed (:func:`person_reason`: the
program's own texts, such as "rule revision 3 saved", are refused), and a
``preregistration`` journal entry. Nothing amends a pre-registration by itself: a rule
revision with a wider space, or a run on other markets, waits for an amendment (see
:mod:`hunchbook.store.run_scopes`). The versions are never rewritten, and trials keep
counting across them.
"""

from __future__ import annotations

import json
import re
import uuid as uuidlib
from typing import TYPE_CHECKING, Any

from hunchbook.store import chain, journal, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Idea, Preregistration, Revision
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    from hunchbook.core.prereg import Amendment

#: Texts the program writes by itself (earlier versions journalled them as reasons): never a
#: person's reason.
AUTOMATIC_REASONS = (re.compile(r"rule revision \d+ saved", re.IGNORECASE),
                     re.compile(r"run on rule revision \d+", re.IGNORECASE),
                     re.compile(r"first run", re.IGNORECASE),
                     re.compile(r"changed (rationale|markets)(,? and (rationale|markets))?",
                                re.IGNORECASE))
#: Fewest words a reason has (a sentence saying why, not a word).
MIN_REASON_WORDS = 3


def person_reason(value: Any, field: str = "reason") -> str:
    """A reason for amending a pre-registration, typed by a person: at least
    :data:`MIN_REASON_WORDS` words, and not a text the program writes by itself."""
    if value is None:
        raise CatalogueError("give a reason in your own words for changing the "
                             "pre-registration", field=field)
    text = validate.text(value, field)
    bare = text.strip().rstrip(".").strip().strip("'\"\u201c\u201d")
    if any(p.fullmatch(bare) for p in AUTOMATIC_REASONS):
        raise CatalogueError(f"'{bare}' is what the program writes, not a reason: say in "
                             "your own words why the pre-registration changes", field=field)
    if len(re.findall(r"\w+", text)) < MIN_REASON_WORDS:
        raise CatalogueError(f"'{text}' is too short to be a reason: say in a sentence (at "
                             f"least {MIN_REASON_WORDS} words) why the pre-registration "
                             "changes", field=field)
    return text


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
    """Write version 1 from the idea (its markets as given) and the revision of its first
    run, and journal it."""
    from hunchbook.core.prereg import describe_space

    _insert(db, idea.id, 1, idea.rationale, idea.markets, revision, by=by, at=at,
            reason="first run")
    journal.append(db, idea_id=idea.id, kind="preregistration", by=by, at=at, text=(
        f"Pre-registered at the first run: rationale, markets ({', '.join(idea.markets)}) and "
        f"the parameter space of rule revision {revision.number} "
        f"({describe_space(revision.parameter_space)}) are frozen."))


def amendments(db: Database, idea_id: int, upto: int | None = None) -> list[Amendment]:
    """The versions after the first (up to version ``upto``) that changed the markets or the
    parameter space, with who, when and why."""
    from hunchbook.core.prereg import Amendment

    found = []
    history = versions(db, idea_id)
    for before, after in zip(history, history[1:], strict=False):
        if upto is not None and after.version > upto:
            break
        if (set(after.markets) - set(before.markets)
                or after.parameter_space != before.parameter_space):
            found.append(Amendment(after.version, after.frozen_by, after.frozen_at,
                                   after.reason))
    return found


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


def _record(row: dict[str, Any]) -> Preregistration:
    return Preregistration(
        idea_id=row["idea_id"], uuid=row["uuid"], version=row["version"],
        rationale=row["rationale"], markets=tuple(json.loads(row["markets"])),
        parameter_space=json.loads(row["parameter_space"]), revision_id=row["revision_id"],
        frozen_at=row["frozen_at"], frozen_by=row["frozen_by"], reason=row["reason"])
