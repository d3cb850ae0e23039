"""Idea families: an idea recorded as a variant of another, and the tree of variants.

``variant_links`` holds at most one row per idea (a UNIQUE key and a trigger refuse a second):
its parent, who linked them, when and why (append-only, hash-chained). A link is never changed
or removed: undoing it would let a variant start its trial count afresh. The *family* of an
idea is the tree it belongs to: its root (the ancestor that is a variant of nothing) and every
descendant of the root. Linking an idea that heads a tree of its own under another idea joins
the two trees; a link that would close a circle (the parent is the idea or one of its own
variants) is refused.

The family's trials all count for each member's deflated Sharpe (see
:mod:`hunchbook.store.runs`); :func:`refresh_trial_counts` keeps each member's stored count.
"""

from __future__ import annotations

import uuid as uuidlib
from collections.abc import Sequence
from typing import Any

from hunchbook.core import formats
from hunchbook.store import chain
from hunchbook.store.records import Family, FamilyMember, VariantLink
from hunchbook.store.sqlite_lib import Database


def cte(param: str = "?1") -> str:
    """SQL ``WITH RECURSIVE ... family(id)``: the ids of the family of the idea bound to
    ``param`` (a numbered parameter, so that the statement can use it again). The idea itself
    is always a member, even in a file whose links were edited into a circle."""
    return (f"WITH RECURSIVE up(id) AS (SELECT {param} UNION SELECT l.parent_id FROM "
            "variant_links l JOIN up ON l.idea_id = up.id), "
            "family(id) AS (SELECT id FROM up WHERE id NOT IN (SELECT idea_id FROM "
            f"variant_links) UNION SELECT {param} UNION SELECT l.idea_id FROM variant_links l "
            "JOIN family ON l.parent_id = family.id) ")


def member_ids(db: Database, idea_id: int) -> list[int]:
    """The ids of the idea's family (the idea alone when it has no link), ascending."""
    return [row[0] for row in db.execute(cte() + "SELECT id FROM family ORDER BY id",
                                         [idea_id])]


def trial_count(db: Database, idea_id: int) -> int:
    """Distinct (strategy key, parameter set) pairs run by any member of the idea's family."""
    return int(db.execute(
        cte() + "SELECT count(*) FROM (SELECT DISTINCT strategy_key, params FROM trials "
        "WHERE idea_id IN (SELECT id FROM family))", [idea_id]).fetchone()[0])


def refresh_trial_counts(db: Database, idea_id: int, count: int | None = None) -> None:
    """Store the family's trial count (``count``, counted when not given) on every member."""
    if count is None:
        count = trial_count(db, idea_id)
    db.execute(cte() + "UPDATE ideas SET trial_count = ?2 WHERE id IN (SELECT id FROM family)",
               [idea_id, count])


def link_of(db: Database, idea_id: int) -> VariantLink | None:
    """The link making the idea a variant of its parent, or None."""
    rows = list(db.query("SELECT * FROM variant_links WHERE idea_id = ?", [idea_id]))
    return _link(rows[0]) if rows else None


def link_problem(db: Database, idea_id: int, parent_id: int) -> str | None:
    """Why the idea cannot be recorded as a variant of ``parent_id`` (both exist), or None."""
    if idea_id == parent_id:
        return f"idea {idea_id} cannot be a variant of itself"
    link = link_of(db, idea_id)
    if link is not None:
        return (f"idea {idea_id} is already a variant of idea {link.parent_id} (linked by "
                f"{link.set_by} on {formats.date(link.set_at)}); a variant link is never "
                "changed, so that its family's trials keep counting")
    if parent_id in member_ids(db, idea_id):  # the idea heads its tree: these are its variants
        return (f"idea {parent_id} is a variant of idea {idea_id} (directly or through "
                "others); linking them the other way round would make a circle")
    return None


def insert(db: Database, idea_id: int, parent_id: int, *, reason: str, by: str, at: str,
           link_uuid: str | None = None) -> int:
    """Write one link (checked by the caller with :func:`link_problem`) and return its id;
    ``link_uuid`` keeps the identity of one read from a bundle."""
    return chain.append(db, "variant_links", {
        "uuid": link_uuid or str(uuidlib.uuid4()), "idea_id": idea_id, "parent_id": parent_id,
        "reason": reason, "set_by": by, "set_at": at})


def links(db: Database) -> list[VariantLink]:
    """Every link, oldest first."""
    return [_link(row) for row in db.query("SELECT * FROM variant_links ORDER BY id")]


def tree(db: Database, idea_id: int) -> Family:
    """The idea's family as a tree, each member with its own trials and last verdict."""
    rows = list(db.query(
        cte() + "SELECT i.id, i.title, i.stage, i.submitted_by, i.last_verdict, "
        "(SELECT count(*) FROM (SELECT DISTINCT strategy_key, params FROM trials t "
        "WHERE t.idea_id = i.id)) AS own_trials FROM family f JOIN ideas i ON i.id = f.id "
        "ORDER BY i.id", [idea_id]))
    ids = {row["id"] for row in rows}
    found = {link.idea_id: link for link in links_among(db, ids)}
    children: dict[int, list[int]] = {}
    for link in sorted(found.values(), key=lambda x: x.id):
        children.setdefault(link.parent_id, []).append(link.idea_id)
    by_id = {row["id"]: row for row in rows}
    roots = [i for i in by_id if i not in found]
    built: set[int] = set()

    def build(member_id: int) -> FamilyMember:
        built.add(member_id)
        row = by_id[member_id]
        return FamilyMember(
            id=member_id, title=row["title"], stage=row["stage"],
            submitted_by=row["submitted_by"], last_verdict=row["last_verdict"],
            own_trials=int(row["own_trials"]), link=found.get(member_id),
            children=tuple(build(c) for c in children.get(member_id, ()) if c not in built))

    root = build(roots[0] if roots else idea_id)  # no root: links edited into a circle
    return Family(idea_id=idea_id, root=root, trial_count=trial_count(db, idea_id))


def links_among(db: Database, ids: Sequence[int] | set[int]) -> list[VariantLink]:
    """The links whose variant is one of these ideas."""
    wanted = sorted(ids)
    marks = ", ".join("?" * len(wanted))
    return [_link(row) for row in db.query(
        f"SELECT * FROM variant_links WHERE idea_id IN ({marks}) ORDER BY id", wanted)]


def circles(db: Database) -> list[int]:
    """Ideas whose chain of parents comes back to them (only a file edited outside the
    catalogue has any)."""
    parent = {link.idea_id: link.parent_id for link in links(db)}
    found = []
    for start in parent:
        seen, node = {start}, parent[start]
        while node in parent and node not in seen:
            seen.add(node)
            node = parent[node]
        if node == start:
            found.append(start)
    return found


def _link(row: dict[str, Any]) -> VariantLink:
    return VariantLink(id=row["id"], uuid=row["uuid"], idea_id=row["idea_id"],
                       parent_id=row["parent_id"], reason=row["reason"], set_by=row["set_by"],
                       set_at=row["set_at"])
