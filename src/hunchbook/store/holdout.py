"""The catalogue's holdout: its boundary settings and each idea's one unlocking.

``holdout_boundaries`` keeps every setting of the boundary (append-only, hash-chained); the
latest row holds. ``holdout_views`` holds at most one row per idea (a UNIQUE key and a trigger
refuse a second): the unlocking of its held-out years, with the figures found there. Rows are
written by :class:`hunchbook.catalogue.Catalogue`, which journals each.
"""

from __future__ import annotations

import datetime as dt
import json
import uuid as uuidlib
from typing import TYPE_CHECKING, Any

from hunchbook.store import chain, pnl, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import HoldoutBoundary, HoldoutView
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    from hunchbook.core.holdout import HoldoutFigures


def clean_date(value: Any, field: str) -> dt.date:
    """A calendar date: a ``datetime.date`` (not a datetime) or ``YYYY-MM-DD`` text."""
    if isinstance(value, dt.date) and not isinstance(value, dt.datetime):
        return value
    if isinstance(value, str) and len(value.strip()) == 10:
        try:
            return dt.date.fromisoformat(value.strip())
        except ValueError:
            pass
    shown = repr(value) if len(repr(value)) <= 40 else repr(value)[:37] + "..."
    raise CatalogueError(f"expected a date YYYY-MM-DD, found {shown}", field=field)


def insert_boundary(db: Database, boundary: dt.date, *, reason: str, by: str, at: str) -> int:
    """Write one boundary setting (checked by the caller) and return its id."""
    return chain.append(db, "holdout_boundaries", {
        "uuid": str(uuidlib.uuid4()), "boundary": boundary.isoformat(), "reason": reason,
        "set_by": by, "set_at": at})


def boundaries(db: Database) -> list[HoldoutBoundary]:
    """Every setting of the boundary, oldest first."""
    return [_boundary(row) for row in db.query("SELECT * FROM holdout_boundaries ORDER BY id")]


def current(db: Database) -> HoldoutBoundary | None:
    """The boundary in force (the latest setting), or None before the first."""
    rows = list(db.query("SELECT * FROM holdout_boundaries ORDER BY id DESC LIMIT 1"))
    return _boundary(rows[0]) if rows else None


def _boundary(row: dict[str, Any]) -> HoldoutBoundary:
    return HoldoutBoundary(id=row["id"], uuid=row["uuid"],
                           boundary=dt.date.fromisoformat(row["boundary"]),
                           reason=row["reason"], set_by=row["set_by"], set_at=row["set_at"])


def insert_view(db: Database, *, idea_id: int, revision_id: int, run_id: int,
                chosen_params: dict[str, float], boundary: dt.date, data_fingerprint: str,
                engine_version: str, figures: HoldoutFigures, daily_pnl: Any, by: str,
                at: str, view_uuid: str | None = None) -> int:
    """Write an idea's unlocking (checked by the caller: one per idea) and return its id;
    ``view_uuid`` keeps the identity of one read from a bundle."""
    return chain.append(db, "holdout_views", {
        "uuid": view_uuid or str(uuidlib.uuid4()), "idea_id": idea_id, "revision_id": revision_id,
        "run_id": run_id, "chosen_params": json.dumps(validate.param_set(chosen_params,
                                                                         "chosen_params")),
        "boundary": boundary.isoformat(),
        "data_fingerprint": validate.name(data_fingerprint, "data_fingerprint"),
        "engine_version": validate.name(engine_version, "engine_version"),
        "figures": validate.to_json(figures.to_dict(), "figures"),
        "daily_pnl": pnl.encode(pnl.clean(daily_pnl)), "seen_by": by, "seen_at": at})


def run_boundaries(db: Database, idea_id: int) -> list[tuple[int, dt.date | None]]:
    """Each run of the idea, oldest first: its id and the holdout boundary its data were cut at
    (None: it saw the whole history, or was recorded before runs carried a boundary). Read by
    SQLite from the stored record, without decoding the runs."""
    rows = db.execute("SELECT id, json_extract(summary, '$.holdout_boundary') FROM runs "
                      "WHERE idea_id = ? ORDER BY id", [idea_id]).fetchall()
    return [(run_id, None if edge is None else dt.date.fromisoformat(edge))
            for run_id, edge in rows]


_SELECT = ("SELECT h.*, v.number AS revision_number FROM holdout_views h "
           "JOIN rule_revisions v ON v.id = h.revision_id")


def view(db: Database, idea_id: int, *, with_pnl: bool = True) -> HoldoutView | None:
    """The idea's unlocking, or None while its held-out years are still locked."""
    rows = list(db.query(_SELECT + " WHERE h.idea_id = ?", [idea_id]))
    return _view(rows[0], with_pnl=with_pnl) if rows else None


def views(db: Database) -> list[HoldoutView]:
    """Every idea's unlocking, oldest first, without daily P&L."""
    return [_view(row, with_pnl=False) for row in db.query(_SELECT + " ORDER BY h.id")]


def _view(row: dict[str, Any], *, with_pnl: bool) -> HoldoutView:
    from hunchbook.core.errors import RecordError
    from hunchbook.core.holdout import HoldoutFigures

    try:
        figures = HoldoutFigures.from_dict(json.loads(row["figures"]))
    except (RecordError, ValueError) as exc:
        raise CatalogueError(f"stored held-out figures cannot be read ({exc})",
                             field=f"holdout of idea {row['idea_id']}") from None
    return HoldoutView(
        id=row["id"], uuid=row["uuid"], idea_id=row["idea_id"], revision_id=row["revision_id"],
        revision_number=row["revision_number"], run_id=row["run_id"],
        chosen_params=json.loads(row["chosen_params"]),
        boundary=dt.date.fromisoformat(row["boundary"]),
        data_fingerprint=row["data_fingerprint"], engine_version=row["engine_version"],
        figures=figures, seen_by=row["seen_by"], seen_at=row["seen_at"],
        daily_pnl=pnl.decode(row["daily_pnl"]) if with_pnl else None)
