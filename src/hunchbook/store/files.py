"""What a catalogue path holds, whether this process may write it, where its backups are, and
SQLite's failures on it as one clear line.

Nothing here opens a connection: a path is looked at with the operating system only, so that a
file is known to be missing, empty or SQLite before SQLite touches it.
"""

from __future__ import annotations

import os
import sqlite3
import stat
from pathlib import Path
from typing import Literal

from hunchbook.store.errors import CatalogueError, DamagedCatalogue

#: The first 16 bytes of every SQLite database file (SQLite file format, section 1.3).
SQLITE_HEADER = b"SQLite format 3\x00"
#: Seconds a connection waits for another process's write lock before giving up.
BUSY_TIMEOUT_S = 15.0

# Primary result codes (https://sqlite.org/rescode.html).
_PERM, _BUSY, _LOCKED, _READONLY, _IOERR, _CORRUPT = 3, 5, 6, 8, 10, 11
_FULL, _CANTOPEN, _AUTH, _NOTADB = 13, 14, 23, 26

State = Literal["missing", "empty", "sqlite"]


def state(path: Path) -> State:
    """``"missing"``, ``"empty"`` (zero bytes) or ``"sqlite"``; anything else is refused.

    Raises
    ------
    CatalogueError
        The path is a folder, cannot be read, its folder does not exist, or the file is not an
        SQLite database.
    """
    try:
        kind = path.stat().st_mode
        if stat.S_ISDIR(kind):
            raise CatalogueError("this is a folder, not a catalogue file", where=str(path))
        if not stat.S_ISREG(kind):  # a pipe or device: reading it could wait for ever
            raise CatalogueError("not a regular file, so not a catalogue", where=str(path))
        with path.open("rb") as handle:
            head = handle.read(len(SQLITE_HEADER))
    except FileNotFoundError:
        if not path.parent.is_dir():
            raise CatalogueError("the folder does not exist", where=str(path.parent)) from None
        return "missing"
    except OSError as exc:
        raise CatalogueError(f"cannot read the file ({exc.strerror or exc})",
                             where=str(path)) from None
    if not head:
        return "empty"
    if head != SQLITE_HEADER:
        raise CatalogueError("not a catalogue: this is not an SQLite database file",
                             where=str(path))
    return "sqlite"


def read_only_reason(path: Path) -> str | None:
    """Why this process cannot write the catalogue at ``path`` (``None`` when it can).

    SQLite writes a catalogue through ``<name>-wal`` and ``<name>-shm`` files beside it, so the
    folder must be writable as well as the file.
    """
    if path.exists() and not os.access(path, os.W_OK):
        return "the file is read-only"
    if not os.access(path.parent, os.W_OK | os.X_OK):
        return ("its folder is read-only (SQLite writes the -wal and -shm files beside the "
                "catalogue)")
    return None


def wal_path(path: Path) -> Path:
    """SQLite's write-ahead log beside the catalogue."""
    return path.with_name(path.name + "-wal")


def backup_path(path: Path, version: int, stamp: str) -> Path:
    """Where the automatic backup before a schema upgrade from ``version`` goes."""
    return path.with_name(f"{path.stem}.v{version}-backup-{stamp}{path.suffix}")


def latest_backup(path: Path) -> Path | None:
    """The newest automatic backup beside the catalogue (see :func:`backup_path`), if any."""
    try:
        found = [p for p in path.parent.glob(f"{path.stem}.v*-backup-*{path.suffix}")
                 if p.is_file()]
    except OSError:
        return None
    return max(found, key=lambda p: p.stat().st_mtime, default=None)


def explain(exc: sqlite3.DatabaseError, path: Path) -> CatalogueError | None:
    """One clear line for what SQLite reported on the catalogue at ``path``.

    ``None`` for a programming error (a closed connection, wrong parameters), which is a fault
    of the code and is left to surface as it is.
    """
    if isinstance(exc, sqlite3.ProgrammingError):
        return None
    where = str(path)
    code = (getattr(exc, "sqlite_errorcode", None) or 0) & 0xFF
    if code == _READONLY:
        reason = read_only_reason(path) or "it was opened for reading only"
        return CatalogueError(f"cannot write to this catalogue: {reason}; nothing was written",
                              where=where)
    if code in (_BUSY, _LOCKED):
        return CatalogueError(f"another program kept the catalogue locked for over "
                              f"{BUSY_TIMEOUT_S:.0f} s; nothing was written, try again",
                              where=where)
    if code == _FULL:
        return CatalogueError("the disk is full; nothing was written", where=where)
    if code in (_PERM, _IOERR, _CANTOPEN, _AUTH):
        return CatalogueError(f"cannot read or write the file (SQLite: {exc})", where=where)
    if isinstance(exc, sqlite3.IntegrityError):
        return CatalogueError(f"the catalogue refused the change (SQLite: {exc}); nothing was "
                              "written", where=where)
    problem = ("the catalogue file is damaged" if code in (_CORRUPT, _NOTADB)
               else "the catalogue file is not as Hunchbook wrote it")
    return DamagedCatalogue(f"{problem} (SQLite: {exc})", where=where, advice=_advice(path))


def _advice(path: Path) -> str:
    newest = latest_backup(path)
    found = (f"the newest beside the file is {newest}" if newest is not None
             else "none is beside the file: Hunchbook makes one there only before a schema "
                  "upgrade")
    return (f"run 'hunchbook catalogue check --catalogue {path}' to see what is wrong, and "
            f"restore your latest backup ({found})")
