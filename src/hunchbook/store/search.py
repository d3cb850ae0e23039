"""Listing ideas: filters by stage, verdict, market, tag, author and source, and full-text
search (SQLite FTS5) over titles, hypotheses, rationales and journal text."""

from __future__ import annotations

import functools
import json
import re
from typing import Any

from hunchbook.store import validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import IdeaSummary
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


def list_ideas(db: Database, *, stage: str | None = None, verdict: str | None = None,
               market: str | None = None, tag: str | None = None, author: str | None = None,
               source_kind: str | None = None, text: str | None = None,
               limit: int | None = None) -> list[IdeaSummary]:
    """Ideas matching every filter given, most recently updated first.

    ``text`` matches an idea when each of its words appears in the idea's title, hypothesis,
    rationale or journal entries.
    """
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
    sql = (f"SELECT {', '.join(_COLUMNS)} FROM ideas"
           + (" WHERE " + " AND ".join(where) if where else "")
           + " ORDER BY updated_at DESC, id DESC")
    if limit is not None:
        sql += " LIMIT ?"
        params.append(validate.integer(limit, "limit"))
    names = functools.lru_cache(maxsize=4096)(_names)  # few distinct market and tag lists
    return [IdeaSummary(r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7], names(r[8]),
                        names(r[9]), r[10], r[11], r[12], r[13])
            for r in db.execute(sql, params)]


def _names(encoded: str) -> tuple[str, ...]:
    # A JSON array of names written by json.dumps (", " between items); names hold no quotes
    # or backslashes, so splitting is exact and much faster than json.loads.
    return tuple(encoded[2:-2].split('", "')) if encoded != "[]" else ()
