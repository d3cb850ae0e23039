"""Runs of an idea and the trials they count.

A run stores its rule revision, the parameter sets tried, the data fingerprint (one digest per
market and the markets changed since the idea's last run are on its record: :func:`data_read`),
the engine version, its results record (:class:`~hunchbook.core.results.RunSummary`, as JSON in
three columns: statistics, verdict and the rest) and the chosen set's daily P&L
(see :mod:`hunchbook.store.pnl`).

Trials
------
Each parameter set of a run is one row in ``trials`` keyed by the revision's *strategy key*
(see :mod:`hunchbook.store.revisions`) and the set's canonical parameters (names sorted,
values as floats). **The trial count of an idea is the number of distinct (strategy key,
parameter set) pairs over all the runs and revisions of its family**: the idea itself and every
idea linked to it as a variant (see :mod:`hunchbook.store.families`; a lone idea is a family of
one). Re-running a set under an unchanged strategy (new data, a comment edit, a wider grid) does
not add a trial, and neither does a variant running a set some member already ran under the
same strategy: the same rule text and parameters give the same backtest, whichever idea runs
it, so a trial two members share counts once. Any change to the signal, markets, roll, sizing,
costs or dates makes every set a new trial. The trial Sharpe ratios for the deflated Sharpe are
one per trial: the annualised net Sharpe from the latest run of that trial, trials with no
Sharpe (a flat series) left out.
"""

from __future__ import annotations

import json
import math
import uuid as uuidlib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any

from hunchbook.core.errors import RecordError
from hunchbook.store import chain, families, pnl, run_scopes, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import (
    DataRead,
    EarlierStrategy,
    Revision,
    RunLine,
    RunRecord,
    TrialHistory,
)
from hunchbook.store.sqlite_lib import Database

if TYPE_CHECKING:
    import pandas as pd

    from hunchbook.core.results import RunSummary

#: Longest verdict label (characters).
MAX_LABEL = 80


@dataclass(frozen=True)
class RunInput:
    """A run's values after validation, ready to insert."""

    result: RunSummary
    parameter_sets: list[dict[str, float]]
    data_fingerprint: str
    engine_version: str
    summary: str
    statistics: str
    verdict: str
    verdict_label: str
    chosen_params: dict[str, float]
    chosen_net_sharpe: float | None
    set_sharpes: list[tuple[str, float | None]]
    daily_pnl: bytes


#: ``json.dumps(..., sort_keys=True)`` without building an encoder per call (the same text).
_KEY_JSON = json.JSONEncoder(sort_keys=True)


def params_key(params: Mapping[str, float]) -> str:
    """Canonical text of a parameter set: JSON, names sorted, values as floats."""
    return _KEY_JSON.encode({k: float(v) for k, v in params.items()})


def clean(*, summary: Any, data_fingerprint: Any, engine_version: Any,
          daily_pnl: Any) -> RunInput:
    """Validate everything about a run before anything is written.

    ``summary`` is the run's :class:`~hunchbook.core.results.RunSummary`; its parameter sets
    must be distinct and between 1 and ``validate.MAX_SETS``; ``daily_pnl`` is the chosen
    set's daily P&L (date index; columns ``gross_pnl``, ``cost``, ``net_pnl``). The record is
    stored in three JSON columns: ``statistics``, ``verdict`` and the rest (``summary``).
    """
    from hunchbook.core.results import RunSummary  # the engine's record: numpy, statistics

    if not isinstance(summary, RunSummary):
        raise CatalogueError("expected the run's results record", field="summary")
    sets = [validate.param_set(s, f"sets[{i}].params") for i, s in
            enumerate(summary.parameter_sets)]
    if not 1 <= len(sets) <= validate.MAX_SETS:
        raise CatalogueError(f"expected 1 to {validate.MAX_SETS:,} parameter sets, found "
                             f"{len(sets):,}", field="sets")
    keys = [params_key(s) for s in sets]
    if len(set(keys)) != len(keys):
        raise CatalogueError("a parameter set is listed twice", field="sets")
    chosen = validate.param_set(summary.chosen.params, "chosen.params")
    if params_key(chosen) != keys[summary.statistics.chosen]:
        raise CatalogueError("the chosen set is not the set the statistics judge",
                             field="chosen.params")
    verdict = summary.verdict
    label = validate.text(verdict.outcome, "verdict.outcome", limit=MAX_LABEL, one_line=True)
    validate.text(verdict.label, "verdict.label", limit=MAX_LABEL, one_line=True)
    for i, reason in enumerate(verdict.reasons):
        validate.text(reason, f"verdict.reasons[{i}]")
    record = summary.to_dict()
    statistics, verdict_json = record.pop("statistics"), record.pop("verdict")
    sharpes = [validate.optional_number(_finite(s.net_sharpe), f"sets[{i}].net_sharpe")
               for i, s in enumerate(summary.sets)]
    return RunInput(
        result=summary, parameter_sets=sets,
        data_fingerprint=validate.name(data_fingerprint, "data_fingerprint"),
        engine_version=validate.name(engine_version, "engine_version"),
        summary=validate.to_json(record, "summary"),
        statistics=validate.to_json(statistics, "statistics"),
        verdict=validate.to_json(verdict_json, "verdict"),
        verdict_label=label, chosen_params=chosen,
        chosen_net_sharpe=sharpes[summary.statistics.chosen],
        set_sharpes=list(zip(keys, sharpes, strict=True)),
        daily_pnl=pnl.encode(pnl.clean(daily_pnl)))


def read_result(data: Any, *, where: str) -> RunSummary:
    """A results record read from plain JSON values (stored or exchanged), or a
    CatalogueError naming ``where`` and the field at fault."""
    from hunchbook.core.results import RunSummary

    try:
        return RunSummary.from_dict(data)
    except RecordError as exc:
        raise CatalogueError(str(exc), field=where) from None


def _finite(x: float) -> float | None:
    return x if math.isfinite(x) else None


def set_sharpes(summary: Any, keys: set[str]) -> dict[str, float | None]:
    """The net Sharpe of each parameter set (by :func:`params_key`) in a run's summary, which
    must cover exactly ``keys``."""
    if not isinstance(summary, Mapping) or not isinstance(summary.get("sets"), list):
        raise CatalogueError("expected a table with 'sets': a list of {params, net_sharpe}",
                             field="summary")
    out: dict[str, float | None] = {}
    for i, item in enumerate(summary["sets"]):
        field = f"summary.sets[{i}]"
        if not isinstance(item, Mapping) or "params" not in item or "net_sharpe" not in item:
            raise CatalogueError("expected a table with 'params' and 'net_sharpe'", field=field)
        key = params_key(validate.param_set(item["params"], f"{field}.params"))
        if key not in keys:
            raise CatalogueError(f"set {key} is not among the parameter sets", field=field)
        if key in out:
            raise CatalogueError(f"set {key} appears twice", field=field)
        out[key] = validate.optional_number(item["net_sharpe"], f"{field}.net_sharpe")
    if len(out) != len(keys):
        raise CatalogueError(f"{len(keys) - len(out)} parameter set(s) have no summary",
                             field="summary.sets")
    return out


def insert(db: Database, idea_id: int, revision: Revision, run: RunInput, *, by: str, at: str,
           run_uuid: str | None = None) -> int:
    """Write a cleaned run and its trials; refresh the idea's last verdict and the trial count
    of every member of its family."""
    seen = {row[0] for row in db.execute(
        families.cte() + "SELECT DISTINCT params FROM trials WHERE idea_id IN (SELECT id FROM "
        "family) AND strategy_key = ?2", [idea_id, revision.strategy_key])}
    count = trial_count(db, idea_id) + sum(key not in seen for key, _ in run.set_sharpes)
    run_id = chain.append(db, "runs", {
        "uuid": run_uuid or str(uuidlib.uuid4()), "idea_id": idea_id,
        "revision_id": revision.id, "parameter_sets": json.dumps(run.parameter_sets),
        "set_count": len(run.parameter_sets), "data_fingerprint": run.data_fingerprint,
        "engine_version": run.engine_version, "summary": run.summary,
        "statistics": run.statistics, "verdict": run.verdict, "verdict_label": run.verdict_label,
        "chosen_params": json.dumps(run.chosen_params), "chosen_net_sharpe": run.chosen_net_sharpe,
        "trial_count": count, "daily_pnl": run.daily_pnl, "recorded_at": at,
        "recorded_by": validate.name(by, "by")})
    db["trials"].insert_all(
        {"run_id": run_id, "idea_id": idea_id, "strategy_key": revision.strategy_key,
         "params": key, "net_sharpe": sharpe} for key, sharpe in run.set_sharpes)
    # The latest run by time (an imported older run does not replace a newer verdict).
    db.execute("UPDATE ideas SET (last_verdict, last_net_sharpe, last_run_at) = (SELECT "
               "verdict_label, chosen_net_sharpe, recorded_at FROM runs WHERE idea_id = ?1 "
               "ORDER BY recorded_at DESC, id DESC LIMIT 1), "
               "updated_at = max(updated_at, ?2) WHERE id = ?1", [idea_id, at])
    families.refresh_trial_counts(db, idea_id, count)
    return run_id


def trial_count(db: Database, idea_id: int) -> int:
    """Distinct (strategy key, parameter set) pairs ever run by the idea's family."""
    return families.trial_count(db, idea_id)


#: Each trial of the family of the idea bound to ?1 once, from its latest run: strategy key,
#: parameters, net Sharpe, in the order the trials were first written.
_LATEST_TRIALS = ("SELECT strategy_key, params, net_sharpe FROM (SELECT strategy_key, params, "
                  "net_sharpe, rowid AS written, row_number() OVER (PARTITION BY strategy_key, "
                  "params ORDER BY run_id DESC) AS newest FROM trials WHERE idea_id IN "
                  "(SELECT id FROM family)) WHERE newest = 1 ORDER BY written")


def trial_sharpes(db: Database, idea_id: int) -> list[float]:
    """One annualised net Sharpe per trial of the idea's family (its latest run), trials
    without one left out."""
    rows = db.execute(families.cte() + _LATEST_TRIALS, [idea_id]).fetchall()
    return [float(r[2]) for r in rows if r[2] is not None]


def prospective_trials(db: Database, idea_id: int, strategy_key: str,
                       parameter_sets: Sequence[Mapping[str, float]]) -> TrialHistory:
    """The trial count once these sets run under this strategy, and every *other* trial already
    recorded by the idea's family (the idea and its variants, see
    :mod:`hunchbook.store.families`), grouped by strategy with the latest rule text of that
    strategy (so that it can be recomputed on the current data) and its stored net Sharpe
    ratio. A trial several members ran counts once."""
    new = {(strategy_key, params_key(s)) for s in parameter_sets}
    rows = db.execute(families.cte() + _LATEST_TRIALS, [idea_id]).fetchall()
    # the latest saved text of each strategy (SQLite takes the bare column from the row
    # holding the maximum); texts of one strategy differ only in parameters, name and
    # description, so any member's text recomputes its trials alike
    latest = dict((key, text) for key, text, _ in db.execute(
        families.cte() + "SELECT u.strategy_key, v.text, max(v.id) FROM trials u JOIN runs r "
        "ON r.id = u.run_id JOIN rule_revisions v ON v.id = r.revision_id WHERE u.idea_id IN "
        "(SELECT id FROM family) GROUP BY u.strategy_key", [idea_id]))
    groups: dict[str, list[tuple[str, float | None]]] = {}
    for key, params, sharpe in rows:
        if (key, params) not in new:
            groups.setdefault(key, []).append((params, sharpe))
    earlier = tuple(EarlierStrategy(
        rule_text=latest[key], parameter_sets=tuple(json.loads(p) for p, _ in items),
        net_sharpes=tuple(None if v is None else float(v) for _, v in items))
        for key, items in groups.items())
    return TrialHistory(total=len({(r[0], r[1]) for r in rows} | new), earlier=earlier)


def data_read(db: Database, *, idea_id: int | None = None,
              run_id: int | None = None) -> DataRead | None:
    """The data read by one run, or by the idea's last run (highest id); None when there is
    no such run. The digests are read from the stored record in SQL, without parsing it."""
    sql = ("SELECT id, uuid, data_fingerprint, CASE WHEN json_valid(summary) THEN "
           "json_extract(summary, '$.market_fingerprints') END FROM runs WHERE ")
    if run_id is not None:
        row = db.execute(sql + "id = ?", [run_id]).fetchone()
    else:
        row = db.execute(sql + "idea_id = ? ORDER BY id DESC LIMIT 1", [idea_id]).fetchone()
    if row is None:
        return None
    markets = json.loads(row[3]) if isinstance(row[3], str) else None
    if not isinstance(markets, dict) or not all(isinstance(v, str) for v in markets.values()):
        markets = None  # none recorded, or a record of another shape
    return DataRead(run_id=row[0], uuid=row[1], data_fingerprint=row[2], markets=markets)


def renumbered(run: RunInput, db: Database) -> RunInput:
    """An imported run whose data changes name the run before by this catalogue's id (found by
    its uuid; kept as written when that run is not here)."""
    changes = run.result.data_changes
    if changes is None or changes.since_uuid is None:
        return run
    row = db.execute("SELECT id FROM runs WHERE uuid = ?", [changes.since_uuid]).fetchone()
    if row is None or row[0] == changes.since_run:
        return run
    result = replace(run.result, data_changes=replace(changes, since_run=row[0]))
    record = json.loads(run.summary)
    record["data_changes"]["since_run"] = row[0]
    return replace(run, result=result, summary=validate.to_json(record, "summary"))


_SELECT = ("SELECT r.*, v.number AS revision_number, p.version AS pre_version, "
           "p.scope AS pre_scope, p.finding AS pre_finding FROM runs r "
           "JOIN rule_revisions v ON v.id = r.revision_id "
           f"LEFT JOIN {run_scopes.TABLE} p ON p.run_id = r.id")


def of_idea(db: Database, idea_id: int | None = None) -> list[RunRecord]:
    """Runs oldest first (all ideas when ``idea_id`` is ``None``), without the daily P&L."""
    if idea_id is None:
        rows = db.query(_SELECT + " ORDER BY r.id")
    else:
        rows = db.query(_SELECT + " WHERE r.idea_id = ? ORDER BY r.id", [idea_id])
    return [_record(r, with_pnl=False) for r in rows]


def lines(db: Database, idea_id: int | None = None) -> list[RunLine]:
    """Runs oldest first (all ideas when ``idea_id`` is ``None``) as short lines: the verdict's
    label is read from the stored verdict in SQL (the outcome key for a record without one),
    so no record is parsed."""
    sql = ("SELECT r.id, r.idea_id, i.title, v.number, r.recorded_at, "
           "coalesce(json_extract(r.verdict, '$.label'), r.verdict_label) FROM runs r "
           "JOIN ideas i ON i.id = r.idea_id JOIN rule_revisions v ON v.id = r.revision_id")
    if idea_id is None:
        rows = db.execute(sql + " ORDER BY r.id")
    else:
        rows = db.execute(sql + " WHERE r.idea_id = ? ORDER BY r.id", [idea_id])
    return [RunLine(*row) for row in rows]


def get(db: Database, run_id: int) -> RunRecord:
    """One run with its daily P&L decoded."""
    rows = list(db.query(_SELECT + " WHERE r.id = ?", [validate.integer(run_id, "run id")]))
    if not rows:
        raise CatalogueError(f"there is no run {run_id}", field="run")
    return _record(rows[0], with_pnl=True)


def _record(row: dict[str, Any], *, with_pnl: bool) -> RunRecord:
    frame: pd.DataFrame | None = pnl.decode(row["daily_pnl"]) if with_pnl else None
    try:
        result = read_result({**json.loads(row["summary"]), "statistics": json.loads(
            row["statistics"]), "verdict": json.loads(row["verdict"])}, where=f"run {row['id']}")
    except CatalogueError:  # written by an earlier version: provenance and P&L still show
        result = None
    return RunRecord(
        id=row["id"], uuid=row["uuid"], idea_id=row["idea_id"], revision_id=row["revision_id"],
        revision_number=row["revision_number"],
        parameter_sets=tuple(json.loads(row["parameter_sets"])),
        data_fingerprint=row["data_fingerprint"], engine_version=row["engine_version"],
        result=result, verdict_label=row["verdict_label"],
        chosen_params=json.loads(row["chosen_params"]),
        chosen_net_sharpe=row["chosen_net_sharpe"], trial_count=row["trial_count"],
        recorded_at=row["recorded_at"], recorded_by=row["recorded_by"], daily_pnl=frame,
        preregistration=run_scopes.read(row))
