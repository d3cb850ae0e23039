"""Append-only records against plain SQLite tools (Python's sqlite3, as any SQLite program):
``REPLACE`` is refused, and ``hunchbook catalogue check`` finds a row rewritten by any means
that gets past the triggers.

SQLite's documentation (lang_conflict.html) is the reference for why ``REPLACE`` needs its own
refusal: it resolves a key conflict by deleting the old row, and that delete fires no delete
trigger unless recursive triggers are enabled.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.store import SCHEMA_VERSION, chain
from hunchbook.store.migrations import APPEND_ONLY
from tests.store.helpers import desk


@pytest.fixture
def path(tmp_path: Path) -> Path:
    """A desk catalogue that has also imported an idea (so every append-only table has rows)."""
    path = desk(tmp_path / "desk.sqlite")
    with Catalogue(tmp_path / "other.sqlite") as other:
        other.add_idea(title="Metals carry", hypothesis="Carry pays.", submitted_by="Ada")
        other.export_bundle(1, tmp_path / "idea.zip")
    with Catalogue(path) as cat:
        cat.import_bundle(tmp_path / "idea.zip", by="Ines")
    return path


def _rows(conn: sqlite3.Connection, table: str) -> list[tuple[object, ...]]:
    return conn.execute(f"SELECT * FROM {table} ORDER BY rowid").fetchall()


@pytest.mark.parametrize("table", APPEND_ONLY)
@pytest.mark.parametrize("recursive_triggers", [False, True])
def test_replace_through_plain_sqlite3_is_refused(path: Path, table: str,
                                                  recursive_triggers: bool) -> None:
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA recursive_triggers = {int(recursive_triggers)}")
    before = _rows(conn, table)
    assert before
    for verb in ("REPLACE", "INSERT OR REPLACE"):
        with pytest.raises(sqlite3.IntegrityError, match=f"{table} rows are append-only"):
            conn.execute(f"{verb} INTO {table} SELECT * FROM {table} LIMIT 1")
    conn.rollback()
    assert _rows(conn, table) == before
    conn.close()


def _replace(conn: sqlite3.Connection, table: str, row_id: int, column: str,
             value: object) -> None:
    """``REPLACE`` row ``row_id`` by a copy with one value changed."""
    columns = [r[1] for r in conn.execute(f"PRAGMA table_info({table})")]
    picked = ", ".join("?" if c == column else c for c in columns)
    conn.execute(f"REPLACE INTO {table} ({', '.join(columns)}) SELECT {picked} FROM {table} "
                 "WHERE id = ?", [value, row_id])


def test_replace_with_a_new_text_is_refused_and_leaves_the_entry(path: Path) -> None:
    """The issue's case: a journal entry rewritten by REPLACE through a plain SQLite tool."""
    conn = sqlite3.connect(path)
    with pytest.raises(sqlite3.IntegrityError, match="journal rows are append-only"):
        _replace(conn, "journal", 2, "text", "We never ran this.")
    conn.rollback()
    conn.close()
    with Catalogue(path, read_only=True) as cat:
        assert cat.entry(2).text != "We never ran this."
        assert cat.check() == []


def _previous_hash(conn: sqlite3.Connection, table: str, row_id: int) -> str:
    return conn.execute(f"SELECT row_hash FROM {table} WHERE id = ?", [row_id - 1]).fetchone()[0]


def _rehashed_edit(conn: sqlite3.Connection) -> None:
    """Edit entry 2 and recompute its own hash, as someone who knows the chain would."""
    conn.execute("UPDATE journal SET text = 'We never ran this.' WHERE id = 2")
    values = conn.execute(f"SELECT {', '.join(chain.COLUMNS['journal'])} FROM journal "
                          "WHERE id = 2").fetchone()
    conn.execute("UPDATE journal SET row_hash = ? WHERE id = 2",
                 [chain.digest("journal", _previous_hash(conn, "journal", 2), values)])


#: (name, triggers dropped, the edit, the problem ``catalogue check`` must print)
TAMPERING: list[tuple[str, list[str], Callable[[sqlite3.Connection], object], str]] = [
    ("journal replaced", ["journal_no_replace"],
     lambda c: _replace(c, "journal", 2, "text", "We never ran this."), "journal: row(s) 2"),
    ("journal updated", ["journal_no_update"],
     lambda c: c.execute("UPDATE journal SET author = 'Someone else' WHERE id = 3"),
     "journal: row(s) 3"),
    ("journal row deleted", ["journal_no_delete"],
     lambda c: c.execute("DELETE FROM journal WHERE id = 3"), "journal: row(s) 4"),
    ("journal edited, own hash recomputed", ["journal_no_update"], _rehashed_edit,
     "journal: row(s) 3"),
    ("run verdict replaced", ["runs_no_replace"],
     lambda c: _replace(c, "runs", 1, "verdict_label", "passes"), "runs: row(s) 1"),
    ("revision author updated", ["rule_revisions_no_update"],
     lambda c: c.execute("UPDATE rule_revisions SET saved_by = 'Someone else'"),
     "rule_revisions: row(s) 1"),
    ("pre-registration reason updated", ["preregistrations_no_update"],
     lambda c: c.execute("UPDATE preregistrations SET reason = 'after the fact'"),
     "preregistrations: row(s) 1"),
    ("review comments updated", ["reviews_no_update"],
     lambda c: c.execute("UPDATE reviews SET comments = 'Looked fine.' WHERE id = 1"),
     "reviews: row(s) 1"),
    ("import record updated", ["imports_no_update"],
     lambda c: c.execute("UPDATE imports SET imported_by = 'Someone else'"),
     "imports: row(s) 1"),
]
CHANGED = " changed, replaced or removed after they were written (their hash chain does not match)"


@pytest.mark.parametrize(("dropped", "edit", "problem"), [t[1:] for t in TAMPERING],
                         ids=[t[0] for t in TAMPERING])
def test_check_finds_a_row_rewritten_past_the_triggers(
        path: Path, capsys: pytest.CaptureFixture[str], dropped: list[str],
        edit: Callable[[sqlite3.Connection], object], problem: str) -> None:
    assert main(["catalogue", "check", "--catalogue", str(path)]) == 0
    capsys.readouterr()
    conn = sqlite3.connect(path)
    for trigger in dropped:
        conn.execute(f"DROP TRIGGER {trigger}")
    edit(conn)
    conn.commit()
    conn.close()
    assert main(["catalogue", "check", "--catalogue", str(path)]) == 1
    out, err = capsys.readouterr()
    assert err == ""
    assert out.splitlines() == [f"problem: {problem}{CHANGED}",
                                f"{path}: schema version {SCHEMA_VERSION}; 1 problem"]


def test_check_finds_trials_that_no_longer_match_their_run(
        path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Trials are not chained but derived from the run: a changed trial Sharpe ratio (which
    would move the deflated Sharpe) is found by comparing them."""
    conn = sqlite3.connect(path)
    conn.execute("DROP TRIGGER trials_no_update")
    conn.execute("UPDATE trials SET net_sharpe = 2.5")
    conn.commit()
    conn.close()
    assert main(["catalogue", "check", "--catalogue", str(path)]) == 1
    out, err = capsys.readouterr()
    assert (err, out.splitlines()[0]) == (
        "", "problem: trials of run(s) 1 do not match the run's parameter sets and summary")


def test_check_finds_a_search_index_edited_behind_its_back_without_writing(path: Path) -> None:
    """FTS5's own 'integrity-check' command is the reference; the catalogue runs it on a copy,
    so it also works where the catalogue is opened for reading only."""
    conn = sqlite3.connect(path)
    conn.execute("UPDATE idea_search_content SET c0 = 'A title the index never saw' "
                 "WHERE id = 1")
    conn.commit()
    with pytest.raises(sqlite3.DatabaseError):
        conn.execute("INSERT INTO idea_search (idea_search) VALUES ('integrity-check')")
    conn.close()
    before = path.read_bytes()
    with Catalogue(path, read_only=True) as cat:
        assert cat.check() == ["full-text index: database disk image is malformed"]
    assert path.read_bytes() == before
