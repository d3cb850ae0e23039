"""Each run against its idea's pre-registration (schema version with ``run_preregistration``).

Before a run is recorded (:meth:`hunchbook.catalogue.Catalogue.record_run`) its traded markets
(the rule revision's ``markets``) and its parameter sets are compared with the pre-registration
(definition of "within" in :mod:`hunchbook.core.prereg`):

* against the **version in force**: a run outside it is refused, naming what to amend and how
  (an amendment needs a reason typed by a person);
* against **version 1**, frozen at the first run: a run outside it is recorded only with the
  verdict warning saying so (:func:`hunchbook.core.prereg.outside_warning`), and the row kept
  here flags it in the runs table, the reports and ``hunchbook runs list``.

So nothing outside the pre-registration is recorded silently. The row (append-only) holds the
version in force, whether the run lies within version 1, what lies outside and the warning's
finding. It is derived from chained records (the run, its revision, the pre-registration
versions), like the trials: :func:`derive` computes it for runs recorded before this table
existed and for imported runs, and ``catalogue check`` recomputes every row
(:func:`mismatches`).
"""

from __future__ import annotations

import json
import tomllib
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

from hunchbook.store import preregistration
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import RunPreregistration
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    from hunchbook.core.prereg import Scope
    from hunchbook.store.records import Preregistration

#: The table of this module.
TABLE = "run_preregistration"


def rule_markets(text: str) -> tuple[str, ...]:
    """The markets a rule file trades (its ``markets`` list; empty when it names none)."""
    try:
        markets = tomllib.loads(text).get("markets", [])
    except tomllib.TOMLDecodeError:
        return ()
    return tuple(str(m) for m in markets) if isinstance(markets, list) else ()


def scopes(db: Database, idea_id: int, *, markets: Sequence[str],
           parameter_sets: Sequence[Mapping[str, float]], at: str | None = None
           ) -> tuple[Scope, Scope] | None:
    """Where a run lies against the version in force (at time ``at``, ISO 8601; now when
    None) and against version 1; None before the first run."""
    from hunchbook.core.errors import RuleError
    from hunchbook.core.prereg import run_scope

    history = [p for p in preregistration.versions(db, idea_id)
               if at is None or p.frozen_at <= at]
    if not history:
        return None

    def against(version: Preregistration) -> Scope:
        try:
            return run_scope(markets=markets, parameter_sets=parameter_sets,
                             registered_markets=version.markets,
                             registered_space=version.parameter_space, version=version.version)
        except RuleError as exc:
            raise CatalogueError(f"the constraint of pre-registration version "
                                 f"{version.version} does not parse ({exc})",
                                 field=f"idea {idea_id}") from None

    return against(history[-1]), against(history[0])


def refusal(idea_id: int, scope: Scope) -> str:
    """Why a run outside the version in force is refused, and how to amend it."""
    return (f"outside the pre-registration in force (version {scope.version}): "
            f"{scope.summary()}. Amend the pre-registration first, with a reason in your own "
            f"words - command line: hunchbook ideas amend {idea_id} --markets ... --rules "
            "RULEFILE --reason \"...\"; window: Idea section, Amend with reason\u2026")


def finding(db: Database, idea_id: int, in_force: Scope, first: Scope) -> str:
    """The verdict warning's finding of a run outside version 1 ("" when within)."""
    if first.within:
        return ""
    from hunchbook.core.prereg import outside_warning

    amendments = preregistration.amendments(db, idea_id, upto=in_force.version)
    return outside_warning(first, amendments).finding


def insert(db: Database, run_id: int, in_force: Scope, first: Scope, text: str) -> None:
    """Keep a run's place against its pre-registration."""
    db.execute(f"INSERT INTO {TABLE} (run_id, version, within, scope, finding) "
               "VALUES (?, ?, ?, ?, ?)",
               [run_id, in_force.version, int(first.within),
                json.dumps(first.to_dict(), sort_keys=True), text])


def expected(db: Database, run_id: int) -> tuple[Scope, Scope, str] | None:
    """A stored run's place against its pre-registration, recomputed against the versions
    frozen by the time it was recorded: (version in force, version 1, finding); None when its
    idea had no pre-registration then or the pre-registered constraint does not parse."""
    row = db.execute("SELECT r.idea_id, r.parameter_sets, r.recorded_at, v.text FROM runs r "
                     "JOIN rule_revisions v ON v.id = r.revision_id WHERE r.id = ?",
                     [run_id]).fetchone()
    idea_id, sets, at, text = row
    try:
        found = scopes(db, idea_id, markets=rule_markets(text),
                       parameter_sets=json.loads(sets), at=at)
    except CatalogueError:
        return None
    return None if found is None else (*found, finding(db, idea_id, *found))


def derive(db: Database, run_id: int) -> None:
    """Compute and keep the row of a run already stored (recorded before the table existed,
    or imported; see :func:`expected`); a run with nothing to check against keeps no row
    (shown as not checked)."""
    found = expected(db, run_id)
    if found is not None:
        insert(db, run_id, *found)


def mismatches(db: Database) -> list[int]:
    """Runs whose stored row differs from its recomputation, or that lack the row they
    should have (for ``catalogue check``)."""
    stored = {r[0]: r[1:] for r in db.execute(
        f"SELECT run_id, version, within, scope, finding FROM {TABLE}")}
    wrong = []
    for (run_id,) in db.execute("SELECT id FROM runs ORDER BY id").fetchall():
        found = expected(db, run_id)
        want = None if found is None else (
            found[0].version, int(found[1].within),
            json.dumps(found[1].to_dict(), sort_keys=True), found[2])
        if stored.get(run_id) != want:
            wrong.append(run_id)
    return wrong


def read(row: Mapping[str, Any]) -> RunPreregistration | None:
    """The record of the columns ``pre_version``, ``pre_scope`` and ``pre_finding`` of a
    runs query joined with this table (None: not checked)."""
    if row.get("pre_version") is None:
        return None
    from hunchbook.core.prereg import Scope

    return RunPreregistration(version=row["pre_version"],
                              scope=Scope.from_dict(json.loads(row["pre_scope"])),
                              finding=row["pre_finding"])
