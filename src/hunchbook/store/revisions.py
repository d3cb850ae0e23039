"""Rule revisions: every saved rule file kept whole with its SHA-256 and time, never edited.

Two values are derived from a rule file's TOML when it is saved:

* the **parameter space**: its ``[parameters]`` table (values, ranges and constraint);
* the **strategy key**: SHA-256 of the canonical JSON of the whole file *without* the
  ``[parameters]`` table and without the descriptive ``name`` and ``description`` keys
  (integers counted as floats, keys sorted; comments and layout never matter). Two revisions
  with the same key compute the same P&L for the same parameter set, so a set run under both
  counts as one trial (see :mod:`hunchbook.store.runs`).
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import tomllib
import uuid as uuidlib
from typing import Any

from hunchbook.store import chain, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Revision
from hunchbook.store.sqlite_lib import Database

#: Top-level keys that describe a rule file without changing what it computes.
DESCRIPTIVE_KEYS = ("name", "description")


def analyse(text: str, field: str = "rule file") -> tuple[str, str, dict[str, Any]]:
    """Return ``(sha256, strategy_key, parameter_space)`` of a rule file's text.

    Raises :class:`CatalogueError` naming the TOML line when the text is not TOML.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CatalogueError(f"not a valid TOML rule file: {exc}", field=field) from None
    space = data.pop("parameters", {})
    if not isinstance(space, dict):
        raise CatalogueError("'parameters' must be a table", field=field)
    for key in DESCRIPTIVE_KEYS:
        data.pop(key, None)
    key = hashlib.sha256(canonical_json(data).encode()).hexdigest()
    return sha256(text), key, json.loads(canonical_json(space))


def sha256(text: str) -> str:
    """Hex SHA-256 of the UTF-8 text."""
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def canonical_json(value: Any) -> str:
    """Compact JSON with sorted keys, integers as floats, dates as ISO text."""
    return json.dumps(_plain(value), sort_keys=True, separators=(",", ":"))


def _plain(value: Any) -> Any:
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_plain(v) for v in value]
    if isinstance(value, int) and not isinstance(value, bool):
        return float(value)
    if isinstance(value, dt.date | dt.time):
        return value.isoformat()
    return value


def save(db: Database, idea_id: int, text: str, *, by: str, at: str,
         revision_uuid: str | None = None) -> tuple[Revision, bool]:
    """Keep a rule file as the idea's next revision; ``(revision, created)``.

    Text identical to the latest revision returns that revision with ``created=False``.
    """
    text = validate.text(text, "rule file", limit=validate.MAX_RULE_TEXT, strip=False)
    by = validate.name(by, "by")
    digest, key, space = analyse(text)
    current = latest(db, idea_id)
    if current is not None and current.sha256 == digest:
        return current, False
    number = 1 if current is None else current.number + 1
    row = {"uuid": revision_uuid or str(uuidlib.uuid4()), "idea_id": idea_id, "number": number,
           "text": text, "sha256": digest, "strategy_key": key,
           "parameter_space": json.dumps(space, sort_keys=True), "saved_at": at,
           "saved_by": by}
    return get(db, chain.append(db, "rule_revisions", row)), True


def get(db: Database, revision_id: int) -> Revision:
    """One revision by id."""
    rows = list(db.query("SELECT * FROM rule_revisions WHERE id = ?", [revision_id]))
    if not rows:
        raise CatalogueError(f"there is no rule revision {revision_id}", field="revision")
    return _revision(rows[0])


def of_idea(db: Database, idea_id: int) -> list[Revision]:
    """The idea's revisions, oldest first."""
    return [_revision(r) for r in db.query(
        "SELECT * FROM rule_revisions WHERE idea_id = ? ORDER BY number", [idea_id])]


def latest(db: Database, idea_id: int) -> Revision | None:
    """The idea's newest revision, if any."""
    rows = list(db.query("SELECT * FROM rule_revisions WHERE idea_id = ? ORDER BY number DESC "
                         "LIMIT 1", [idea_id]))
    return _revision(rows[0]) if rows else None


def _revision(row: dict[str, Any]) -> Revision:
    fields = {k: row[k] for k in Revision.__dataclass_fields__}  # not the chain's row_hash
    return Revision(**{**fields, "parameter_space": json.loads(row["parameter_space"])})
