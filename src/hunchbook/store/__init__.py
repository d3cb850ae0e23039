"""The catalogue store: one SQLite file per catalogue, through sqlite-utils.

Small modules, one topic each: :mod:`~hunchbook.store.files` (what a path holds, whether it
may be written, SQLite failures as one line), :mod:`~hunchbook.store.db` (connections, write
transactions, online backup), :mod:`~hunchbook.store.opening` (recognising a catalogue before
writing, WAL, migrating), :mod:`~hunchbook.store.migrations` (schema versions),
:mod:`~hunchbook.store.chain` (the append-only rows' hash chain),
:mod:`~hunchbook.store.ideas`, :mod:`~hunchbook.store.revisions`,
:mod:`~hunchbook.store.preregistration`, :mod:`~hunchbook.store.runs` (and
:mod:`~hunchbook.store.pnl`, :mod:`~hunchbook.store.promoted`), :mod:`~hunchbook.store.journal`,
:mod:`~hunchbook.store.reviews`, :mod:`~hunchbook.store.search`,
:mod:`~hunchbook.store.bundles` (and :mod:`~hunchbook.store.bundle_read`),
:mod:`~hunchbook.store.check`. Most code should use :class:`hunchbook.catalogue.Catalogue`.

The names below are imported on first use, so that reading :mod:`~hunchbook.store.vocab` or
:mod:`~hunchbook.store.records` does not load SQLite.
"""

from importlib import import_module
from typing import Any

#: Where each name of this package lives.
_HOMES = {
    "SCHEMA_VERSION": "migrations", "open_catalogue_db": "opening",
    "schema_version": "migrations", "CatalogueError": "errors", "Entry": "records",
    "Idea": "records", "IdeaSummary": "records", "ImportReport": "records",
    "Preregistration": "records", "Review": "records", "Revision": "records",
    "RunRecord": "records",
}

__all__ = sorted(_HOMES)


def __getattr__(name: str) -> Any:
    if name in _HOMES:
        return getattr(import_module(f"hunchbook.store.{_HOMES[name]}"), name)
    raise AttributeError(f"module 'hunchbook.store' has no attribute {name!r}")
