"""Connections to a catalogue file, write transactions and the online backup.

A connection changes nothing in the file when it opens: the journal mode is left as found, so
that a file can be recognised as a catalogue first (see :mod:`hunchbook.store.opening`);
:func:`enable_wal` then switches a catalogue to WAL journalling (readers never block the
writer). Every connection has foreign keys on, ``synchronous=FULL`` (a committed transaction
survives a crash of the process or the machine) and a busy timeout, so a second process waits
for the write lock instead of failing.

A file this process cannot write (a read-only file or folder) is opened read-only: through its
``-wal`` file when there is one, otherwise as immutable (no ``-wal`` file: no writer has it
open; one that starts while a read runs is not seen). SQLite would otherwise create ``-wal`` and
``-shm`` files beside it with the file's read-only permissions, which would stop later writers
once the file is writable again.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import os
import sqlite3
import time
from collections.abc import Iterator
from pathlib import Path

from hunchbook.store import files
from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database

#: Seconds a connection waits for another process's write lock before giving up.
BUSY_TIMEOUT_S = files.BUSY_TIMEOUT_S
#: Page cache per connection (KiB) and memory-mapped read window (bytes).
CACHE_KIB = 65_536
MMAP_BYTES = 256 * 1024 * 1024


def connect(path: str | os.PathLike[str], *, writable: bool) -> Database:
    """Open an SQLite file with the catalogue's connection settings, writing nothing.

    Parameters
    ----------
    path
        The SQLite file; created when missing if ``writable``.
    writable
        Open for reading and writing; otherwise read-only, creating no file beside it.
    """
    path = Path(path)
    if writable:
        conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_S)
    else:
        mode = "mode=ro" if files.wal_path(path).exists() else "immutable=1"
        conn = sqlite3.connect(f"{path.resolve().as_uri()}?{mode}", uri=True,
                               timeout=BUSY_TIMEOUT_S)
    try:
        conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
        conn.execute("PRAGMA foreign_keys = ON")
        conn.execute("PRAGMA synchronous = FULL")
        # Reads: keep a large catalogue's pages in memory (lists of every idea read them all).
        conn.execute(f"PRAGMA cache_size = -{CACHE_KIB}")
        conn.execute(f"PRAGMA mmap_size = {MMAP_BYTES}")
    except BaseException:
        conn.close()
        raise
    # no sqlite-utils plugins: the catalogue needs none, and finding them reads the
    # metadata of every installed package on each start
    return Database(conn, execute_plugins=False)


def enable_wal(db: Database, path: Path) -> None:
    """Switch a catalogue (or a new file) to WAL journalling, retrying while another process
    holds the lock.

    Changing the journal mode of a new file needs an exclusive lock and SQLite reports a
    competing connection as "database is locked" at once, without the busy handler; two
    processes opening a new catalogue together would otherwise fail.
    """
    deadline = time.monotonic() + BUSY_TIMEOUT_S
    while True:
        try:
            mode = str(db.execute("PRAGMA journal_mode = wal").fetchone()[0])
            break
        except sqlite3.OperationalError as exc:
            if "locked" not in str(exc) or time.monotonic() > deadline:
                raise
            time.sleep(0.02)
    if mode.lower() != "wal":
        raise CatalogueError(f"could not switch to WAL journalling (got {mode!r})",
                             where=str(path))


def path_of(db: Database) -> Path:
    """The file behind a connection."""
    return Path(db.execute("PRAGMA database_list").fetchone()[2])


@contextlib.contextmanager
def write(db: Database) -> Iterator[Database]:
    """Run a block of writes as one transaction (a savepoint when one is already open).

    The outer transaction starts with ``BEGIN IMMEDIATE``: it takes the write lock up front, so
    a concurrent writer waits on the busy timeout here instead of failing later when a read
    transaction tries to become a write transaction. SQLite's failures (a read-only or damaged
    file, a lock held too long, a full disk) are raised as :class:`CatalogueError`, after
    the rollback.
    """
    conn = db.conn
    if conn.in_transaction:
        with db.atomic():
            yield db
        return
    try:
        conn.execute("BEGIN IMMEDIATE")
        try:
            yield db
        except BaseException:
            if conn.in_transaction:
                conn.execute("ROLLBACK")
            raise
        conn.execute("COMMIT")
    except sqlite3.DatabaseError as exc:
        if conn.in_transaction:
            conn.execute("ROLLBACK")
        error = files.explain(exc, path_of(db))
        if error is None:
            raise
        raise error from None


def backup(db: Database, destination: str | os.PathLike[str]) -> Path:
    """Copy the live catalogue to ``destination`` with SQLite's online backup API.

    The copy is written to a temporary sibling and renamed into place, so an interrupted backup
    never leaves half a file. An existing destination is never overwritten.
    """
    destination = Path(destination)
    if destination.exists():
        raise CatalogueError("a file with this name already exists; choose another name",
                             where=str(destination))
    if not destination.parent.is_dir():
        raise CatalogueError("the folder does not exist", where=str(destination.parent))
    if not os.access(destination.parent, os.W_OK | os.X_OK):
        raise CatalogueError("the folder is read-only", where=str(destination.parent))
    tmp = destination.with_name(f".{destination.name}.partial")
    tmp.unlink(missing_ok=True)
    try:
        target = sqlite3.connect(str(tmp))
        try:
            db.conn.backup(target)
        finally:
            target.close()
        os.replace(tmp, destination)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return destination


def utc_now() -> dt.datetime:
    """The current time in UTC (the default clock of a catalogue)."""
    return dt.datetime.now(dt.UTC)


def timestamp(moment: dt.datetime) -> str:
    """ISO 8601 UTC text with microseconds, e.g. ``2026-03-04T09:15:00.000000Z`` (sorts as text)."""
    if moment.tzinfo is None:
        raise CatalogueError("clock returned a time without a time zone")
    return moment.astimezone(dt.UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")
