"""Checking a catalogue: SQLite's own integrity and foreign-key checks, the schema version, the
full-text index, the append-only records' hash chains, their trials and each run's place
against its pre-registration, the revision hashes, the stored P&L, the variant links (no
circles) and the denormalised trial counts (each idea's family's).

The check only reads, inside one read transaction (a consistent view while others write), so
it works on a read-only file. SQLite's check of a full-text index is written as an ``INSERT``,
so it runs on an in-memory copy of the index.
"""

from __future__ import annotations

import itertools
import json
import operator
import sqlite3
import uuid as uuidlib
from collections.abc import Iterator

from hunchbook.store import (
    chain,
    families,
    holdout,
    migrations,
    pnl,
    revisions,
    run_scopes,
    runs,
    validate,
)
from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database

#: Rows named per problem kind before the rest are counted.
SHOWN = 5
#: The full-text index and the shadow tables FTS5 keeps it in.
_INDEX = "idea_search"
_SHADOWS = ("data", "idx", "content", "docsize", "config")


def problems(db: Database) -> list[str]:
    """Every problem found, one sentence each; an empty list means the catalogue is sound."""
    if db.conn.in_transaction:
        return _problems(db)
    db.execute("BEGIN")
    try:
        return _problems(db)
    finally:
        db.execute("ROLLBACK")


def _problems(db: Database) -> list[str]:
    try:
        found = [f"integrity: {row[0]}" for row in db.execute("PRAGMA integrity_check")
                 if row[0] != "ok"]
    except sqlite3.DatabaseError as exc:  # too damaged for the whole check: table by table
        return _damaged_tables(db) or [f"integrity: SQLite cannot read the file ({exc})"]
    if found:
        return found  # the checks below read the tables; stop at a damaged file
    try:
        return list(_records(db))
    except sqlite3.DatabaseError as exc:
        return [f"SQLite cannot read the catalogue ({exc})"]


def _damaged_tables(db: Database) -> list[str]:
    """SQLite's integrity check of each table (with its indexes) on its own."""
    found = []
    try:
        names = [r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'table' "
                                          "AND sql NOT LIKE 'CREATE VIRTUAL%'").fetchall()]
    except sqlite3.DatabaseError:
        return []
    for name in names:
        quoted = '"' + name.replace('"', '""') + '"'
        try:
            found += [f"integrity: table {name}: {row[0]}"
                      for row in db.execute(f"PRAGMA integrity_check({quoted})") if row[0] != "ok"]
        except sqlite3.DatabaseError as exc:
            found.append(f"integrity: table {name}: {exc}")
    return found


def _records(db: Database) -> Iterator[str]:
    foreign = [f"foreign key: {table} row {rowid} points at a missing {parent} row"
               for table, rowid, parent, _ in db.execute("PRAGMA foreign_key_check")]
    if foreign:
        yield from foreign
        return
    version = migrations.schema_version(db)
    if version != migrations.SCHEMA_VERSION:
        yield f"schema version {version}, expected {migrations.SCHEMA_VERSION}"
        return
    yield from _search_index(db)
    missing = db.execute("SELECT count(*) FROM ideas WHERE id NOT IN "
                         f"(SELECT rowid FROM {_INDEX})").fetchone()[0]
    if missing:
        yield f"full-text index: {missing} idea(s) missing"
    for table in chain.COLUMNS:
        broken = chain.broken(db, table)
        if broken:
            yield (f"{table}: row(s) {_ids(broken)} changed, replaced or removed after they "
                   "were written (their hash chain does not match)")
    yield from _trials(db)
    wrong = run_scopes.mismatches(db)
    if wrong:
        yield (f"pre-registration check of run(s) {_ids(wrong)} does not match the runs and "
               "the pre-registration versions")
    for rev_id, idea_id, text, digest in db.execute(
            "SELECT id, idea_id, text, sha256 FROM rule_revisions"):
        if revisions.sha256(text) != digest:
            yield f"rule revision {rev_id} of idea {idea_id}: text does not match its SHA-256"
    for run_id, blob in db.execute("SELECT id, daily_pnl FROM runs"):
        try:
            pnl.decode(blob)
        except CatalogueError as exc:
            yield f"run {run_id}: {exc}"
    for (idea_id,) in db.execute("SELECT idea_id FROM holdout_views").fetchall():
        try:
            holdout.view(db, idea_id)
        except CatalogueError as exc:
            yield f"holdout of idea {idea_id}: {exc}"
    circles = families.circles(db)
    if circles:
        yield (f"variant links: idea(s) {_ids(circles)} are variants of their own variants "
               "(the links were edited outside the catalogue)")
    for idea_id, stored in db.execute("SELECT id, trial_count FROM ideas").fetchall():
        actual = runs.trial_count(db, idea_id)
        if actual != stored:
            yield f"idea {idea_id}: trial count {stored} stored, {actual} recorded"


def _search_index(db: Database) -> list[str]:
    """FTS5's own integrity check of the index, on a copy in an in-memory database."""
    row = db.execute("SELECT sql FROM sqlite_master WHERE name = ?", [_INDEX]).fetchone()
    if row is None:
        return ["full-text index: missing"]
    name = f"file:/hunchbook-check-{uuidlib.uuid4()}?vfs=memdb"
    build = sqlite3.connect(name, uri=True)
    try:
        build.execute(row[0])
        for shadow in _SHADOWS:
            table = f"{_INDEX}_{shadow}"
            build.execute(f"DELETE FROM {table}")
            cursor = db.execute(f"SELECT * FROM {table}")
            marks = ", ".join("?" * len(cursor.description))
            build.executemany(f"INSERT INTO {table} VALUES ({marks})", cursor)
        build.commit()
        check = sqlite3.connect(name, uri=True)  # a fresh connection reads the copied index
        try:
            check.execute(f"INSERT INTO {_INDEX} ({_INDEX}) VALUES ('integrity-check')")
        finally:
            check.close()
    except sqlite3.DatabaseError as exc:
        return [f"full-text index: {exc}"]
    finally:
        build.close()
    return []


def _trials(db: Database) -> Iterator[str]:
    """Each run's trials are exactly the sets of its summary (which covers its parameter sets,
    as checked when it was recorded), under its revision's strategy key, with the summary's net
    Sharpe, written together after the run; trials of no run are foreign-key problems."""
    wrong: list[int] = []
    done: set[int] = set()
    rows = db.execute("SELECT run_id, idea_id, strategy_key, params, net_sharpe FROM trials "
                      "ORDER BY rowid")  # one pass in storage order: a run's trials are adjacent
    for run_id, group in itertools.groupby(rows, key=operator.itemgetter(0)):
        if run_id in done or {row[1:] for row in group} != _expected_trials(db, run_id):
            wrong.append(run_id)
        done.add(run_id)
    wrong += [r[0] for r in db.execute("SELECT id FROM runs") if r[0] not in done]
    if wrong:
        yield (f"trials of run(s) {_ids(sorted(set(wrong)))} do not match the run's parameter "
               "sets and summary")


def _expected_trials(db: Database, run_id: int) -> set[tuple[object, ...]] | None:
    row = db.execute("SELECT r.idea_id, v.strategy_key, r.summary FROM runs r JOIN "
                     "rule_revisions v ON v.id = r.revision_id WHERE r.id = ?",
                     [run_id]).fetchone()
    if row is None:
        return None
    idea_id, key, summary = row
    try:
        return {(idea_id, key, runs.params_key(s["params"]),
                 validate.optional_number(s["net_sharpe"], "net_sharpe"))
                for s in json.loads(summary)["sets"]}
    except (CatalogueError, LookupError, ValueError, TypeError, AttributeError):
        return None


def _ids(ids: list[int]) -> str:
    shown = ", ".join(str(i) for i in ids[:SHOWN])
    return shown + (f" and {len(ids) - SHOWN} more" if len(ids) > SHOWN else "")
