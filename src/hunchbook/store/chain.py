"""Tamper evidence for the append-only records: each row's hash chained to the row before it.

Every row of the tables in :data:`COLUMNS` holds ``row_hash``: the SHA-256 of the table's
name, the previous row's ``row_hash`` (empty for the first row) and the row's values in the
order of :data:`COLUMNS`. :func:`append` is the only way the catalogue writes such a row. A
row changed, replaced or removed by any tool that bypasses the catalogue's triggers no longer
matches its hash, or breaks the hash of the row after it; :func:`broken` finds those rows. The
chain shows accidents and casual edits; it is not a signature (anyone can recompute it).

Trials are not chained: each is derived from its run's (chained) parameter sets and summary,
and :mod:`hunchbook.store.check` compares them.
"""

from __future__ import annotations

import hashlib
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from hunchbook.store.sqlite_lib import Database

#: The columns hashed, per chained table, in hashing order. Part of the file format: a later
#: schema change to these tables must keep the existing rows' hashes valid.
COLUMNS: dict[str, tuple[str, ...]] = {
    "rule_revisions": ("id", "uuid", "idea_id", "number", "text", "sha256", "strategy_key",
                       "parameter_space", "saved_at", "saved_by"),
    "preregistrations": ("id", "uuid", "idea_id", "version", "rationale", "markets",
                         "parameter_space", "revision_id", "frozen_at", "frozen_by", "reason"),
    "runs": ("id", "uuid", "idea_id", "revision_id", "parameter_sets", "set_count",
             "data_fingerprint", "engine_version", "summary", "statistics", "verdict",
             "verdict_label", "chosen_params", "chosen_net_sharpe", "trial_count", "daily_pnl",
             "recorded_at", "recorded_by"),
    "journal": ("id", "uuid", "idea_id", "kind", "text", "author", "at", "corrects"),
    "reviews": ("id", "uuid", "idea_id", "reviewer", "checklist", "decision", "comments", "at"),
    "imports": ("id", "idea_id", "bundle_sha256", "report", "imported_by", "at"),
    "holdout_boundaries": ("id", "uuid", "boundary", "reason", "set_by", "set_at"),
    "holdout_views": ("id", "uuid", "idea_id", "revision_id", "run_id", "chosen_params",
                      "boundary", "data_fingerprint", "engine_version", "figures", "daily_pnl",
                      "seen_by", "seen_at"),
    "variant_links": ("id", "uuid", "idea_id", "parent_id", "reason", "set_by", "set_at"),
    "desk_settings": ("id", "uuid", "key", "value", "reason", "set_by", "set_at"),
}


def digest(table: str, previous: str, values: Iterable[Any]) -> str:
    """Hex SHA-256 of a row chained to ``previous``.

    Each value is written with a type tag and its length, so that no two different rows encode
    alike. A whole-number float counts as the integer (a REAL column hands back ``1.0`` for a
    stored ``1``).
    """
    h = hashlib.sha256(f"{table}\n{previous}\n".encode())
    for value in values:
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        if value is None:
            h.update(b"N;")
        elif isinstance(value, int):
            h.update(b"I%d;" % value)
        elif isinstance(value, float):
            h.update(b"F" + value.hex().encode() + b";")
        else:
            data = value.encode("utf-8") if isinstance(value, str) else bytes(value)
            h.update((b"T%d:" if isinstance(value, str) else b"B%d:") % len(data))
            h.update(data)
    return h.hexdigest()


def append(db: Database, table: str, row: Mapping[str, Any]) -> int:
    """Insert one row with the next id and its chained hash; return the id.

    Call inside a write transaction (:func:`hunchbook.store.db.write`), which holds the write
    lock from the read of the last row to the insert.
    """
    last = db.execute(f"SELECT id, row_hash FROM {table} ORDER BY id DESC LIMIT 1").fetchone()
    values = {**row, "id": 1 if last is None else last[0] + 1}
    values["row_hash"] = digest(table, "" if last is None else last[1] or "",
                                (values[c] for c in COLUMNS[table]))
    names = ", ".join(values)
    db.execute(f"INSERT INTO {table} ({names}) VALUES ({', '.join('?' * len(values))})",
               list(values.values()))
    return int(values["id"])


def rows(db: Database, table: str) -> Iterable[tuple[int, str | None, Sequence[Any]]]:
    """``(id, stored hash, hashed values)`` of every row, in id order."""
    columns = ", ".join(COLUMNS[table])
    for row in db.execute(f"SELECT id, row_hash, {columns} FROM {table} ORDER BY id"):
        yield row[0], row[1], row[2:]


def broken(db: Database, table: str) -> list[int]:
    """Ids of the rows whose hash does not follow from the row before and their values."""
    found, previous = [], ""
    for row_id, stored, values in rows(db, table):
        if stored != digest(table, previous, values):
            found.append(row_id)
        previous = stored or ""
    return found


def seal(db: Database, table: str, batch: int = 256) -> None:
    """Write the chained hash of every existing row (when the chain is introduced; the caller
    lifts the table's append-only update trigger for it). Rows are read a batch at a time, so
    that large runs are never all in memory."""
    columns = ", ".join(COLUMNS[table])
    previous, last_id = "", 0
    while True:
        chunk = db.execute(f"SELECT id, {columns} FROM {table} WHERE id > ? ORDER BY id "
                           f"LIMIT {batch}", [last_id]).fetchall()
        if not chunk:
            return
        for row in chunk:
            previous = digest(table, previous, row[1:])
            db.execute(f"UPDATE {table} SET row_hash = ? WHERE id = ?", [previous, row[0]])
        last_id = chunk[-1][0]
