"""Writing files whole or not at all."""

from __future__ import annotations

import contextlib
import os
import stat
import tempfile


def write_atomically(path: str | os.PathLike[str], data: bytes) -> None:
    """Write ``data`` to ``path`` through a temporary sibling, flushed to disk, then renamed.

    A failure at any point leaves the old file (if any) as it was and no temporary file
    behind; an existing file's permissions are kept.

    Raises
    ------
    OSError
        When the folder is missing or the file cannot be written.
    """
    name = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(name))
    handle, temporary = tempfile.mkstemp(dir=folder, prefix=f".{os.path.basename(name)}.",
                                         suffix=".tmp")
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        mode = stat.S_IMODE(os.stat(name).st_mode) if os.path.exists(name) else 0o644
        os.chmod(temporary, mode)
        os.replace(temporary, name)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        raise
