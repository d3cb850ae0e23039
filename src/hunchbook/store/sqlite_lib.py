"""sqlite-utils as the store uses it: imported without its optional pandas and numpy hooks.

When pandas is installed, importing sqlite-utils imports pandas and numpy, only to map their
scalar types to column types when a table is created from Python values. The store creates
every table with SQL and never needs that, while the two imports would add more than half a
second to every catalogue command. So this module imports sqlite-utils with pandas and numpy
hidden (when neither is loaded yet; if one is, it is left alone), and every store module
takes :class:`Database` and :class:`Migrations` from here.
"""

from __future__ import annotations

import sys
from typing import TYPE_CHECKING, Any

#: Optional imports of sqlite-utils that the store does not need.
HIDDEN = ("pandas", "numpy")


def _import_sqlite_utils() -> tuple[Any, Any]:
    hide = [] if "sqlite_utils" in sys.modules else [m for m in HIDDEN if m not in sys.modules]
    for name in hide:
        sys.modules[name] = None  # type: ignore[assignment]  # `import name` fails: skipped
    try:
        import sqlite_utils
        import sqlite_utils.migrations
    finally:
        for name in hide:
            if sys.modules.get(name, ...) is None:
                del sys.modules[name]
    return sqlite_utils.Database, sqlite_utils.migrations.Migrations


if TYPE_CHECKING:
    from sqlite_utils import Database
    from sqlite_utils.migrations import Migrations
else:
    Database, Migrations = _import_sqlite_utils()

__all__ = ["Database", "Migrations"]
