"""The catalogue schema as ordered migrations, and opening a file at the current version.

Each migration is one function registered on :data:`MIGRATIONS` (sqlite-utils ``Migrations``);
each runs in a transaction together with its row in ``_sqlite_migrations`` and sets
``PRAGMA user_version`` to its number. A shipped migration is never edited; a change is a new
one. :func:`hunchbook.store.opening.open_catalogue_db` backs the file up (online backup API)
before applying any.

Versions
--------
1. ``base``: ideas, rule revisions, pre-registrations, runs and their trials, journal, reviews,
   imports; append-only triggers on every record that must never change.
2. ``full_text_search``: FTS5 indexes over idea titles, hypotheses and rationales and over
   journal text, kept current by triggers; existing rows indexed.
3. ``idea_summary``: last verdict, last net Sharpe, trial count and last run time on each idea
   (for fast lists and filters), backfilled from the runs; indexes for the list filters.
4. ``idea_search``: one FTS5 document per idea holding its title, hypothesis, rationale and
   all its journal text, replacing the indexes of version 2 (searches with many matching
   journal entries were too slow); built from the existing rows.
5. ``tamper_evidence``: every append-only table refuses an insert whose key is taken
   (``REPLACE`` would otherwise delete the old row without firing the delete trigger), and
   each row of the chained tables holds its hash chained to the row before
   (:mod:`hunchbook.store.chain`), computed for the existing rows.
6. ``holdout``: the catalogue's holdout boundary, one append-only row per setting (the
   latest holds; who set it, when and why), and each idea's single unlocking of its held-out
   years (``holdout_views``: the run it continues, the chosen set, the boundary, who and when,
   the held-out figures and daily P&L); both append-only and hash-chained.
7. ``families_and_four_eyes``: ``variant_links`` (an idea recorded as a variant of another,
   once per idea: who, when, why), ``desk_settings`` (desk rules such as ``one_person_desk``,
   one row per setting, the latest holds), both append-only and hash-chained; ``reviews``
   rebuilt to allow the promotion review's decisions (rows, ids and hashes kept).
8. ``run_preregistration``: each run against its idea's pre-registration
   (:mod:`hunchbook.store.run_scopes`): the version in force when it was recorded, whether it
   lies within version 1 and what lies outside; append-only, derived like the trials, and
   computed for the runs already stored.
9. ``idea_orders``: indexes for each order of the idea table.
10. ``typed_desk_settings``: ``desk_settings`` rebuilt so a value may be an amount (its plain
    decimal text) or ``none`` besides on and off (rows, ids and hashes kept).

Files are opened, recognised and migrated by :mod:`hunchbook.store.opening`.
"""

from __future__ import annotations

from hunchbook.store import chain
from hunchbook.store.errors import CatalogueError
from hunchbook.store.sqlite_lib import Database, Migrations
from hunchbook.store.vocab import (
    DECISIONS,
    ENTRY_KINDS,
    RATIONALE_KINDS,
    REVIEW_DECISIONS,
    SOURCE_KINDS,
    STAGES,
    sql_list,
)

#: The catalogue's migration set, in order.
MIGRATIONS = Migrations("hunchbook")

#: Tables whose rows are never updated or deleted once written (from version 1 on).
APPEND_ONLY = ("rule_revisions", "preregistrations", "runs", "trials", "journal", "reviews",
               "imports")
#: The tables version 5 chained (later tables are chained when they are created).
_CHAINED_AT_5 = ("rule_revisions", "preregistrations", "runs", "journal", "reviews", "imports")


def _run(db: Database, statements: list[str]) -> None:
    # One statement at a time: executescript() would commit the migration's transaction.
    for sql in statements:
        db.execute(sql)


@MIGRATIONS(name="0001_base")
def _base(db: Database) -> None:
    _run(db, [
        f"""CREATE TABLE ideas (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            title TEXT NOT NULL,
            hypothesis TEXT NOT NULL,
            rationale TEXT NOT NULL,
            rationale_kind TEXT NOT NULL CHECK (rationale_kind IN {sql_list(RATIONALE_KINDS)}),
            source_kind TEXT NOT NULL CHECK (source_kind IN {sql_list(SOURCE_KINDS)}),
            citation TEXT,
            link TEXT,
            submitted_by TEXT NOT NULL,
            reviewer TEXT,
            markets TEXT NOT NULL,
            tags TEXT NOT NULL,
            stage TEXT NOT NULL CHECK (stage IN {sql_list(STAGES)}),
            created_at TEXT NOT NULL,
            updated_at TEXT NOT NULL
        ) STRICT""",
        """CREATE TABLE rule_revisions (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            number INTEGER NOT NULL,
            text TEXT NOT NULL,
            sha256 TEXT NOT NULL,
            strategy_key TEXT NOT NULL,
            parameter_space TEXT NOT NULL,
            saved_at TEXT NOT NULL,
            saved_by TEXT NOT NULL,
            UNIQUE (idea_id, number)
        ) STRICT""",
        """CREATE TABLE preregistrations (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            version INTEGER NOT NULL,
            rationale TEXT NOT NULL,
            markets TEXT NOT NULL,
            parameter_space TEXT NOT NULL,
            revision_id INTEGER NOT NULL REFERENCES rule_revisions(id),
            frozen_at TEXT NOT NULL,
            frozen_by TEXT NOT NULL,
            reason TEXT NOT NULL,
            UNIQUE (idea_id, version)
        ) STRICT""",
        """CREATE TABLE runs (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            revision_id INTEGER NOT NULL REFERENCES rule_revisions(id),
            parameter_sets TEXT NOT NULL,
            set_count INTEGER NOT NULL,
            data_fingerprint TEXT NOT NULL,
            engine_version TEXT NOT NULL,
            summary TEXT NOT NULL,
            statistics TEXT NOT NULL,
            verdict TEXT NOT NULL,
            verdict_label TEXT NOT NULL,
            chosen_params TEXT NOT NULL,
            chosen_net_sharpe REAL,
            trial_count INTEGER NOT NULL,
            daily_pnl BLOB NOT NULL,
            recorded_at TEXT NOT NULL,
            recorded_by TEXT NOT NULL
        ) STRICT""",
        """CREATE TABLE trials (
            run_id INTEGER NOT NULL REFERENCES runs(id),
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            strategy_key TEXT NOT NULL,
            params TEXT NOT NULL,
            net_sharpe REAL,
            PRIMARY KEY (run_id, params)
        ) STRICT""",
        "CREATE INDEX trials_by_idea ON trials (idea_id, strategy_key, params, run_id)",
        f"""CREATE TABLE journal (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER REFERENCES ideas(id),
            kind TEXT NOT NULL CHECK (kind IN {sql_list(ENTRY_KINDS)}),
            text TEXT NOT NULL,
            author TEXT NOT NULL,
            at TEXT NOT NULL,
            corrects INTEGER REFERENCES journal(id)
        ) STRICT""",
        "CREATE INDEX journal_by_idea ON journal (idea_id, id)",
        "CREATE INDEX journal_by_correction ON journal (corrects)",
        f"""CREATE TABLE reviews (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            reviewer TEXT NOT NULL,
            checklist TEXT NOT NULL,
            decision TEXT NOT NULL CHECK (decision IN {sql_list(list(DECISIONS))}),
            comments TEXT NOT NULL,
            at TEXT NOT NULL
        ) STRICT""",
        """CREATE TABLE imports (
            id INTEGER PRIMARY KEY,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            bundle_sha256 TEXT NOT NULL,
            report TEXT NOT NULL,
            imported_by TEXT NOT NULL,
            at TEXT NOT NULL
        ) STRICT""",
        "CREATE INDEX runs_by_idea ON runs (idea_id, id)",
        "CREATE INDEX revisions_by_idea ON rule_revisions (idea_id, number)",
        "CREATE INDEX reviews_by_idea ON reviews (idea_id, id)",
    ])
    for table in APPEND_ONLY:
        for action in ("UPDATE", "DELETE"):
            db.execute(
                f"CREATE TRIGGER {table}_no_{action.lower()} BEFORE {action} ON {table} "
                f"BEGIN SELECT RAISE(ABORT, '{table} rows are append-only'); END")
    db.execute("CREATE TRIGGER ideas_no_delete BEFORE DELETE ON ideas "
               "BEGIN SELECT RAISE(ABORT, 'ideas are never deleted; shelve them'); END")
    db.execute("PRAGMA user_version = 1")


@MIGRATIONS(name="0002_full_text_search")
def _full_text_search(db: Database) -> None:
    # External-content FTS5 tables over the records, kept current by insert/update/delete
    # triggers (sqlite-utils writes them); the index is then built from the rows already there.
    db["ideas"].enable_fts(["title", "hypothesis", "rationale"], fts_version="FTS5",
                           create_triggers=True, tokenize="unicode61 remove_diacritics 2")
    db["journal"].enable_fts(["text"], fts_version="FTS5", create_triggers=True,
                             tokenize="unicode61 remove_diacritics 2")
    db.execute("INSERT INTO ideas_fts (ideas_fts) VALUES ('rebuild')")
    db.execute("INSERT INTO journal_fts (journal_fts) VALUES ('rebuild')")
    db.execute("PRAGMA user_version = 2")


@MIGRATIONS(name="0003_idea_summary")
def _idea_summary(db: Database) -> None:
    _run(db, [
        "ALTER TABLE ideas ADD COLUMN last_verdict TEXT",
        "ALTER TABLE ideas ADD COLUMN last_net_sharpe REAL",
        "ALTER TABLE ideas ADD COLUMN trial_count INTEGER NOT NULL DEFAULT 0",
        "ALTER TABLE ideas ADD COLUMN last_run_at TEXT",
        """UPDATE ideas SET
            last_verdict = (SELECT verdict_label FROM runs WHERE runs.idea_id = ideas.id
                            ORDER BY id DESC LIMIT 1),
            last_net_sharpe = (SELECT chosen_net_sharpe FROM runs WHERE runs.idea_id = ideas.id
                               ORDER BY id DESC LIMIT 1),
            last_run_at = (SELECT recorded_at FROM runs WHERE runs.idea_id = ideas.id
                           ORDER BY id DESC LIMIT 1),
            trial_count = (SELECT count(*) FROM (SELECT DISTINCT strategy_key, params
                           FROM trials WHERE trials.idea_id = ideas.id))""",
        "CREATE INDEX ideas_by_updated ON ideas (updated_at, id)",
        "CREATE INDEX ideas_by_stage ON ideas (stage, updated_at)",
        "CREATE INDEX ideas_by_author ON ideas (submitted_by)",
        "CREATE INDEX ideas_by_verdict ON ideas (last_verdict)",
    ])
    db.execute("PRAGMA user_version = 3")


@MIGRATIONS(name="0004_idea_search")
def _idea_search(db: Database) -> None:
    # One search document per idea (its title, hypothesis, rationale and all its journal text)
    # replaces the two per-record indexes: a word common in the journal then costs one posting
    # per idea, not one per entry, and "every word" means every word somewhere in the idea.
    for table in ("ideas", "journal"):
        for suffix in ("ai", "ad", "au"):
            db.execute(f"DROP TRIGGER IF EXISTS {table}_{suffix}")
        db.execute(f"DROP TABLE {table}_fts")
    _run(db, [
        "CREATE VIRTUAL TABLE idea_search USING fts5 (title, hypothesis, rationale, journal, "
        "tokenize = 'unicode61 remove_diacritics 2')",
        """INSERT INTO idea_search (rowid, title, hypothesis, rationale, journal)
            SELECT i.id, i.title, i.hypothesis, i.rationale,
                   coalesce((SELECT group_concat(text, char(10)) FROM
                             (SELECT text FROM journal j WHERE j.idea_id = i.id ORDER BY j.id)),
                            '')
            FROM ideas i""",
        """CREATE TRIGGER idea_search_new_idea AFTER INSERT ON ideas BEGIN
            INSERT INTO idea_search (rowid, title, hypothesis, rationale, journal)
            VALUES (new.id, new.title, new.hypothesis, new.rationale, '');
        END""",
        """CREATE TRIGGER idea_search_edited_idea AFTER UPDATE OF title, hypothesis, rationale
            ON ideas BEGIN
            UPDATE idea_search SET title = new.title, hypothesis = new.hypothesis,
                rationale = new.rationale WHERE rowid = new.id;
        END""",
        """CREATE TRIGGER idea_search_new_entry AFTER INSERT ON journal
            WHEN new.idea_id IS NOT NULL BEGIN
            UPDATE idea_search SET journal = journal || char(10) || new.text
                WHERE rowid = new.idea_id;
        END""",
    ])
    db.execute("PRAGMA user_version = 4")


#: The keys that identify a row of each append-only table (its primary key and UNIQUE sets).
_KEYS = {
    "rule_revisions": (("id",), ("uuid",), ("idea_id", "number")),
    "preregistrations": (("id",), ("uuid",), ("idea_id", "version")),
    "runs": (("id",), ("uuid",)),
    "trials": (("run_id", "params"),),
    "journal": (("id",), ("uuid",)),
    "reviews": (("id",), ("uuid",)),
    "imports": (("id",),),
}


def _refusal(table: str) -> str:
    return f"BEGIN SELECT RAISE(ABORT, '{table} rows are append-only'); END"


@MIGRATIONS(name="0005_tamper_evidence")
def _tamper_evidence(db: Database) -> None:
    # REPLACE resolves a key conflict by deleting the old row, and that delete fires no trigger
    # unless the connection turned recursive_triggers on: refuse the insert itself instead.
    for table, keys in _KEYS.items():
        taken = " OR ".join(
            f"EXISTS (SELECT 1 FROM {table} WHERE "
            + " AND ".join(f"{column} = new.{column}" for column in key) + ")" for key in keys)
        db.execute(f"CREATE TRIGGER {table}_no_replace BEFORE INSERT ON {table} WHEN {taken} "
                   + _refusal(table))
    for table in _CHAINED_AT_5:
        db.execute(f"ALTER TABLE {table} ADD COLUMN row_hash TEXT")
        db.execute(f"DROP TRIGGER {table}_no_update")
        chain.seal(db, table)
        db.execute(f"CREATE TRIGGER {table}_no_update BEFORE UPDATE ON {table} "
                   + _refusal(table))
    db.execute("PRAGMA user_version = 5")


#: The keys of the holdout tables (as :data:`_KEYS` for version 5).
_HOLDOUT_KEYS = {
    "holdout_boundaries": (("id",), ("uuid",)),
    "holdout_views": (("id",), ("uuid",), ("idea_id",)),
}


@MIGRATIONS(name="0006_holdout")
def _holdout(db: Database) -> None:
    _run(db, [
        """CREATE TABLE holdout_boundaries (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            boundary TEXT NOT NULL CHECK (boundary GLOB
                '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
            reason TEXT NOT NULL,
            set_by TEXT NOT NULL,
            set_at TEXT NOT NULL,
            row_hash TEXT
        ) STRICT""",
        """CREATE TABLE holdout_views (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL UNIQUE REFERENCES ideas(id),
            revision_id INTEGER NOT NULL REFERENCES rule_revisions(id),
            run_id INTEGER NOT NULL REFERENCES runs(id),
            chosen_params TEXT NOT NULL,
            boundary TEXT NOT NULL,
            data_fingerprint TEXT NOT NULL,
            engine_version TEXT NOT NULL,
            figures TEXT NOT NULL,
            daily_pnl BLOB NOT NULL,
            seen_by TEXT NOT NULL,
            seen_at TEXT NOT NULL,
            row_hash TEXT
        ) STRICT""",
    ])
    _append_only(db, _HOLDOUT_KEYS)
    db.execute("PRAGMA user_version = 6")


def _append_only(db: Database, tables: dict[str, tuple[tuple[str, ...], ...]]) -> None:
    """Triggers refusing every update, delete and key-taking insert on these tables (versions
    6 and 7)."""
    for table, keys in tables.items():
        for action in ("UPDATE", "DELETE"):
            db.execute(f"CREATE TRIGGER {table}_no_{action.lower()} BEFORE {action} ON "
                       f"{table} " + _refusal(table))
        taken = " OR ".join(
            f"EXISTS (SELECT 1 FROM {table} WHERE "
            + " AND ".join(f"{column} = new.{column}" for column in key) + ")" for key in keys)
        db.execute(f"CREATE TRIGGER {table}_no_replace BEFORE INSERT ON {table} WHEN {taken} "
                   + _refusal(table))


#: The keys of the tables of version 7 (as :data:`_KEYS` for version 5); ``reviews`` is rebuilt.
_FAMILY_KEYS = {
    "variant_links": (("id",), ("uuid",), ("idea_id",)),
    "desk_settings": (("id",), ("uuid",)),
    "reviews": _KEYS["reviews"],
}


@MIGRATIONS(name="0007_families_and_four_eyes")
def _families_and_four_eyes(db: Database) -> None:
    _run(db, [
        """CREATE TABLE variant_links (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL UNIQUE REFERENCES ideas(id),
            parent_id INTEGER NOT NULL REFERENCES ideas(id),
            reason TEXT NOT NULL,
            set_by TEXT NOT NULL,
            set_at TEXT NOT NULL,
            row_hash TEXT,
            CHECK (parent_id != idea_id)
        ) STRICT""",
        "CREATE INDEX variant_links_by_parent ON variant_links (parent_id, idea_id)",
        """CREATE TABLE desk_settings (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            key TEXT NOT NULL,
            value TEXT NOT NULL CHECK (value IN ('on', 'off')),
            reason TEXT NOT NULL,
            set_by TEXT NOT NULL,
            set_at TEXT NOT NULL,
            row_hash TEXT
        ) STRICT""",
        # SQLite cannot widen a CHECK in place: the reviews move to a new table with the same
        # columns (so every row keeps its id and chained hash); dropping the old table fires no
        # trigger, and nothing refers to its rows.
        f"""CREATE TABLE reviews_new (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            idea_id INTEGER NOT NULL REFERENCES ideas(id),
            reviewer TEXT NOT NULL,
            checklist TEXT NOT NULL,
            decision TEXT NOT NULL CHECK (decision IN {sql_list(list(REVIEW_DECISIONS))}),
            comments TEXT NOT NULL,
            at TEXT NOT NULL,
            row_hash TEXT
        ) STRICT""",
        "INSERT INTO reviews_new (id, uuid, idea_id, reviewer, checklist, decision, comments, "
        "at, row_hash) SELECT id, uuid, idea_id, reviewer, checklist, decision, comments, at, "
        "row_hash FROM reviews ORDER BY id",
        "DROP TABLE reviews",
        "ALTER TABLE reviews_new RENAME TO reviews",
        "CREATE INDEX reviews_by_idea ON reviews (idea_id, id)",
    ])
    _append_only(db, _FAMILY_KEYS)
    db.execute("PRAGMA user_version = 7")


#: A desk setting's stored value (version 10): on, off, none, or a positive amount written as
#: plain decimal digits with at most one point.
_SETTING_VALUE = ("value IN ('on', 'off', 'none') OR (value GLOB '[0-9]*' AND value NOT GLOB "
                  "'*[^0-9.]*' AND value NOT GLOB '*.*.*' AND CAST(value AS REAL) > 0)")


@MIGRATIONS(name="0008_run_preregistration")
def _run_preregistration(db: Database) -> None:
    from hunchbook.store import run_scopes

    table = run_scopes.TABLE
    _run(db, [
        f"""CREATE TABLE {table} (
            run_id INTEGER PRIMARY KEY REFERENCES runs(id),
            version INTEGER NOT NULL,
            within INTEGER NOT NULL CHECK (within IN (0, 1)),
            scope TEXT NOT NULL,
            finding TEXT NOT NULL
        ) STRICT""",
        f"CREATE TRIGGER {table}_no_replace BEFORE INSERT ON {table} WHEN EXISTS (SELECT 1 "
        f"FROM {table} WHERE run_id = new.run_id) " + _refusal(table),
    ])
    for action in ("UPDATE", "DELETE"):
        db.execute(f"CREATE TRIGGER {table}_no_{action.lower()} BEFORE {action} ON {table} "
                   + _refusal(table))
    for (run_id,) in db.execute("SELECT id FROM runs ORDER BY id").fetchall():
        run_scopes.derive(db, run_id)
    db.execute(f"PRAGMA user_version = {migration_names().index('0008_run_preregistration') + 1}")


@MIGRATIONS(name="0009_idea_orders")
def _idea_orders(db: Database) -> None:
    # The idea table's orders (see hunchbook.store.search.ORDERS), each key with the id that
    # breaks its ties, so a sorted page is read from an index rather than sorted.
    _run(db, [
        "CREATE INDEX ideas_by_title ON ideas (title COLLATE NOCASE, id)",
        "CREATE INDEX ideas_by_stage_id ON ideas (stage, id)",
        "CREATE INDEX ideas_by_sharpe ON ideas (last_net_sharpe, id)",
        "CREATE INDEX ideas_by_sharpe_known ON ideas "
        "(last_net_sharpe IS NULL, last_net_sharpe, id)",
        "CREATE INDEX ideas_by_trials ON ideas (trial_count, id)",
    ])
    db.execute(f"PRAGMA user_version = {migration_names().index('0009_idea_orders') + 1}")


@MIGRATIONS(name="0010_typed_desk_settings")
def _typed_desk_settings(db: Database) -> None:
    # The desk settings' values widen from on/off to on/off, an amount as its plain decimal
    # text, or none (see hunchbook.store.setting_kinds). SQLite cannot widen a CHECK in place:
    # the rows move to a new table with the same columns, so each keeps its id and chained
    # hash (as the reviews did in version 7); dropping the old table drops its triggers.
    _run(db, [
        f"""CREATE TABLE desk_settings_new (
            id INTEGER PRIMARY KEY,
            uuid TEXT NOT NULL UNIQUE,
            key TEXT NOT NULL,
            value TEXT NOT NULL CHECK ({_SETTING_VALUE}),
            reason TEXT NOT NULL,
            set_by TEXT NOT NULL,
            set_at TEXT NOT NULL,
            row_hash TEXT
        ) STRICT""",
        "INSERT INTO desk_settings_new (id, uuid, key, value, reason, set_by, set_at, row_hash) "
        "SELECT id, uuid, key, value, reason, set_by, set_at, row_hash FROM desk_settings "
        "ORDER BY id",
        "DROP TABLE desk_settings",
        "ALTER TABLE desk_settings_new RENAME TO desk_settings",
    ])
    _append_only(db, {"desk_settings": _FAMILY_KEYS["desk_settings"]})
    db.execute(f"PRAGMA user_version = {migration_names().index('0010_typed_desk_settings') + 1}")


#: The schema version this code writes (the number of migrations).
SCHEMA_VERSION = len(MIGRATIONS._migrations)


def migration_names() -> list[str]:
    """Names of every migration, in order (version ``n`` is the first ``n`` of them)."""
    return [m.name for m in MIGRATIONS._migrations]


def schema_version(db: Database) -> int:
    """How many of the catalogue's migrations this database has applied."""
    applied = [m.name for m in MIGRATIONS.applied(db)]
    known = migration_names()
    unknown = [name for name in applied if name not in known]
    if unknown:
        raise CatalogueError(f"written by a newer Hunchbook (unknown schema changes "
                             f"{', '.join(unknown)}); update Hunchbook to open it")
    if applied != known[:len(applied)]:
        raise CatalogueError(f"schema changes applied out of order: {', '.join(applied)}")
    return len(applied)


def pending(db: Database, stop_before: str | None = None) -> list[str]:
    """Names of the migrations not yet applied (those before ``stop_before`` when given)."""
    names = [m.name for m in MIGRATIONS.pending(db)]
    return names[:names.index(stop_before)] if stop_before in names else names
