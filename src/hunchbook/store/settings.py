"""The desk's rules: settings of the whole catalogue, such as ``one_person_desk`` (on/off) and
``capital`` (an amount), and the four-eyes rule they relax; whose next step an idea waits for.

``desk_settings`` keeps every setting (append-only, hash-chained; who, when and why); the
latest row of a key holds, and a key never set holds its default
(:data:`hunchbook.store.vocab.DESK_SETTINGS`).

Four eyes: an idea is reviewed, and promoted, by someone other than its author. On a
one-person desk (the setting ``one_person_desk`` on) the author may review their own idea, and
the review says so. Names are compared without regard to case or surrounding spaces.
"""

from __future__ import annotations

import uuid as uuidlib
from typing import Any

from hunchbook.store import chain, validate
from hunchbook.store.records import DeskSetting
from hunchbook.store.setting_kinds import SettingValue
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import DESK_SETTINGS, NEXT_STEPS, PROMOTION_VERDICT, TESTED_REWORK


def clean_key(key: Any, field: str = "setting") -> str:
    """One of the desk settings' keys."""
    return validate.choice(key, field, DESK_SETTINGS)


def current(db: Database, key: str) -> SettingValue:
    """The value in force of a desk setting (its default before it is first set)."""
    row = db.execute("SELECT value FROM desk_settings WHERE key = ? ORDER BY id DESC LIMIT 1",
                     [key]).fetchone()
    spec = DESK_SETTINGS[key]
    return spec.default if row is None else spec.kind.read(row[0])


def history(db: Database) -> list[DeskSetting]:
    """Every setting of every key, oldest first (a key no longer known is left out)."""
    return [DeskSetting(id=r["id"], uuid=r["uuid"], key=r["key"],
                        value=DESK_SETTINGS[r["key"]].kind.read(r["value"]),
                        reason=r["reason"], set_by=r["set_by"], set_at=r["set_at"])
            for r in db.query("SELECT * FROM desk_settings ORDER BY id")
            if r["key"] in DESK_SETTINGS]


def insert(db: Database, key: str, value: SettingValue, *, reason: str, by: str,
           at: str) -> int:
    """Write one setting (checked by the caller) as its kind's text and return its id."""
    return chain.append(db, "desk_settings", {
        "uuid": str(uuidlib.uuid4()), "key": key,
        "value": DESK_SETTINGS[key].kind.stored(value),
        "reason": reason, "set_by": by, "set_at": at})


def same_person(a: str | None, b: str | None) -> bool:
    """Whether two names name the same person (case and surrounding spaces ignored)."""
    return a is not None and b is not None and a.strip().casefold() == b.strip().casefold()


def next_step(stage: str, author: str, reviewer: str | None, user: str, *,
              one_person_desk: bool, last_verdict: str | None = None) -> str | None:
    """The next step of an idea that is ``user``'s to take, or None when it waits for someone
    else (or nobody).

    See :data:`hunchbook.store.vocab.NEXT_STEPS`: a returned idea waits for its author's
    rework and an accepted one for its author's run; a submitted idea waits for a review by
    anyone but its author (only by its named ``reviewer`` when it has one); a tested idea
    whose last verdict says promote waits for a promotion review by anyone but its author,
    and with another verdict for its author (rework or shelve). On a one-person desk the
    author may take the reviewers' steps too.
    """
    whose, step = NEXT_STEPS.get(stage, (None, None))
    if stage == "tested" and last_verdict != PROMOTION_VERDICT:
        whose, step = TESTED_REWORK
    if whose == "author":
        return step if same_person(user, author) else None
    if whose != "reviewer":
        return None
    if same_person(user, author) and not one_person_desk:
        return None
    if stage == "submitted" and reviewer is not None and not same_person(user, reviewer):
        return None
    return step


def author_review_problem(db: Database, author: str, reviewer: str) -> str | None:
    """Why ``reviewer`` may not review the idea (they wrote it, and the desk is not a
    one-person desk), or None."""
    if not same_person(author, reviewer) or current(db, "one_person_desk") is True:
        return None
    return (f"{author} wrote this idea, so someone else reviews it (four eyes); a desk "
            "of one can allow it with the desk setting one_person_desk")
