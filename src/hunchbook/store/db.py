"""Opening a catalogue file: connection pragmas, write transactions and the online backup.

Every connection runs with WAL journalling (readers never block the writer), foreign keys on,
``synchronous=FULL`` (a committed transaction survives a crash of the process or the machine)
and a busy timeout, so a second process waits for the write lock instead of failing.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import os
import sqlite3
import time
from collections.abc import Iterator
from pathlib import Path

from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database

#: Seconds a connection waits for another process's write lock before giving up.
BUSY_TIMEOUT_S = 15.0
#: Page cache per connection (KiB) and memory-mapped read window (bytes).
CACHE_KIB = 65_536
MMAP_BYTES = 256 * 1024 * 1024


def connect(path: str | os.PathLike[str], *, create: bool = True) -> Database:
    """Open (or create) a catalogue file with the catalogue's pragmas; no migration.

    Parameters
    ----------
    path
        The SQLite file.
    create
        Create the file when missing; otherwise a missing file is a :class:`CatalogueError`.
    """
    path = Path(path)
    if not path.exists():
        if not create:
            raise CatalogueError("no catalogue file here", where=str(path))
        if not path.parent.is_dir():
            raise CatalogueError("the folder does not exist", where=str(path.parent))
    conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_S)
    try:
        conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
        mode = _enable_wal(conn)
        conn.execute("PRAGMA foreign_keys = ON")
        conn.execute("PRAGMA synchronous = FULL")
        # Reads: keep a large catalogue's pages in memory (lists of every idea read them all).
        conn.execute(f"PRAGMA cache_size = -{CACHE_KIB}")
        conn.execute(f"PRAGMA mmap_size = {MMAP_BYTES}")
    except sqlite3.DatabaseError as exc:
        conn.close()
        raise CatalogueError(f"not a catalogue (SQLite says: {exc})", where=str(path)) from None
    if mode.lower() != "wal":
        conn.close()
        raise CatalogueError(f"could not switch to WAL journalling (got {mode!r})",
                             where=str(path))
    # no sqlite-utils plugins: the catalogue needs none, and finding them reads the
    # metadata of every installed package on each start
    return Database(conn, execute_plugins=False)


def _enable_wal(conn: sqlite3.Connection) -> str:
    """Switch to WAL, retrying while another process holds the lock.

    Changing the journal mode of a new file needs an exclusive lock and SQLite reports a
    competing connection as "database is locked" at once, without the busy handler; two
    processes opening a new catalogue together would otherwise fail.
    """
    deadline = time.monotonic() + BUSY_TIMEOUT_S
    while True:
        try:
            return str(conn.execute("PRAGMA journal_mode = wal").fetchone()[0])
        except sqlite3.OperationalError as exc:
            if "locked" not in str(exc) or time.monotonic() > deadline:
                raise
            time.sleep(0.02)


@contextlib.contextmanager
def write(db: Database) -> Iterator[Database]:
    """Run a block of writes as one transaction (a savepoint when one is already open).

    The outer transaction starts with ``BEGIN IMMEDIATE``: it takes the write lock up front, so
    a concurrent writer waits on the busy timeout here instead of failing later when a read
    transaction tries to become a write transaction.
    """
    conn = db.conn
    if conn.in_transaction:
        with db.atomic():
            yield db
        return
    conn.execute("BEGIN IMMEDIATE")
    try:
        yield db
    except BaseException:
        if conn.in_transaction:
            conn.execute("ROLLBACK")
        raise
    conn.execute("COMMIT")


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
    tmp = destination.with_name(f".{destination.name}.partial")
    tmp.unlink(missing_ok=True)
    target = sqlite3.connect(str(tmp))
    try:
        db.conn.backup(target)
    finally:
        target.close()
    os.replace(tmp, destination)
    return destination


def utc_now() -> dt.datetime:
    """The current time in UTC (the default clock of a catalogue)."""
    return dt.datetime.now(dt.UTC)


def timestamp(moment: dt.datetime) -> str:
    """ISO 8601 UTC text with microseconds, e.g. ``2026-03-04T09:15:00.000000Z`` (sorts as text)."""
    if moment.tzinfo is None:
        raise CatalogueError("clock returned a time without a time zone")
    return moment.astimezone(dt.UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")
