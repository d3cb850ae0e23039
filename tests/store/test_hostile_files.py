"""The catalogue against files a user can really have: another application's SQLite database,
a damaged page, an empty file, read-only files and folders.

Every command goes through ``hunchbook.cli.main``, in process or (for read-only conditions,
which need a user that ``chmod`` binds) in a subprocess run as an unprivileged user. A refused
command prints exactly one line, no traceback, and leaves the user's files as they were: same
names, bytes and modification times.
"""

from __future__ import annotations

import json
import os
import shutil
import sqlite3
import subprocess
import sys
import tempfile
from collections.abc import Iterator
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.store import SCHEMA_VERSION
from hunchbook.store.migrations import migration_names
from hunchbook.store.opening import open_catalogue_db
from tests.store.helpers import desk

#: The conventional unprivileged user and group ("nobody").
NOBODY = 65534

Snapshot = dict[str, tuple[bytes, int]]


def snapshot(folder: Path) -> Snapshot:
    """Every file in the folder: its bytes and modification time (ns)."""
    return {p.name: (p.read_bytes(), p.stat().st_mtime_ns) for p in sorted(folder.iterdir())
            if p.is_file()}


def cli(capsys: pytest.CaptureFixture[str], *argv: str | Path) -> tuple[int, str, str]:
    """Exit status, standard output and standard error of one command, in process."""
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(autouse=True)
def _user(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("HUNCHBOOK_USER", "Nia")


# -- another application's SQLite file ----------------------------------------------------------
def _foreign(path: Path, kind: str) -> None:
    with sqlite3.connect(path) as conn:
        if kind == "wal":
            conn.execute("PRAGMA journal_mode = wal")
        if kind == "marked":  # no tables yet, but another program has claimed the file
            conn.execute("PRAGMA application_id = 1234")
        else:
            conn.execute("CREATE TABLE accounts (id INTEGER PRIMARY KEY, owner TEXT)")
            conn.execute("INSERT INTO accounts (owner) VALUES ('someone else')")
    conn.close()


@pytest.mark.parametrize("kind", ["rollback", "wal", "marked"])
def test_another_applications_sqlite_file_is_refused_byte_for_byte_untouched(
        tmp_path: Path, capsys: pytest.CaptureFixture[str], kind: str) -> None:
    folder = tmp_path / "theirs"
    folder.mkdir()
    path = folder / "ledger.db"
    _foreign(path, kind)
    bundle = tmp_path / "idea.zip"
    with Catalogue(desk(tmp_path / "mine.sqlite")) as mine:
        mine.export_bundle(1, bundle)
    before = snapshot(folder)
    reason = ("another program has marked it as its own" if kind == "marked"
              else "it has other tables and no schema history")
    line = f"hunchbook: error: {path}: this SQLite file is not a Hunchbook catalogue ({reason})\n"
    for argv in (["ideas", "list"], ["ideas", "show", "1"], ["catalogue", "check"],
                 ["journal", "add", "a note"], ["ideas", "add", "--title", "t",
                                                "--hypothesis", "h"],
                 ["ideas", "import", bundle], ["catalogue", "backup", tmp_path / "copy.db"]):
        assert cli(capsys, *argv, "--catalogue", path) == (1, "", line), argv
        assert snapshot(folder) == before, argv
    assert not (tmp_path / "copy.db").exists()


# -- a damaged page ------------------------------------------------------------------------------
def _overwrite_page(path: Path, table: str) -> None:
    """Fill the root page of ``table`` with garbage (the page number and size from SQLite's
    own ``sqlite_master.rootpage`` and ``PRAGMA page_size``)."""
    with sqlite3.connect(path) as conn:
        page = conn.execute("SELECT rootpage FROM sqlite_master WHERE name = ?",
                            [table]).fetchone()[0]
        size = conn.execute("PRAGMA page_size").fetchone()[0]
    conn.close()
    with path.open("r+b") as handle:
        handle.seek((page - 1) * size)
        handle.write(bytes(range(256)) * (size // 256))


@pytest.mark.parametrize("with_backup", [True, False])
def test_a_damaged_page_gives_one_line_naming_check_and_the_latest_backup(
        tmp_path: Path, capsys: pytest.CaptureFixture[str], with_backup: bool) -> None:
    path = tmp_path / "desk.sqlite"
    if with_backup:  # a catalogue from the previous version: opening it makes the backup
        open_catalogue_db(path, stop_before=migration_names()[-1]).close()
    desk(path)
    backups = sorted(tmp_path.glob("desk.v*-backup-*.sqlite"))
    assert len(backups) == (1 if with_backup else 0)
    _overwrite_page(path, "ideas")
    before = snapshot(tmp_path)
    where = (f"the newest beside the file is {backups[0]}" if with_backup
             else "none is beside the file: Hunchbook makes one there only before a schema "
                  "upgrade")
    line = (f"hunchbook: error: {path}: the catalogue file is damaged (SQLite: database disk "
            f"image is malformed); run 'hunchbook catalogue check --catalogue {path}' to see "
            f"what is wrong, and restore your latest backup ({where})\n")
    for argv in (["ideas", "list"], ["ideas", "show", "1"], ["journal", "add", "--idea", "1",
                                                            "Re-ran on the longer history."],
                 ["journal", "add", "A general note."]):
        assert cli(capsys, *argv, "--catalogue", path) == (1, "", line), argv
        assert snapshot(tmp_path) == before, argv

    # catalogue check reports what SQLite's own check of the table finds (plain sqlite3 as
    # the reference), and exits 1.
    with sqlite3.connect(path) as conn:
        try:
            found = [r[0] for r in conn.execute("PRAGMA integrity_check(ideas)") if r[0] != "ok"]
        except sqlite3.DatabaseError as exc:
            found = [str(exc)]
    conn.close()
    code, out, err = cli(capsys, "catalogue", "check", "--catalogue", path)
    assert (code, err) == (1, "")
    assert out.splitlines() == [*(f"problem: integrity: table ideas: {f}" for f in found),
                                f"{path}: schema version {SCHEMA_VERSION}; {len(found)} "
                                f"problem{'' if len(found) == 1 else 's'}"]
    assert snapshot(tmp_path) == before


def test_check_reports_a_file_too_damaged_to_open(tmp_path: Path,
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    """Garbage over page 1 after the 100-byte file header (the schema's own page)."""
    path = desk(tmp_path / "desk.sqlite")
    with path.open("r+b") as handle:
        handle.seek(100)
        handle.write(b"\xab" * 3_996)
    before = snapshot(tmp_path)
    assert cli(capsys, "catalogue", "check", "--catalogue", path) == (
        1, "problem: the catalogue file is damaged (SQLite: database disk image is malformed)\n"
           f"{path}: 1 problem\n", "")
    assert snapshot(tmp_path) == before


def test_a_table_dropped_by_another_tool_gives_one_line(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = desk(tmp_path / "desk.sqlite")
    with sqlite3.connect(path) as conn:
        conn.execute("DROP TABLE reviews")
    conn.close()
    assert cli(capsys, "ideas", "show", "1", "--catalogue", path) == (
        1, "", f"hunchbook: error: {path}: the catalogue file is not as Hunchbook wrote it "
               f"(SQLite: no such table: reviews); run 'hunchbook catalogue check --catalogue "
               f"{path}' to see what is wrong, and restore your latest backup (none is beside "
               "the file: Hunchbook makes one there only before a schema upgrade)\n")


# -- an empty file, and reads that write nothing -------------------------------------------------
READS = (["ideas", "list"], ["ideas", "show", "1"], ["journal", "list"], ["runs", "list"],
         ["catalogue", "check"])


def test_an_empty_file_is_refused_like_a_missing_one_and_nothing_is_written(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    empty, missing = tmp_path / "empty.sqlite", tmp_path / "missing.sqlite"
    empty.touch()
    os.utime(empty, ns=(1_000_000_000, 1_000_000_000))
    before = snapshot(tmp_path)
    for argv in (*READS, ["journal", "add", "a note"], ["ideas", "export", "1", "b.zip"],
                 ["catalogue", "backup", tmp_path / "copy.sqlite"]):
        assert cli(capsys, *argv, "--catalogue", empty) == (
            1, "", f"hunchbook: error: {empty}: the file is empty: there is no catalogue in "
                   "it\n"), argv
        assert cli(capsys, *argv, "--catalogue", missing) == (
            1, "", f"hunchbook: error: {missing}: no catalogue file here\n"), argv
        assert snapshot(tmp_path) == before, argv
    # Like a missing file, an empty one becomes a catalogue when a command that adds is asked.
    assert cli(capsys, "ideas", "add", "--title", "t", "--hypothesis", "h", "--catalogue",
               empty)[0] == 0
    with Catalogue(empty, read_only=True) as cat:
        assert [i.title for i in cat.list_ideas()] == ["t"]


def test_reading_commands_change_nothing(tmp_path: Path,
                                        capsys: pytest.CaptureFixture[str]) -> None:
    folder = tmp_path / "desk"
    folder.mkdir()
    path = desk(folder / "desk.sqlite")
    before = snapshot(folder)
    for argv in (*READS, ["ideas", "export", "1", tmp_path / "idea.zip"],
                 ["catalogue", "backup", tmp_path / "copy.sqlite"]):
        code, _, err = cli(capsys, *argv, "--catalogue", path)
        assert (code, err) == (0, ""), argv
        assert snapshot(folder) == before, argv


def test_a_reading_command_never_creates_the_default_catalogue(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
        capsys: pytest.CaptureFixture[str]) -> None:
    default = tmp_path / "data" / "catalogue.sqlite"
    monkeypatch.setenv("HUNCHBOOK_CATALOGUE", str(default))
    assert cli(capsys, "ideas", "list") == (
        1, "", f"hunchbook: error: {default}: no catalogue here yet: the first 'hunchbook "
               "ideas add' makes one (or give --catalogue PATH)\n")
    assert not default.parent.exists()


# -- read-only files and folders, as a user whom chmod binds -------------------------------------
DRIVER = """
import contextlib, io, json, os, sys, traceback
from hunchbook.cli import main
probe, commands = sys.argv[1], json.loads(sys.argv[2])
try:  # is the read-only condition real for this user? (root would write regardless)
    if os.path.isdir(probe):
        open(os.path.join(probe, ".probe"), "x").close()
    else:
        open(probe, "r+b").close()
    writable = True
except PermissionError:
    writable = False
results = []
for argv in commands:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main(argv)
        except BaseException:
            traceback.print_exc()
            code = None
    results.append([code, out.getvalue(), err.getvalue()])
print(json.dumps({"writable": writable, "results": results}))
"""


def _unprivileged() -> list[str]:
    """The command prefix that runs as a user whom file permissions bind."""
    if os.geteuid() != 0:
        return []
    setpriv = shutil.which("setpriv")
    if setpriv is None:
        pytest.skip("running as root, which writes read-only files regardless, and setpriv "
                    "(util-linux) is not installed to run the commands as another user")
    return [setpriv, f"--reuid={NOBODY}", f"--regid={NOBODY}", "--clear-groups"]


def run_unprivileged(probe: Path, commands: list[list[str | Path]], *,
                     read_only: bool = True) -> list[tuple[int, str, str]]:
    """Run CLI commands in one subprocess as an unprivileged user; fail unless ``probe`` (a
    file or folder) is really read-only (or, with ``read_only=False``, writable) for that
    user."""
    argv = [*_unprivileged(), sys.executable, "-c", DRIVER, str(probe),
            json.dumps([[str(a) for a in c] for c in commands])]
    proc = subprocess.run(argv, capture_output=True, text=True, timeout=300,
                          env={**os.environ, "HUNCHBOOK_USER": "Nia"}, check=False)
    assert proc.returncode == 0, proc.stderr
    report = json.loads(proc.stdout)
    assert report["writable"] is not read_only, f"{probe}: not as expected for the test user"
    return [tuple(r) for r in report["results"]]


@pytest.fixture
def shared() -> Iterator[Path]:
    """A folder the unprivileged user can enter (pytest's own temporary folders are private)."""
    base = Path(tempfile.mkdtemp(prefix="hunchbook-readonly-"))
    base.chmod(0o755)
    yield base
    for p in [base, *base.rglob("*")]:
        p.chmod(0o755 if p.is_dir() else 0o644)
    shutil.rmtree(base)


def _give(*paths: Path) -> None:
    """Hand files and folders to the unprivileged user (only possible, and needed, as root)."""
    if os.geteuid() == 0:
        for path in paths:
            os.chown(path, NOBODY, NOBODY)


def _bundle(shared: Path) -> Path:
    """An idea bundle from another desk (readable by everyone)."""
    bundle = shared / "idea.zip"
    with Catalogue(shared / "other.sqlite") as other:
        other.add_idea(title="Metals carry", hypothesis="Carry pays.", submitted_by="Ada")
        other.export_bundle(1, bundle)
    (shared / "other.sqlite").unlink()
    bundle.chmod(0o644)
    return bundle


WRITES = (["journal", "add", "--idea", "1", "Re-ran on the longer history."],
          ["ideas", "add", "--title", "t", "--hypothesis", "h"],
          ["ideas", "stage", "1", "shelved", "--reason", "weak"])


def _check_reads(results: list[tuple[int, str, str]], path: Path) -> None:
    listed, shown, journal, check = results[:4]
    assert listed[0] == 0 and "Grain trend" in listed[1] and listed[1].endswith("1 idea\n")
    assert shown[0] == 0 and shown[1].startswith("Idea 1: Grain trend\n")
    assert journal[0] == 0 and "Roll dates checked." in journal[1]
    assert check == (0, f"{path}: schema version {SCHEMA_VERSION}; ok\n", "")
    assert all(err == "" for _, _, err in results[:4])


def test_a_read_only_catalogue_file_reads_and_refuses_writes_in_one_line(shared: Path) -> None:
    folder = shared / "desk"
    folder.mkdir()
    path = desk(folder / "desk.sqlite")
    bundle = _bundle(shared)
    _give(folder, path)
    path.chmod(0o444)
    before, bundle_before = snapshot(folder), snapshot(shared)
    c = ["--catalogue", path]
    results = run_unprivileged(path, [
        ["ideas", "list", *c], ["ideas", "show", "1", *c], ["journal", "list", *c],
        ["catalogue", "check", *c], *([*w, *c] for w in WRITES), ["ideas", "import", bundle, *c]])
    _check_reads(results, path)
    refused = f"hunchbook: error: {path}: cannot write to this catalogue: the file is " \
              "read-only; nothing was written\n"
    assert results[4:] == [(1, "", refused)] * (len(WRITES) + 1)
    assert snapshot(folder) == before and snapshot(shared) == bundle_before

    # Reading left nothing behind that stops a writer once the file is writable again (SQLite
    # would have made -wal and -shm files with the file's read-only permissions).
    path.chmod(0o644)
    (added,) = run_unprivileged(path, [["journal", "add", "Writable again.", *c]],
                                read_only=False)
    assert added[0] == 0 and added[2] == ""
    with Catalogue(path, read_only=True) as cat:
        assert cat.journal()[-1].text == "Writable again."


def test_a_catalogue_in_a_read_only_folder_reads_and_refuses_writes_in_one_line(
        shared: Path) -> None:
    folder = shared / "desk"
    folder.mkdir()
    path = desk(folder / "desk.sqlite")
    old = folder / "old.sqlite"  # a catalogue from the previous version
    open_catalogue_db(old, stop_before=migration_names()[-1]).close()
    bundle = _bundle(shared)
    _give(folder, path, old)
    folder.chmod(0o555)
    before, bundle_before = snapshot(folder), snapshot(shared)
    c = ["--catalogue", path]
    new = folder / "new.sqlite"
    results = run_unprivileged(folder, [
        ["ideas", "list", *c], ["ideas", "show", "1", *c], ["journal", "list", *c],
        ["catalogue", "check", *c], *([*w, *c] for w in WRITES), ["ideas", "import", bundle, *c],
        ["ideas", "add", "--title", "t", "--hypothesis", "h", "--catalogue", new],
        ["ideas", "list", "--catalogue", old]])
    _check_reads(results, path)
    folder_note = ("its folder is read-only (SQLite writes the -wal and -shm files beside the "
                   "catalogue)")
    refused = (f"hunchbook: error: {path}: cannot write to this catalogue: {folder_note}; "
               "nothing was written\n")
    assert results[4:-2] == [(1, "", refused)] * (len(WRITES) + 1)
    assert results[-2:] == [
        (1, "", f"hunchbook: error: {new}: cannot create a catalogue here: {folder_note}\n"),
        (1, "", f"hunchbook: error: {old}: written by an older Hunchbook (schema version "
                f"{SCHEMA_VERSION - 1}); upgrading it to version {SCHEMA_VERSION} needs write "
                f"access, but {folder_note}\n")]
    assert snapshot(folder) == before and snapshot(shared) == bundle_before
