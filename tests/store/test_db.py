"""The catalogue file itself: pragmas, append-only records, online backup, foreign files."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.store import SCHEMA_VERSION
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import RULES, accepted_idea, run_args


def test_connection_uses_wal_foreign_keys_full_sync_and_a_busy_timeout(cat: Catalogue) -> None:
    """The issue's storage requirements, read back from SQLite's own pragmas (SQLite docs:
    journal_mode, foreign_keys, synchronous 2 = FULL, busy_timeout in ms)."""
    pragma = lambda name: cat.db.execute(f"PRAGMA {name}").fetchone()[0]  # noqa: E731
    assert pragma("journal_mode") == "wal"
    assert pragma("foreign_keys") == 1
    assert pragma("synchronous") == 2
    assert pragma("busy_timeout") >= 10_000
    assert pragma("user_version") == SCHEMA_VERSION == cat.schema_version()


@pytest.mark.parametrize("table", ["journal", "rule_revisions", "runs", "reviews",
                                   "preregistrations", "trials"])
def test_written_records_can_be_neither_updated_nor_deleted(cat: Catalogue, table: str) -> None:
    """Append-only is enforced by the database, not only by the API."""
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    cat.record_run(idea, revision_id=rev.id, by="Nia",
                   **run_args([{"fast": 5.0, "slow": 50.0}], [0.4]))
    column = "run_id" if table == "trials" else "id"
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        cat.db.execute(f"UPDATE {table} SET {column} = {column}")
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        cat.db.execute(f"DELETE FROM {table}")
    cat.db.conn.rollback()


def test_ideas_are_never_deleted(cat: Catalogue) -> None:
    cat.add_idea(title="t", hypothesis="h", submitted_by="Nia")
    with pytest.raises(sqlite3.IntegrityError, match="shelve"):
        cat.db.execute("DELETE FROM ideas")
    cat.db.conn.rollback()


def test_foreign_keys_are_enforced(cat: Catalogue) -> None:
    with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
        cat.db.execute("INSERT INTO journal (uuid, idea_id, kind, text, author, at) "
                       "VALUES ('u', 999, 'note', 't', 'x', 'now')")
    cat.db.conn.rollback()


def test_backup_is_a_complete_catalogue_and_never_overwrites(cat: Catalogue,
                                                             tmp_path: Path) -> None:
    idea = accepted_idea(cat)
    cat.add_entry(idea_id=idea, kind="note", text="before the backup", by="Theo")
    target = tmp_path / "copy.sqlite"
    cat.backup(target)
    cat.add_entry(idea_id=idea, kind="note", text="after the backup", by="Theo")
    with Catalogue(target, create=False) as copy:
        assert copy.check() == []
        texts = [e.text for e in copy.journal(idea)]
    assert "before the backup" in texts and "after the backup" not in texts
    with pytest.raises(CatalogueError, match="already exists"):
        cat.backup(target)


def test_a_foreign_sqlite_file_is_refused_untouched(tmp_path: Path) -> None:
    path = tmp_path / "other.sqlite"
    with sqlite3.connect(path) as conn:
        conn.execute("CREATE TABLE accounts (id INTEGER)")
    with pytest.raises(CatalogueError, match="not a Hunchbook catalogue"):
        Catalogue(path)
    with sqlite3.connect(path) as conn:
        tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master")}
    assert tables == {"accounts"}


def test_a_non_sqlite_file_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "notes.sqlite"
    path.write_text("just some notes, not a database\n" * 100)
    with pytest.raises(CatalogueError, match="not a catalogue"):
        Catalogue(path)


def test_a_missing_file_is_refused_when_create_is_false(tmp_path: Path) -> None:
    with pytest.raises(CatalogueError, match="no catalogue file"):
        Catalogue(tmp_path / "missing.sqlite", create=False)
    assert not (tmp_path / "missing.sqlite").exists()


def test_a_catalogue_from_a_newer_version_is_refused(cat_path: Path) -> None:
    Catalogue(cat_path).close()
    with sqlite3.connect(cat_path) as conn:
        conn.execute("INSERT INTO _sqlite_migrations (migration_set, name, applied_at) "
                     "VALUES ('hunchbook', '0099_from_the_future', 'later')")
    with pytest.raises(CatalogueError, match="newer Hunchbook"):
        Catalogue(cat_path)


def test_check_reports_a_tampered_rule_revision(cat: Catalogue) -> None:
    """check() recomputes each revision's SHA-256 (hashlib as the reference)."""
    idea = accepted_idea(cat)
    cat.save_rules(idea, RULES, by="Nia")
    assert cat.check() == []
    cat.db.execute("DROP TRIGGER rule_revisions_no_update")
    cat.db.execute("UPDATE rule_revisions SET text = text || '# edited in place'")
    cat.db.conn.commit()
    assert any("does not match its SHA-256" in p for p in cat.check())
