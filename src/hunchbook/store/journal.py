"""The research journal: dated entries per idea or general, append-only.

Rows are never updated, replaced or deleted (triggers refuse it, and each row's hash is chained
to the row before: see :mod:`hunchbook.store.chain`); editing an entry appends a ``correction``
entry that points at it.
"""

from __future__ import annotations

import uuid as uuidlib
from typing import Any

from hunchbook.store import chain, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Entry
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import ENTRY_KINDS

_SELECT = """SELECT j.id, j.uuid, j.idea_id, j.kind, j.text, j.author, j.at, j.corrects,
    (SELECT max(c.id) FROM journal c WHERE c.corrects = j.id) AS corrected_by
    FROM journal j"""


def append(db: Database, *, idea_id: int | None, kind: str, text: str, by: str, at: str,
           corrects: int | None = None, entry_uuid: str | None = None) -> int:
    """Write one entry and return its id (no stage or permission rules; see the catalogue).

    Parameters
    ----------
    idea_id
        The idea the entry belongs to, or ``None`` for a general entry.
    kind
        One of :data:`hunchbook.store.vocab.ENTRY_KINDS`.
    corrects
        The entry this one corrects (for ``kind="correction"``).
    entry_uuid
        Keep this identity (entries read from a bundle); a new one otherwise.
    """
    row = {
        "uuid": entry_uuid or str(uuidlib.uuid4()),
        "idea_id": idea_id,
        "kind": validate.choice(kind, "kind", ENTRY_KINDS),
        "text": validate.text(text, "text"),
        "author": validate.name(by, "by"),
        "at": at,
        "corrects": corrects,
    }
    return chain.append(db, "journal", row)


def get(db: Database, entry_id: int) -> Entry:
    """One entry by id."""
    rows = list(db.query(f"{_SELECT} WHERE j.id = ?", [entry_id]))
    if not rows:
        raise CatalogueError(f"there is no journal entry {entry_id}", field="entry")
    return _entry(rows[0])


def entries(db: Database, idea_id: int | None = None, *, kind: str | None = None,
            limit: int | None = None, general_only: bool = False) -> list[Entry]:
    """Entries oldest first (the newest ``limit`` of them when a limit is given).

    ``idea_id=None`` lists every entry, or only general entries with ``general_only``.
    """
    where, params = [], []
    if idea_id is not None:
        where.append("j.idea_id = ?")
        params.append(idea_id)
    elif general_only:
        where.append("j.idea_id IS NULL")
    if kind is not None:
        where.append("j.kind = ?")
        params.append(validate.choice(kind, "kind", ENTRY_KINDS))
    sql = _SELECT + (" WHERE " + " AND ".join(where) if where else "") + " ORDER BY j.id DESC"
    if limit is not None:
        sql += " LIMIT ?"
        params.append(validate.integer(limit, "limit"))
    return [_entry(row) for row in reversed(list(db.query(sql, params)))]


def by_uuid(db: Database, idea_id: int) -> dict[str, dict[str, Any]]:
    """The idea's entries as raw rows keyed by uuid (for bundle import)."""
    return {row["uuid"]: row for row in db.query(
        "SELECT * FROM journal WHERE idea_id = ?", [idea_id])}


def _entry(row: dict[str, Any]) -> Entry:
    return Entry(id=row["id"], uuid=row["uuid"], idea_id=row["idea_id"], kind=row["kind"],
                 text=row["text"], by=row["author"], at=row["at"], corrects=row["corrects"],
                 corrected_by=row["corrected_by"])
