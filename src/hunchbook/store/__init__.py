"""The catalogue store: one SQLite file per catalogue, through sqlite-utils.

Small modules, one topic each: :mod:`~hunchbook.store.files` (what a path holds, whether it
may be written, SQLite failures as one line), :mod:`~hunchbook.store.db` (connections, write
transactions, online backup), :mod:`~hunchbook.store.opening` (recognising a catalogue before
writing, WAL, migrating), :mod:`~hunchbook.store.migrations` (schema versions),
:mod:`~hunchbook.store.chain` (the append-only rows' hash chain),
:mod:`~hunchbook.store.ideas`, :mod:`~hunchbook.store.revisions`,
:mod:`~hunchbook.store.preregistration`, :mod:`~hunchbook.store.runs` (and
:mod:`~hunchbook.store.pnl`), :mod:`~hunchbook.store.journal`,
:mod:`~hunchbook.store.reviews`, :mod:`~hunchbook.store.search`,
:mod:`~hunchbook.store.bundles` (and :mod:`~hunchbook.store.bundle_read`),
:mod:`~hunchbook.store.check`. Most code should use :class:`hunchbook.catalogue.Catalogue`.
"""

from hunchbook.store.errors import CatalogueError
from hunchbook.store.migrations import SCHEMA_VERSION, schema_version
from hunchbook.store.opening import open_catalogue_db
from hunchbook.store.records import (
    Entry,
    Idea,
    IdeaSummary,
    ImportReport,
    Preregistration,
    Review,
    Revision,
    RunRecord,
)

__all__ = [
    "SCHEMA_VERSION",
    "CatalogueError",
    "Entry",
    "Idea",
    "IdeaSummary",
    "ImportReport",
    "Preregistration",
    "Review",
    "Revision",
    "RunRecord",
    "open_catalogue_db",
    "schema_version",
]
