"""Schema migrations from every earlier version, with data preserved and a backup first."""

from __future__ import annotations

import json
import sqlite3
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue, CatalogueError
from hunchbook.store import migrations, pnl, revisions
from hunchbook.store.migrations import SCHEMA_VERSION, migration_names
from hunchbook.store.opening import open_catalogue_db
from tests.store.helpers import RULES, daily_pnl

EARLIER = list(range(1, SCHEMA_VERSION))  # version 0 (no file) is covered by every other test


def _build_old(path: Path, version: int) -> dict[str, object]:
    """A catalogue at ``version`` holding records written as that version's code wrote them.

    From version 5 on the rows carry their chained hashes: the records are written at version
    4 and the file brought to ``version`` by the migrations (which compute the hashes exactly
    as that version's code writes them); the backup of that step is removed.
    """
    if version >= 5:
        old = _build_old(path, 4)
        open_catalogue_db(path, stop_before=migration_names()[version]).close()
        for backup in path.parent.glob(f"{path.stem}.v4-backup-*"):
            backup.unlink()
        return old
    stop = migration_names()[version]
    db = open_catalogue_db(path, stop_before=stop)
    assert db.execute("PRAGMA user_version").fetchone()[0] == version
    digest, key, space = revisions.analyse(RULES)
    frame = daily_pnl()
    with db.conn:
        db.execute("""INSERT INTO ideas (id, uuid, title, hypothesis, rationale, rationale_kind,
            source_kind, submitted_by, markets, tags, stage, created_at, updated_at) VALUES
            (1, 'a5c1e6b0-0000-4000-8000-000000000001', 'Soybean crush spread',
             'The crush margin reverts', 'Processors arbitrage the margin', 'structural', 'book',
             'Nia', '["SOYBEAN"]', '["spread"]', 'tested', '2024-01-01T00:00:00.000000Z',
             '2024-02-01T00:00:00.000000Z')""")
        db.execute("INSERT INTO rule_revisions VALUES (1, 'r1', 1, 1, ?, ?, ?, ?, "
                   "'2024-01-02T00:00:00.000000Z', 'Nia')",
                   [RULES, digest, key, json.dumps(space)])
        for run_id, sets, sharpes, label in ((1, ["{\"fast\": 5.0}", "{\"fast\": 10.0}"],
                                              [0.2, 0.5], "no_edge"),
                                             (2, ["{\"fast\": 10.0}", "{\"fast\": 20.0}"],
                                              [0.6, 0.1], "passes")):
            param_sets = [json.loads(p) for p in sets]
            summary = {"sets": [{"params": p, "net_sharpe": x}
                                for p, x in zip(param_sets, sharpes, strict=True)]}
            db.execute("INSERT INTO runs VALUES (?, ?, 1, 1, ?, 2, 'fp', '0.0.9', ?, '{}', "
                       "'{}', ?, '{}', ?, 0, ?, ?, 'Nia')",
                       [run_id, f"run{run_id}", json.dumps(param_sets), json.dumps(summary), label,
                        max(sharpes), pnl.encode(frame),
                        f"2024-01-0{2 + run_id}T00:00:00.000000Z"])
            for params, sharpe in zip(sets, sharpes, strict=True):
                db.execute("INSERT INTO trials VALUES (?, 1, ?, ?, ?)",
                           [run_id, key, params, sharpe])
        db.execute("INSERT INTO journal (uuid, idea_id, kind, text, author, at) VALUES "
                   "('j1', 1, 'note', 'Processors hedge the crush margin ahead of harvest', "
                   "'Theo', '2024-01-05T00:00:00.000000Z')")
        db.execute("INSERT INTO reviews VALUES (1, 'v1', 1, 'Ines', '{}', 'accept', 'ok', "
                   "'2024-01-02T00:00:00.000000Z')")
        if version >= 3:  # from version 3 on, recording a run also set the idea's summary
            db.execute("UPDATE ideas SET trial_count = 3, last_verdict = 'passes', "
                       "last_net_sharpe = 0.6, last_run_at = '2024-01-04T00:00:00.000000Z'")
    db.close()
    return {"frame": frame}


@pytest.mark.parametrize("version", EARLIER)
def test_migrating_from_an_earlier_version_keeps_every_record(tmp_path: Path,
                                                              version: int) -> None:
    path = tmp_path / "old.sqlite"
    old = _build_old(path, version)
    with Catalogue(path) as cat:
        assert cat.schema_version() == SCHEMA_VERSION
        idea = cat.idea(1)
        assert (idea.title, idea.markets, idea.tags, idea.stage) == (
            "Soybean crush spread", ("SOYBEAN",), ("spread",), "tested")
        assert [r.sha256 for r in cat.revisions(1)] == [revisions.sha256(RULES)]
        assert [e.text for e in cat.journal(1)] == [
            "Processors hedge the crush margin ahead of harvest"]
        assert [r.decision for r in cat.reviews(1)] == ["accept"]
        assert cat.run(2).daily_pnl.equals(old["frame"])
        # runs recorded in an earlier shape keep their provenance; their figures are not made up
        assert cat.run(2).result is None and cat.run(2).verdict_label == "passes"
        # Version 3 derived the summary columns from the old runs (fast 5, 10, 20: 3 trials;
        # the latest run by time decides the last verdict); later versions keep them.
        assert (idea.trial_count, idea.last_verdict, idea.last_net_sharpe) == (3, "passes", 0.6)
        assert cat.trial_count(1) == 3
        # The search index covers the rows already present: idea text and journal text.
        assert [s.id for s in cat.list_ideas(text="arbitrage")] == [1]
        assert [s.id for s in cat.list_ideas(text="harvest")] == [1]
        assert cat.check() == []


@pytest.mark.parametrize("version", EARLIER)
def test_a_backup_at_the_old_version_is_made_before_migrating(tmp_path: Path,
                                                             version: int) -> None:
    path = tmp_path / "old.sqlite"
    _build_old(path, version)
    Catalogue(path).close()
    backups = sorted(tmp_path.glob(f"old.v{version}-backup-*.sqlite"))
    assert len(backups) == 1
    with sqlite3.connect(backups[0]) as conn:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == version
        assert conn.execute("SELECT title FROM ideas").fetchall() == [("Soybean crush spread",)]
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"


def test_reopening_a_current_catalogue_changes_nothing_and_makes_no_backup(tmp_path: Path) -> None:
    path = tmp_path / "c.sqlite"
    Catalogue(path).close()
    applied = migrations.MIGRATIONS.applied(open_catalogue_db(path))
    Catalogue(path).close()
    assert migrations.MIGRATIONS.applied(open_catalogue_db(path)) == applied
    assert [p.name for p in tmp_path.iterdir() if "backup" in p.name] == []


def test_migrations_are_applied_in_registration_order(tmp_path: Path) -> None:
    db = open_catalogue_db(tmp_path / "c.sqlite")
    assert [m.name for m in migrations.MIGRATIONS.applied(db)] == migration_names()
    assert migration_names() == sorted(migration_names())


def test_opening_an_older_catalogue_for_reading_migrates_it_then_refuses_writes(
        tmp_path: Path) -> None:
    """Reading needs the current schema: a writable older catalogue is upgraded (after its
    backup) even when opened for reading only; the connection then refuses every write."""
    path = tmp_path / "old.sqlite"
    _build_old(path, SCHEMA_VERSION - 1)
    with Catalogue(path, read_only=True) as cat:
        assert cat.schema_version() == SCHEMA_VERSION
        assert [e.text for e in cat.journal(1)] == [
            "Processors hedge the crush margin ahead of harvest"]
        with pytest.raises(CatalogueError) as caught:
            cat.add_entry(idea_id=1, kind="note", text="more", by="Theo")
        assert str(caught.value) == (f"{path}: cannot write to this catalogue: it was opened "
                                     "for reading only; nothing was written")
    assert len(list(tmp_path.glob(f"old.v{SCHEMA_VERSION - 1}-backup-*.sqlite"))) == 1
    with Catalogue(path, read_only=True) as cat:
        assert len(cat.journal(1)) == 1 and cat.check() == []
