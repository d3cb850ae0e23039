"""Checking a catalogue: SQLite's own integrity and foreign-key checks, the full-text indexes,
the schema version, the revision hashes, the stored P&L and the denormalised trial counts."""

from __future__ import annotations

import sqlite3

from hunchbook.store import db as dbmod
from hunchbook.store import migrations, pnl, revisions, runs
from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database


def problems(db: Database) -> list[str]:
    """Every problem found, one sentence each; an empty list means the catalogue is sound."""
    found = [f"integrity: {row[0]}" for row in db.execute("PRAGMA integrity_check")
             if row[0] != "ok"]
    found += [f"foreign key: {table} row {rowid} points at a missing {parent} row"
              for table, rowid, parent, _ in db.execute("PRAGMA foreign_key_check")]
    if found:
        return found  # the checks below read the tables; stop at a damaged file
    version = migrations.schema_version(db)
    if version != migrations.SCHEMA_VERSION:
        found.append(f"schema version {version}, expected {migrations.SCHEMA_VERSION}")
        return found
    try:
        with dbmod.write(db):
            db.execute("INSERT INTO idea_search (idea_search) VALUES ('integrity-check')")
    except sqlite3.DatabaseError as exc:
        found.append(f"full-text index: {exc}")
    missing = db.execute("SELECT count(*) FROM ideas WHERE id NOT IN "
                         "(SELECT rowid FROM idea_search)").fetchone()[0]
    if missing:
        found.append(f"full-text index: {missing} idea(s) missing")
    for rev_id, idea_id, text, digest in db.execute(
            "SELECT id, idea_id, text, sha256 FROM rule_revisions"):
        if revisions.sha256(text) != digest:
            found.append(f"rule revision {rev_id} of idea {idea_id}: text does not match its "
                         "SHA-256")
    for run_id, blob in db.execute("SELECT id, daily_pnl FROM runs"):
        try:
            pnl.decode(blob)
        except CatalogueError as exc:
            found.append(f"run {run_id}: {exc}")
    for idea_id, stored in db.execute("SELECT id, trial_count FROM ideas").fetchall():
        actual = runs.trial_count(db, idea_id)
        if actual != stored:
            found.append(f"idea {idea_id}: trial count {stored} stored, {actual} recorded")
    return found
