"""Idea bundles: export one idea with its revisions, pre-registration, journal, reviews, runs
and, once unlocked, its holdout to a zip of plain text files, and import such a file without
ever overwriting.

Import rules: a bundle is read and checked whole first (:mod:`hunchbook.store.bundle_read`)
and then applied in one transaction, so nothing is imported partially. An idea whose uuid is
new is created as the bundle has it. For an idea the catalogue already holds, the idea's own
fields are never changed; records (revisions, pre-registration versions, journal entries,
reviews, runs) whose uuid is new are appended, records already present are skipped, and every
difference is reported as a conflict and kept as the catalogue had it. An idea's unlocking of
its held-out years travels with it, so that it is seen once however many catalogues hold the
idea: it is imported when the catalogue has none for the idea (whatever the catalogue's own
boundary), and a different one already there is kept and reported.

Families: an idea that is a variant of another carries its link (who, when, why, and the
parent's uuid and title). On import the link is made when the catalogue holds the parent (by
uuid) and the idea has no link yet; otherwise (the parent is not there, the idea is already a
variant of another idea, or the link would close a circle) nothing is linked and the report
says why. The family's trial counts follow the link.
"""

from __future__ import annotations

import csv
import io
import json
import os
import tempfile
import zipfile
from pathlib import Path
from typing import Any

from hunchbook.core import formats
from hunchbook.store import (
    chain,
    families,
    holdout,
    ideas,
    journal,
    preregistration,
    reviews,
    revisions,
    run_scopes,
    runs,
)
from hunchbook.store.bundle_read import FORMAT, FORMAT_VERSION, MANIFEST, read_bundle
from hunchbook.store.errors import CatalogueError
from hunchbook.store.records import ImportReport
from hunchbook.store.sqlite_lib import Database

#: Record kinds counted in an :class:`ImportReport`.
RECORD_KINDS = ("revisions", "preregistrations", "journal", "reviews", "runs", "holdout",
                "variant_link")
_IDEA_FIELDS = ("title", "hypothesis", "rationale", "rationale_kind", "source_kind",
                "citation", "link", "submitted_by", "reviewer", "markets", "tags", "stage")


def export(db: Database, idea_id: int, path: str | os.PathLike[str], *, at: str,
           overwrite: bool = False) -> Path:
    """Write the idea's bundle to ``path`` (through a temporary file, renamed into place)."""
    path = Path(path)
    if path.exists() and not overwrite:
        raise CatalogueError("file exists; choose another name", where=str(path))
    idea = ideas.get(db, idea_id)
    revs = revisions.of_idea(db, idea.id)
    rev_uuid = {r.id: r.uuid for r in revs}
    entries = journal.entries(db, idea.id)
    entry_uuid = {e.id: e.uuid for e in entries}
    files: dict[str, str] = {}
    doc: dict[str, Any] = {
        "format": FORMAT, "format_version": FORMAT_VERSION, "exported_at": at,
        "idea": _drop_none({"uuid": idea.uuid, **{k: getattr(idea, k) for k in _IDEA_FIELDS},
                            "markets": list(idea.markets), "tags": list(idea.tags),
                            "created_at": idea.created_at, "updated_at": idea.updated_at}),
        "revisions": [], "preregistrations": [], "journal": [], "reviews": [], "runs": [],
    }
    for r in revs:
        name = f"rules/{r.number:03d}-{r.sha256}.toml"
        files[name] = r.text
        doc["revisions"].append({"uuid": r.uuid, "number": r.number, "sha256": r.sha256,
                                 "saved_at": r.saved_at, "saved_by": r.saved_by, "file": name})
    for p in preregistration.versions(db, idea.id):
        doc["preregistrations"].append({
            "uuid": p.uuid, "version": p.version, "rationale": p.rationale,
            "markets": list(p.markets), "parameter_space": p.parameter_space,
            "revision": rev_uuid[p.revision_id], "frozen_at": p.frozen_at,
            "frozen_by": p.frozen_by, "reason": p.reason})
    for e in entries:
        doc["journal"].append(_drop_none({
            "uuid": e.uuid, "kind": e.kind, "at": e.at, "by": e.by, "text": e.text,
            "corrects": entry_uuid.get(e.corrects) if e.corrects else None}))
    for v in reviews.of_idea(db, idea.id):
        doc["reviews"].append({"uuid": v.uuid, "reviewer": v.reviewer, "decision": v.decision,
                               "comments": v.comments, "at": v.at, "checklist": v.checklist})
    for summary in runs.of_idea(db, idea.id):
        run = runs.get(db, summary.id)
        if run.result is None:
            raise CatalogueError(f"run {run.id} was recorded by an earlier version of Hunchbook "
                                 "and cannot be exported; re-run the idea first", field="runs")
        body = {"data_fingerprint": run.data_fingerprint, "engine_version": run.engine_version,
                "results": run.result.to_dict()}
        files[f"runs/{run.uuid}.json"] = json.dumps(body, indent=1, allow_nan=False)
        files[f"runs/{run.uuid}.csv"] = _pnl_text(run.daily_pnl)
        doc["runs"].append({"uuid": run.uuid, "revision": rev_uuid[run.revision_id],
                            "recorded_at": run.recorded_at, "recorded_by": run.recorded_by,
                            "file": f"runs/{run.uuid}.json",
                            "pnl_file": f"runs/{run.uuid}.csv"})
    view = holdout.view(db, idea.id)
    if view is not None:
        run_uuid = {r.id: r.uuid for r in runs.of_idea(db, idea.id)}
        files[f"holdout/{view.uuid}.json"] = json.dumps(view.figures.to_dict(), indent=1,
                                                        allow_nan=False)
        files[f"holdout/{view.uuid}.csv"] = _pnl_text(view.daily_pnl)
        doc["holdout"] = {
            "uuid": view.uuid, "run": run_uuid[view.run_id],
            "revision": rev_uuid[view.revision_id], "chosen_params": view.chosen_params,
            "boundary": view.boundary.isoformat(), "data_fingerprint": view.data_fingerprint,
            "engine_version": view.engine_version, "seen_at": view.seen_at,
            "seen_by": view.seen_by, "file": f"holdout/{view.uuid}.json",
            "pnl_file": f"holdout/{view.uuid}.csv"}
    link = families.link_of(db, idea.id)
    if link is not None:
        parent = ideas.get(db, link.parent_id)
        doc["variant_of"] = {"uuid": link.uuid, "parent": parent.uuid,
                             "parent_title": parent.title, "reason": link.reason,
                             "set_by": link.set_by, "set_at": link.set_at}
    _write_zip(path, {MANIFEST: _manifest_text(doc), **files})
    return path


def _drop_none(row: dict[str, Any]) -> dict[str, Any]:
    return {k: v for k, v in row.items() if v is not None}


def _manifest_text(doc: dict[str, Any]) -> str:
    import tomlkit  # only exports write TOML: imported here, not with the catalogue

    out = tomlkit.document()
    out.add(tomlkit.comment("An idea exported from a Hunchbook catalogue. Plain text: rule "
                            "files in rules/, run details and daily P&L in runs/."))
    for key, value in doc.items():
        out.add(key, _toml(value))
    return tomlkit.dumps(out)


def _toml(value: Any) -> Any:
    """Long or multi-line text as TOML multi-line strings, so a bundle reads like a document."""
    import tomlkit

    if isinstance(value, str) and ("\n" in value or len(value) > 80):
        return tomlkit.string(value, multiline=True)
    if isinstance(value, dict):
        return {k: _toml(v) for k, v in value.items()}
    if isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
        array = tomlkit.aot()
        for item in value:
            array.append(tomlkit.item(_toml(item)))
        return array
    return value


def _pnl_text(frame: Any) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["date", *frame.columns])
    for date, row in zip(frame.index.strftime("%Y-%m-%d"), frame.itertuples(index=False),
                         strict=True):
        writer.writerow([date, *(repr(float(v)) for v in row)])
    return buffer.getvalue()


def _write_zip(path: Path, files: dict[str, str]) -> None:
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".partial")
    os.close(fd)
    try:
        with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED) as archive:
            for name, text in files.items():
                archive.writestr(name, text.encode("utf-8"))
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def import_bundle(db: Database, path: str | os.PathLike[str], *, by: str,
                  at: str) -> ImportReport:
    """Read, check and apply a bundle (the caller wraps this in one write transaction)."""
    content = read_bundle(path)
    bundle = content.idea
    added = dict.fromkeys(RECORD_KINDS, 0)
    present = dict.fromkeys(RECORD_KINDS, 0)
    conflicts: list[str] = []
    idea_id = ideas.id_for_uuid(db, bundle["uuid"])
    created = idea_id is None
    if idea_id is None:
        idea_id = ideas.insert(db, {k: v for k, v in bundle.items() if k != "uuid"}, at=at,
                               idea_uuid=bundle["uuid"])
    else:
        local = ideas.get(db, idea_id)
        for key in _IDEA_FIELDS:
            if getattr(local, key) != bundle.get(key):
                change = ideas.describe_change(key, getattr(local, key), bundle.get(key))
                conflicts.append(f"idea {change} in the bundle; kept the catalogue's value")
    rev_ids = _import_revisions(db, idea_id, content.revisions, added, present, conflicts)
    _import_preregistrations(db, idea_id, content.preregistrations, rev_ids, added, present,
                             conflicts)
    _import_journal(db, idea_id, content.journal, added, present, conflicts)
    if content.variant_of is not None:  # before the runs: they count the family's trials
        _import_variant_link(db, idea_id, content.variant_of, added, present, conflicts)
    known = {r["uuid"] for r in db.query("SELECT uuid FROM reviews WHERE idea_id = ?",
                                         [idea_id])}
    for item in content.reviews:
        if item["uuid"] in known:
            present["reviews"] += 1
            continue
        reviews.insert(db, idea_id, reviewer=item["reviewer"], checklist=item["checklist"],
                       decision=item["decision"], comments=item["comments"], at=item["at"],
                       review_uuid=item["uuid"])
        added["reviews"] += 1
    known = {r["uuid"] for r in db.query("SELECT uuid FROM runs WHERE idea_id = ?", [idea_id])}
    for item in content.runs:
        if item["uuid"] in known:
            present["runs"] += 1
            continue
        _check_uuid_free(db, "runs", item["uuid"])
        run_id = runs.insert(db, idea_id, revisions.get(db, rev_ids[item["revision"]]),
                             runs.renumbered(item["run"], db), by=item["recorded_by"],
                             at=item["recorded_at"], run_uuid=item["uuid"])
        run_scopes.derive(db, run_id)  # against the pre-registration as it stood then
        added["runs"] += 1
    if content.holdout is not None:
        _import_holdout(db, idea_id, content.holdout, rev_ids, added, present, conflicts)
    report = ImportReport(idea_id=idea_id, created=created, added=added,
                          already_present=present, conflicts=tuple(conflicts))
    chain.append(db, "imports", {"idea_id": idea_id, "bundle_sha256": content.sha256,
                                 "report": json.dumps(report.__dict__), "imported_by": by,
                                 "at": at})
    return report


def _import_revisions(db: Database, idea_id: int, items: list[dict[str, Any]],
                      added: dict[str, int], present: dict[str, int],
                      conflicts: list[str]) -> dict[str, int]:
    """Append new revisions (numbered after the catalogue's); map bundle uuid -> local id."""
    local = revisions.of_idea(db, idea_id)
    by_uuid = {r.uuid: r for r in local}
    by_sha = {r.sha256: r for r in local}
    mapping: dict[str, int] = {}
    number = max((r.number for r in local), default=0)
    for item in sorted(items, key=lambda r: r["number"]):
        same = by_uuid.get(item["uuid"])
        if same is not None:
            if same.sha256 != item["sha256"]:
                conflicts.append(f"rule revision {item['uuid']} has different text in the "
                                 f"bundle; kept the catalogue's revision {same.number}")
            mapping[item["uuid"]] = same.id
            present["revisions"] += 1
            continue
        if item["sha256"] in by_sha:  # the same file saved on two machines
            mapping[item["uuid"]] = by_sha[item["sha256"]].id
            present["revisions"] += 1
            continue
        _check_uuid_free(db, "rule_revisions", item["uuid"])
        number += 1
        mapping[item["uuid"]] = chain.append(db, "rule_revisions", {
            "uuid": item["uuid"], "idea_id": idea_id, "number": number, "text": item["text"],
            "sha256": item["sha256"], "strategy_key": item["strategy_key"],
            "parameter_space": json.dumps(item["parameter_space"], sort_keys=True),
            "saved_at": item["saved_at"], "saved_by": item["saved_by"]})
        added["revisions"] += 1
    return mapping


def _import_preregistrations(db: Database, idea_id: int, items: list[dict[str, Any]],
                             rev_ids: dict[str, int], added: dict[str, int],
                             present: dict[str, int], conflicts: list[str]) -> None:
    """Versions continue the catalogue's history only when the catalogue's versions are the
    bundle's first ones; otherwise the bundle's other versions are reported, not imported."""
    local = [p.uuid for p in preregistration.versions(db, idea_id)]
    items = sorted(items, key=lambda p: p["version"])
    continues = [p["uuid"] for p in items[:len(local)]] == local
    for item in items:
        if item["uuid"] in local:
            present["preregistrations"] += 1
        elif not continues:
            conflicts.append(f"pre-registration version {item['version']} of the bundle "
                             "differs from the catalogue's; kept the catalogue's versions")
        else:
            _check_uuid_free(db, "preregistrations", item["uuid"])
            chain.append(db, "preregistrations", {
                **{k: item[k] for k in ("uuid", "version", "rationale", "frozen_at",
                                        "frozen_by", "reason")},
                "idea_id": idea_id, "markets": json.dumps(list(item["markets"])),
                "parameter_space": json.dumps(item["parameter_space"], sort_keys=True),
                "revision_id": rev_ids[item["revision"]]})
            added["preregistrations"] += 1


def _import_journal(db: Database, idea_id: int, items: list[dict[str, Any]],
                    added: dict[str, int], present: dict[str, int],
                    conflicts: list[str]) -> None:
    local = journal.by_uuid(db, idea_id)
    ids = {u: row["id"] for u, row in local.items()}
    for item in items:
        row = local.get(item["uuid"])
        if row is not None:
            present["journal"] += 1
            if row["text"] != item["text"]:
                conflicts.append(f"journal entry {row['id']} has different text in the bundle; "
                                 "kept the catalogue's")
            continue
        _check_uuid_free(db, "journal", item["uuid"])
        ids[item["uuid"]] = journal.append(
            db, idea_id=idea_id, kind=item["kind"], text=item["text"], by=item["by"],
            at=item["at"], corrects=ids.get(item["corrects"]) if item["corrects"] else None,
            entry_uuid=item["uuid"])
        added["journal"] += 1


def _import_holdout(db: Database, idea_id: int, item: dict[str, Any], rev_ids: dict[str, int],
                    added: dict[str, int], present: dict[str, int],
                    conflicts: list[str]) -> None:
    local = holdout.view(db, idea_id, with_pnl=False)
    if local is not None:
        if local.uuid == item["uuid"]:
            present["holdout"] += 1
        else:
            conflicts.append(f"the bundle's unlocking of the holdout (by {item['seen_by']} on "
                             f"{formats.date(item['seen_at'])}) differs from the catalogue's (by "
                             f"{local.seen_by} on {formats.date(local.seen_at)}); kept the "
                             "catalogue's")
        return
    _check_uuid_free(db, "holdout_views", item["uuid"])
    run_id = db.execute("SELECT id FROM runs WHERE uuid = ?", [item["run"]]).fetchone()[0]
    holdout.insert_view(
        db, idea_id=idea_id, revision_id=rev_ids[item["revision"]], run_id=run_id,
        chosen_params=item["chosen_params"], boundary=item["boundary"],
        data_fingerprint=item["data_fingerprint"], engine_version=item["engine_version"],
        figures=item["figures"], daily_pnl=item["daily_pnl"], by=item["seen_by"],
        at=item["seen_at"], view_uuid=item["uuid"])
    added["holdout"] += 1


def _import_variant_link(db: Database, idea_id: int, item: dict[str, Any],
                         added: dict[str, int], present: dict[str, int],
                         conflicts: list[str]) -> None:
    local = families.link_of(db, idea_id)
    parent_id = ideas.id_for_uuid(db, item["parent"])
    if local is not None:
        if local.uuid == item["uuid"] or local.parent_id == parent_id:
            present["variant_link"] += 1
        else:
            conflicts.append(f"the bundle records the idea as a variant of "
                             f"'{item['parent_title']}' ({item['parent']}); here it is a variant "
                             f"of idea {local.parent_id}, kept")
        return
    if parent_id is None:
        conflicts.append(f"the idea is a variant of '{item['parent_title']}' ({item['parent']}), "
                         "which this catalogue does not hold: not linked (import that idea, "
                         "then link them)")
        return
    problem = families.link_problem(db, idea_id, parent_id)
    if problem is not None:
        conflicts.append(f"not linked as a variant of idea {parent_id}: {problem}")
        return
    _check_uuid_free(db, "variant_links", item["uuid"])
    families.insert(db, idea_id, parent_id, reason=item["reason"], by=item["set_by"],
                    at=item["set_at"], link_uuid=item["uuid"])
    families.refresh_trial_counts(db, idea_id)
    added["variant_link"] += 1


def _check_uuid_free(db: Database, table: str, record_uuid: str) -> None:
    if db.execute(f"SELECT 1 FROM {table} WHERE uuid = ?", [record_uuid]).fetchone():
        raise CatalogueError(f"the bundle's {table} record {record_uuid} belongs to another "
                             "idea in this catalogue; nothing imported")
