"""Opening a catalogue file: judged before SQLite touches it, recognised before anything is
written, then switched to WAL and migrated.

A missing or empty file is a new catalogue only where creating one is asked for (a command that
only reads refuses it, like a missing one). An SQLite file must hold the catalogue's schema
history, or nothing at all; another program's database is refused before SQLite changes a byte
of it. A file this process cannot write (read-only file or folder) opens for reading, and every
write is then refused in one line.
"""

from __future__ import annotations

import os
import sqlite3
from pathlib import Path

from hunchbook.store import db as dbmod
from hunchbook.store import files, migrations
from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database, Migrations


def open_catalogue_db(path: str | os.PathLike[str], *, create: bool = True,
                      read_only: bool = False, stop_before: str | None = None) -> Database:
    """Open a catalogue file and bring its schema to the current version.

    Nothing is written to a file before it is known to be a catalogue (or new). When an
    existing catalogue needs migrating, it is first copied with the online backup API to
    ``<name>.v<old>-backup-<UTC time><suffix>`` beside it (:func:`files.backup_path`). A file
    this process cannot write opens for reading: writes then raise :class:`CatalogueError`.

    Parameters
    ----------
    path
        The catalogue file.
    create
        Create a new catalogue if the file is missing or empty.
    read_only
        Only read: never create, and refuse every write (``PRAGMA query_only``). An older
        catalogue is still migrated first when the file can be written.
    stop_before
        Stop before this migration (tests use it to build catalogues at earlier versions).

    Raises
    ------
    CatalogueError
        One line naming the file: missing or empty (unless created), not a catalogue, damaged,
        written by a newer Hunchbook, or needing a migration it cannot write.
    """
    path = Path(path)
    state = files.state(path)
    if state != "sqlite" and (read_only or not create):
        raise CatalogueError("no catalogue file here" if state == "missing" else
                             "the file is empty: there is no catalogue in it", where=str(path))
    reason = files.read_only_reason(path)
    if state != "sqlite" and reason is not None:
        raise CatalogueError(f"cannot create a catalogue here: {reason}", where=str(path))
    try:
        db = dbmod.connect(path, writable=reason is None)
    except sqlite3.DatabaseError as exc:
        raise files.explain(exc, path) or exc from None
    try:
        _prepare(db, path, reason, may_create=create and not read_only, writes=not read_only,
                 stop_before=stop_before)
        if read_only:
            db.execute("PRAGMA query_only = ON")
    except sqlite3.DatabaseError as exc:
        db.close()
        raise files.explain(exc, path) or exc from None
    except BaseException:
        db.close()
        raise
    return db


def _prepare(db: Database, path: Path, reason: str | None, *, may_create: bool, writes: bool,
             stop_before: str | None) -> None:
    """Recognise the file; then, when it can be written and writing is meant (or a migration
    is due), switch it to WAL and migrate it."""
    is_new = _recognise(db, path)
    if is_new and not may_create:
        raise CatalogueError("an empty SQLite database: there is no catalogue in it",
                             where=str(path))
    try:
        version = migrations.schema_version(db)
    except CatalogueError as exc:
        exc.where = str(path)
        raise
    pending = migrations.pending(db, stop_before)
    if reason is not None:
        if pending:
            raise CatalogueError(f"written by an older Hunchbook (schema version {version}); "
                                 f"upgrading it to version {migrations.SCHEMA_VERSION} needs "
                                 f"write access, but {reason}", where=str(path))
        return
    if not (writes or pending):
        return
    _open_every_table(db)
    dbmod.enable_wal(db, path)
    if not pending:
        return
    if version > 0:
        stamp = dbmod.timestamp(dbmod.utc_now()).replace(":", "").replace(".", "-")
        dbmod.backup(db, files.backup_path(path, version, stamp))
    # All pending migrations run in one write transaction, checked again under the lock:
    # two processes opening an old catalogue at once migrate it exactly once.
    with dbmod.write(db):
        if migrations.pending(db, stop_before):
            migrations.MIGRATIONS.apply(db, stop_before=stop_before)


def _open_every_table(db: Database) -> None:
    """Read the first row of every table, so that no write begins in a file whose tables SQLite
    cannot open (damage deeper in a table shows when that part is read)."""
    for (name,) in db.execute("SELECT name FROM sqlite_master WHERE type = 'table' AND sql "
                              "NOT LIKE 'CREATE VIRTUAL%'").fetchall():
        quoted = '"' + name.replace('"', '""') + '"'
        db.execute(f"SELECT 1 FROM {quoted} NOT INDEXED LIMIT 1").fetchall()


def _recognise(db: Database, path: Path) -> bool:
    """Whether the SQLite file is empty (a new catalogue may be made in it); raise unless it
    is a catalogue. Reads only."""
    tables = {r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    if not tables:
        claimed = any(db.execute(f"PRAGMA {p}").fetchone()[0]
                      for p in ("user_version", "application_id"))
        if claimed:
            raise CatalogueError("this SQLite file is not a Hunchbook catalogue (another "
                                 "program has marked it as its own)", where=str(path))
        return True
    if Migrations.migrations_table not in tables or not migrations.MIGRATIONS.applied(db):
        raise CatalogueError("this SQLite file is not a Hunchbook catalogue (it has other "
                             "tables and no schema history)", where=str(path))
    return False
