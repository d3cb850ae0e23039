"""Typed desk settings: the desk's capital (an amount) beside ``one_person_desk`` (on/off).

Stored as text in the append-only, hash-chained ``desk_settings`` table (an amount as its plain
decimal text); read back as a number; journalled with a reason in words; refused in one line
when it is not a positive amount; rows written before the amounts existed still read and still
verify after the migration. House rule (common practice, no source): a capital is a positive
amount of money, and a change to a desk-wide setting says who, when and why.
"""

from __future__ import annotations

import math
import sqlite3
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.store import SCHEMA_VERSION, settings
from hunchbook.store.entry_text import sentence
from hunchbook.store.errors import CatalogueError
from hunchbook.store.migrations import migration_names
from hunchbook.store.opening import open_catalogue_db
from tests.store.test_migrations import _build_old


@pytest.fixture
def cat(tmp_path: Path):
    with Catalogue(tmp_path / "desk.sqlite", create=True) as c:
        yield c


def _stored(cat: Catalogue) -> list[tuple[str, str]]:
    return [tuple(r) for r in cat.db.execute("SELECT key, value FROM desk_settings ORDER BY id")]


def test_the_capital_round_trips_as_decimal_text_and_the_chain_verifies(cat: Catalogue) -> None:
    assert cat.desk_setting("capital") is None  # not set by default
    setting = cat.set_desk_setting("capital", 1_000_000, by="Nia", reason="The desk's allocation.")
    assert (setting.key, setting.value, setting.set_by) == ("capital", 1_000_000.0, "Nia")
    assert cat.desk_setting("capital") == 1_000_000.0
    cat.set_desk_setting("capital", "2,500,000.5", by="Nia", reason="More capital.")
    cat.set_desk_setting("capital", None, by="Nia", reason="Each rule file gives its own.")
    assert cat.desk_setting("capital") is None
    assert _stored(cat) == [("capital", "1000000"), ("capital", "2500000.5"), ("capital", "none")]
    assert [s.value for s in cat.desk_settings()] == [1_000_000.0, 2_500_000.5, None]
    assert cat.set_desk_setting("capital", "none", by="Nia", reason="again").value is None
    assert len(cat.desk_settings()) == 3  # the value in force again: nothing written
    assert cat.check() == []


def test_the_journal_reads_the_amount_with_thousands_separators(cat: Catalogue) -> None:
    cat.set_desk_setting("capital", "1000000", by="Nia", reason="The desk's allocation.")
    cat.set_desk_setting("capital", None, by="Nia", reason="Back to the rule files.")
    set_entry, unset_entry = cat.journal(kind="decision")[-2:]
    assert "capital set to 1000000" in set_entry.text  # the stored text, never changed
    assert sentence(set_entry).startswith("Desk capital set to 1,000,000 (The capital, in ")
    assert sentence(set_entry).endswith("): The desk's allocation.")
    assert sentence(unset_entry).startswith("Desk capital unset (")


def test_the_one_person_desk_sentence_keeps_its_meaning_whole(cat: Catalogue) -> None:
    """The meaning holds "): " itself; the reason after it is read once, not twice."""
    cat.set_desk_setting("one_person_desk", "on", by="Nia", reason="alone")
    shown = sentence(cat.journal(kind="decision")[-1])
    assert shown.count("for a desk of one") == 1 and shown.endswith("a desk of one.): alone")


@pytest.mark.parametrize("value, found", [
    (0, "found 0"), (-5, "found -5"), ("lots", "found 'lots'"), (math.nan, "found nan"),
    (math.inf, "found inf"), (True, "found True"), ("1e6x", "found '1e6x'"),
])
def test_a_bad_amount_is_refused_in_one_line(cat: Catalogue, value: object, found: str) -> None:
    with pytest.raises(CatalogueError) as caught:
        cat.set_desk_setting("capital", value, by="Nia", reason="r")
    message = str(caught.value)
    assert message.startswith("capital: expected a positive amount in the run currency")
    assert message.endswith(found) and "\n" not in message
    assert cat.desk_settings() == [] and cat.journal(kind="decision") == []


def test_the_table_refuses_a_value_no_kind_writes(cat: Catalogue) -> None:
    """Behind the API's back SQLite's CHECK still refuses text that is no setting's value."""
    for bad in ("maybe", "-5", "1e6", "0", "1.2.3"):
        with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
            cat.db.execute("INSERT INTO desk_settings (id, uuid, key, value, reason, set_by, "
                           "set_at) VALUES (9, 'x', 'capital', ?, 'r', 'n', 't')", [bad])


def test_rows_written_before_amounts_existed_still_read_and_verify(tmp_path: Path) -> None:
    assert migration_names()[9] == "0010_typed_desk_settings"
    path = tmp_path / "v9.sqlite"
    _build_old(path, 9)
    db = open_catalogue_db(path, stop_before="0010_typed_desk_settings")
    with db.conn:
        settings.insert(db, "one_person_desk", True, reason="alone", by="Nia",
                        at="2025-01-01T00:00:00.000000Z")
    before = list(db.execute("SELECT * FROM desk_settings").fetchall())
    db.conn.close()
    with Catalogue(path) as cat:
        assert cat.schema_version() == SCHEMA_VERSION
        assert list(cat.db.execute("SELECT * FROM desk_settings").fetchall()) == before
        assert cat.desk_setting("one_person_desk") is True
        assert cat.check() == []
        cat.set_desk_setting("capital", 750_000, by="Nia", reason="The desk's allocation.")
        assert cat.check() == []
        names = {r[0] for r in cat.db.execute("SELECT name FROM sqlite_master")}
        assert {"desk_settings_no_update", "desk_settings_no_delete",
                "desk_settings_no_replace"} <= names and "desk_settings_new" not in names
        with pytest.raises(sqlite3.DatabaseError, match="append-only"):
            cat.db.execute("UPDATE desk_settings SET value = 'off'")


def test_the_command_line_sets_lists_and_refuses(tmp_path: Path, monkeypatch,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia")
    path = tmp_path / "desk.sqlite"
    Catalogue(path, create=True).close()
    c = ["--catalogue", str(path)]
    assert main(["catalogue", "set", *c, "capital", "1000000", "--reason", "allocation"]) == 0
    assert capsys.readouterr().out.startswith("capital is 1,000,000 (set by Nia on ")
    assert main(["catalogue", "set", *c, "capital", "-1", "--reason", "x"]) == 1
    captured = capsys.readouterr()
    assert captured.err == ("hunchbook: error: capital: expected a positive amount in the run "
                            "currency (such as 1000000), or none to unset it, found '-1'\n")
    assert main(["catalogue", "settings", *c]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0].startswith("one_person_desk: off  (")
    assert lines[1].startswith("capital: 1,000,000  (The capital, in the run currency")
    assert lines[2].endswith("capital 1,000,000 by Nia: allocation") and len(lines) == 3
    assert main(["catalogue", "settings", *c, "--json"]) == 0
    assert '"capital": 1000000.0' in capsys.readouterr().out
    assert main(["catalogue", "check", *c]) == 0
    assert capsys.readouterr().out.endswith(f"schema version {SCHEMA_VERSION}; ok\n")
