"""Ideas: create, read, edit and move between stages (each stage change journalled)."""

from __future__ import annotations

import json
import uuid as uuidlib
from collections.abc import Mapping
from typing import Any

from hunchbook.store import journal, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import Idea
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import RATIONALE_KINDS, SOURCE_KINDS, STAGES, TRANSITIONS

#: Idea fields a person may edit after creation (the stage moves through ``set_stage``).
EDITABLE = ("title", "hypothesis", "rationale", "rationale_kind", "source_kind", "citation",
            "link", "reviewer", "markets", "tags")


def clean_fields(fields: Mapping[str, Any], *, prefix: str = "") -> dict[str, Any]:
    """Validate idea fields (any subset of :data:`EDITABLE` plus ``submitted_by``, ``stage``).

    Returns the cleaned values; markets and tags as tuples.
    """
    checks = {
        "title": lambda v, f: validate.text(v, f, limit=validate.MAX_TITLE, one_line=True),
        "hypothesis": lambda v, f: validate.text(v, f, limit=validate.MAX_HYPOTHESIS,
                                                 one_line=True),
        "rationale": lambda v, f: validate.text(v, f, required=False),
        "rationale_kind": lambda v, f: validate.choice(v, f, RATIONALE_KINDS),
        "source_kind": lambda v, f: validate.choice(v, f, SOURCE_KINDS),
        "citation": lambda v, f: validate.optional_text(v, f, limit=validate.MAX_HYPOTHESIS),
        "link": lambda v, f: validate.optional_text(v, f, limit=validate.MAX_NAME * 10,
                                                    one_line=True),
        "submitted_by": validate.name,
        "reviewer": lambda v, f: None if v is None else validate.name(v, f),
        "markets": validate.markets,
        "tags": validate.tags,
        "stage": lambda v, f: validate.choice(v, f, STAGES),
    }
    out = {}
    for key, value in fields.items():
        if key not in checks:
            raise CatalogueError(f"unknown idea field '{key}'; known: {', '.join(checks)}",
                                 field=prefix + key)
        out[key] = checks[key](value, prefix + key)
    return out


def insert(db: Database, fields: Mapping[str, Any], *, at: str,
           idea_uuid: str | None = None) -> int:
    """Insert a new idea from cleaned fields (see :func:`clean_fields`) and return its id."""
    row = dict(fields)
    row["markets"] = json.dumps(list(row.get("markets", ())), ensure_ascii=False)
    row["tags"] = json.dumps(list(row.get("tags", ())), ensure_ascii=False)
    row.setdefault("rationale", "")
    row.update(uuid=idea_uuid or str(uuidlib.uuid4()), created_at=row.get("created_at", at),
               updated_at=row.get("updated_at", at))
    return int(db["ideas"].insert(row).last_pk)


def get(db: Database, idea_id: int) -> Idea:
    """The idea with this id (a :class:`CatalogueError` if there is none)."""
    rows = list(db.query(
        "SELECT i.*, (SELECT min(frozen_at) FROM preregistrations p WHERE p.idea_id = i.id) "
        "AS frozen_at FROM ideas i WHERE i.id = ?", [_id(idea_id)]))
    if not rows:
        raise CatalogueError(f"there is no idea {idea_id}", field="idea")
    row = rows[0]
    return Idea(**{k: row[k] for k in Idea.__dataclass_fields__ if k not in ("markets", "tags")},
                markets=tuple(json.loads(row["markets"])), tags=tuple(json.loads(row["tags"])))


def id_for_uuid(db: Database, idea_uuid: str) -> int | None:
    """The local id of the idea with this uuid, if the catalogue has it."""
    row = db.execute("SELECT id FROM ideas WHERE uuid = ?", [idea_uuid]).fetchone()
    return None if row is None else int(row[0])


def update(db: Database, idea_id: int, changes: Mapping[str, Any], *, at: str) -> None:
    """Write cleaned field changes and touch ``updated_at``."""
    row = dict(changes)
    for key in ("markets", "tags"):
        if key in row:
            row[key] = json.dumps(list(row[key]), ensure_ascii=False)
    row["updated_at"] = at
    db["ideas"].update(_id(idea_id), row)


def describe_change(key: str, old: Any, new: Any) -> str:
    """One line of an edit journal entry: ``title: 'old' -> 'new'``."""
    def show(value: Any) -> str:
        if isinstance(value, tuple):
            return ", ".join(value) or "(none)"
        return "(none)" if value in (None, "") else repr(value)
    return f"{key}: {show(old)} -> {show(new)}"


def set_stage(db: Database, idea_id: int, stage: str, *, by: str, reason: str, at: str,
              runs_recorded: int | None = None) -> None:
    """Move an idea to ``stage`` along an allowed transition and journal who and why.

    Moving to ``tested`` needs at least one recorded run (``runs_recorded``, counted when not
    given).
    """
    idea = get(db, idea_id)
    stage = validate.choice(stage, "stage", STAGES)
    reason = validate.text(reason, "reason")
    by = validate.name(by, "by")
    if stage not in TRANSITIONS[idea.stage]:
        allowed = ", ".join(TRANSITIONS[idea.stage])
        raise CatalogueError(f"cannot move from '{idea.stage}' to '{stage}'; from "
                             f"'{idea.stage}' an idea can move to: {allowed}",
                             field=f"idea {idea_id}")
    if stage == "tested":
        if runs_recorded is None:
            runs_recorded = db.execute("SELECT count(*) FROM runs WHERE idea_id = ?",
                                       [idea_id]).fetchone()[0]
        if not runs_recorded:
            raise CatalogueError("an idea is 'tested' once a run is recorded; record a run",
                                 field=f"idea {idea_id}")
    db["ideas"].update(idea.id, {"stage": stage, "updated_at": at})
    journal.append(db, idea_id=idea.id, kind="stage", by=by, at=at,
                   text=f"Stage {idea.stage} -> {stage}. {reason}")


def _id(idea_id: Any) -> int:
    return validate.integer(idea_id, "idea id")
