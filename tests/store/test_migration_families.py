"""Migration 7: variant links and desk settings appear append-only; the reviews move to a table
that also takes the promotion review's decisions, every row keeping its id and chained hash."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.store.migrations import migration_names
from tests.store.test_migrations import _build_old


def _reviews(path: Path) -> list[tuple[object, ...]]:
    with sqlite3.connect(path) as conn:
        return conn.execute("SELECT * FROM reviews ORDER BY id").fetchall()


def test_version_6_reviews_keep_their_rows_and_hashes(tmp_path: Path) -> None:
    assert migration_names()[6] == "0007_families_and_four_eyes"
    path = tmp_path / "v6.sqlite"
    _build_old(path, 6)
    before = _reviews(path)
    assert len(before) == 1 and before[0][-1]  # the chained hash written by version 5
    with Catalogue(path) as cat:
        assert _reviews(path) == before
        assert cat.reviews(1)[0].kind == "idea" and not cat.reviews(1)[0].by_author
        assert cat.check() == []
        names = {r[0] for r in cat.db.execute("SELECT name FROM sqlite_master")}
        assert {"reviews_by_idea", "reviews_no_update", "reviews_no_delete",
                "reviews_no_replace", "variant_links_no_update", "variant_links_no_delete",
                "variant_links_no_replace", "desk_settings_no_update",
                "desk_settings_no_delete", "desk_settings_no_replace"} <= names
        assert "reviews_new" not in names


@pytest.mark.parametrize("sql", [
    "UPDATE reviews SET comments = 'changed'",
    "DELETE FROM reviews",
    "INSERT OR REPLACE INTO reviews (id, uuid, idea_id, reviewer, checklist, decision, "
    "comments, at) VALUES (1, 'v9', 1, 'Theo', '{}', 'accept', 'x', 't')",
])
def test_migrated_reviews_stay_append_only(tmp_path: Path, sql: str) -> None:
    path = tmp_path / "v6.sqlite"
    _build_old(path, 6)
    Catalogue(path).close()
    with sqlite3.connect(path) as conn, pytest.raises(sqlite3.DatabaseError,
                                                      match="append-only"):
        conn.execute(sql)


def test_the_new_decisions_are_taken_and_others_refused(tmp_path: Path) -> None:
    path = tmp_path / "v6.sqlite"
    _build_old(path, 6)
    Catalogue(path).close()
    with sqlite3.connect(path) as conn:
        for n, decision in enumerate(("promote", "decline"), start=2):
            conn.execute("INSERT INTO reviews (id, uuid, idea_id, reviewer, checklist, decision, "
                         "comments, at) VALUES (?, ?, 1, 'Theo', '{}', ?, '', 't')",
                         [n, f"v{n}", decision])
        with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
            conn.execute("INSERT INTO reviews (id, uuid, idea_id, reviewer, checklist, "
                         "decision, comments, at) VALUES (9, 'v9', 1, 'T', '{}', 'vibes', '', "
                         "'t')")
        with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
            conn.execute("INSERT INTO variant_links (id, uuid, idea_id, parent_id, reason, "
                         "set_by, set_at) VALUES (1, 'l1', 1, 1, 'r', 'n', 't')")
        with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
            conn.execute("INSERT INTO desk_settings (id, uuid, key, value, reason, set_by, "
                         "set_at) VALUES (1, 's1', 'one_person_desk', 'maybe', 'r', 'n', 't')")
