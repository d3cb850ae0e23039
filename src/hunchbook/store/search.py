"""Listing ideas: filters by stage, verdict, market, tag, author and source, full-text search
(SQLite FTS5) over titles, hypotheses, rationales and journal text, and the orders the idea
table sorts by, all in SQL.

Orders (:data:`ORDERS`) sort by one column, missing values last in either direction, ties by
id in the same direction. Text is compared as SQLite's ``NOCASE`` collation does: ASCII letters
folded to lower case, every other character by its code point.
"""

from __future__ import annotations

import functools
import json
import re
from collections.abc import Sequence
from typing import Any

from hunchbook.store import validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import IdeaChoices, IdeaSummary
from hunchbook.store.sqlite_lib import Database
from hunchbook.store.vocab import SOURCE_KINDS, STAGES

_COLUMNS = ("id", "uuid", "title", "hypothesis", "stage", "submitted_by", "reviewer",
            "source_kind", "markets", "tags", "last_verdict", "last_net_sharpe", "trial_count",
            "updated_at")
_WORD_RE = re.compile(r"\w+", re.UNICODE)
#: Most words in one search.
MAX_WORDS = 32


def fts_query(text: str) -> str:
    """Turn what a person typed into an FTS5 query: every word must appear, each word also
    matching longer words it begins (``roll`` finds ``rolling``). Operators and quotes typed
    by the person are treated as plain text, so no input is an FTS syntax error."""
    words = _WORD_RE.findall(validate.text(text, "search", limit=1_000, required=False))
    if not words:
        raise CatalogueError("the search has no words to look for", field="search")
    if len(words) > MAX_WORDS:
        raise CatalogueError(f"more than {MAX_WORDS} words", field="search")
    return " ".join(f'"{w}"*' for w in words)


def _verdict_label_sql() -> str:
    # the verdict's label as the window shows it (an unknown outcome shows as itself)
    from hunchbook.core.verdict import LABELS

    cases = " ".join(f"WHEN '{key}' THEN '{label.replace(chr(39), chr(39) * 2)}'"
                     for key, label in LABELS.items())
    return f"(CASE last_verdict {cases} ELSE last_verdict END) COLLATE NOCASE"


#: The orders of an idea list: name -> (SQL sort key, whether it can be missing). Every key but
#: the verdict's label has an index (migration ``0009_idea_orders``).
ORDERS: dict[str, tuple[str, bool]] = {
    "updated": ("updated_at", False),
    "title": ("title COLLATE NOCASE", False),
    "stage": ("stage", False),
    "verdict": (_verdict_label_sql(), True),
    "sharpe": ("last_net_sharpe", True),
    "trials": ("trial_count", False),
}


def order_clause(order: str, descending: bool) -> str:
    """The ``ORDER BY`` clause of an order of :data:`ORDERS` (missing values last)."""
    if order not in ORDERS:
        raise CatalogueError(f"unknown order '{order}'; known: {', '.join(ORDERS)}",
                             field="order")
    key, nullable = ORDERS[order]
    if descending:  # SQLite puts NULL below every value: last when descending
        return f" ORDER BY {key} DESC, id DESC"
    return f" ORDER BY {f'({key}) IS NULL, ' if nullable else ''}{key}, id"


def where_clause(*, stage: str | None = None, verdict: str | None = None,
                 market: str | None = None, tag: str | None = None, author: str | None = None,
                 source_kind: str | None = None, text: str | None = None,
                 among: Sequence[int] | None = None) -> tuple[str, list[Any]]:
    """The ``WHERE`` clause (or '') and its parameters of the filters given (``None`` means
    any); ``among`` keeps only these idea ids."""
    where: list[str] = []
    params: list[Any] = []
    if stage is not None:
        where.append("stage = ?")
        params.append(validate.choice(stage, "stage", STAGES))
    if verdict is not None:
        where.append("last_verdict = ?")
        params.append(validate.text(verdict, "verdict", limit=200, one_line=True))
    if author is not None:
        where.append("submitted_by = ?")
        params.append(validate.name(author, "author"))
    if source_kind is not None:
        where.append("source_kind = ?")
        params.append(validate.choice(source_kind, "source_kind", SOURCE_KINDS))
    for column, value in (("markets", market), ("tags", tag)):
        if value is not None:
            # Names hold no quotes (see validate), so '"NAME"' inside the JSON array text is
            # exactly one whole item: faster than json_each over every row.
            where.append(f"instr({column}, ?) > 0")
            params.append(json.dumps(validate.text(value, column[:-1], limit=200,
                                                   one_line=True), ensure_ascii=False))
    if text is not None:
        query = fts_query(text)
        where.append("id IN (SELECT rowid FROM idea_search WHERE idea_search MATCH ?)")
        params.append(query)
    if among is not None:
        where.append("id IN (SELECT value FROM json_each(?))")
        params.append(json.dumps([validate.integer(i, "idea id") for i in among]))
    return (" WHERE " + " AND ".join(where) if where else ""), params


def list_ideas(db: Database, *, stage: str | None = None, verdict: str | None = None,
               market: str | None = None, tag: str | None = None, author: str | None = None,
               source_kind: str | None = None, text: str | None = None,
               limit: int | None = None) -> list[IdeaSummary]:
    """Ideas matching every filter given, most recently updated first.

    ``text`` matches an idea when each of its words appears in the idea's title, hypothesis,
    rationale or journal entries.
    """
    where, params = where_clause(stage=stage, verdict=verdict, market=market, tag=tag,
                                 author=author, source_kind=source_kind, text=text)
    sql = f"SELECT {', '.join(_COLUMNS)} FROM ideas" + where + order_clause("updated", True)
    if limit is not None:
        sql += " LIMIT ?"
        params.append(validate.integer(limit, "limit"))
    return _summaries(db.execute(sql, params))


def ordered(db: Database, columns: Sequence[str], *, order: str = "updated",
            descending: bool = True, **filters: Any) -> list[tuple]:
    """``columns`` of the ideas matching ``filters`` (see :func:`where_clause`), in an order of
    :data:`ORDERS`."""
    where, params = where_clause(**filters)
    sql = (f"SELECT {', '.join(columns)} FROM ideas" + where
           + order_clause(order, descending))
    return db.execute(sql, params).fetchall()


def summaries(db: Database, ids: Sequence[int]) -> list[IdeaSummary]:
    """The list lines of these ideas, in the order given (ids with no idea left out)."""
    where, params = where_clause(among=ids)
    found = {r.id: r for r in _summaries(db.execute(
        f"SELECT {', '.join(_COLUMNS)} FROM ideas" + where, params))}
    return [found[i] for i in ids if i in found]


def choices(db: Database) -> IdeaChoices:
    """The markets, tags and authors the ideas name, each sorted."""
    names = functools.lru_cache(maxsize=4096)(_names)
    markets = {m for (text,) in db.execute("SELECT DISTINCT markets FROM ideas")
               for m in names(text)}
    tags = {t for (text,) in db.execute("SELECT DISTINCT tags FROM ideas") for t in names(text)}
    authors = [a for (a,) in db.execute("SELECT DISTINCT submitted_by FROM ideas")]
    return IdeaChoices(markets=tuple(sorted(markets)), tags=tuple(sorted(tags)),
                       authors=tuple(sorted(authors)))


def _summaries(rows: Any) -> list[IdeaSummary]:
    names = functools.lru_cache(maxsize=4096)(_names)  # few distinct market and tag lists
    return [IdeaSummary(r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7], names(r[8]),
                        names(r[9]), r[10], r[11], r[12], r[13]) for r in rows]


def _names(encoded: str) -> tuple[str, ...]:
    # A JSON array of names written by json.dumps (", " between items); names hold no quotes
    # or backslashes, so splitting is exact and much faster than json.loads.
    return tuple(encoded[2:-2].split('", "')) if encoded != "[]" else ()
