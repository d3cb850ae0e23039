"""Reading an idea bundle as untrusted input: every byte is checked before anything is written.

A bundle is a zip archive holding plain-text files only:

``bundle.toml``
    format name and version, the idea, its rule revisions (metadata), pre-registration
    versions, journal entries, reviews (of the idea and of its promotion) and runs (metadata);
    when the idea is a variant of another, ``variant_of``: the link (its uuid, who, when, why)
    and the parent idea's uuid and title.
``rules/<number>-<sha256>.toml``
    the text of each rule revision.
``runs/<uuid>.json``
    a run's data fingerprint, engine version and results record (every set, the chosen set,
    statistics and verdict; :class:`hunchbook.core.results.RunSummary`).
``runs/<uuid>.csv``
    the chosen set's daily P&L: ``date,gross_pnl,cost,net_pnl``.
``holdout/<uuid>.json``, ``holdout/<uuid>.csv``
    when the idea's held-out years were unlocked (the manifest's ``holdout`` table: who, when,
    the run it continues, the boundary): the held-out figures
    (:class:`hunchbook.core.holdout.HoldoutFigures`) and daily P&L.

Checks: file and member sizes (declared and actual), member count, member names (no absolute
paths, ``..``, backslashes or unknown files), encryption, UTF-8, TOML/JSON/CSV syntax, every
key and type, text lengths, vocabularies, uuids, timestamps, SHA-256 of each rule text, and that
every reference (run -> revision, correction -> entry, holdout -> run and its revision) points
inside the bundle, and that an idea is not a variant of itself.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
import re
import tomllib
import uuid as uuidlib
import zipfile
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from hunchbook.store import ideas, pnl, reviews, revisions, runs, validate
from hunchbook.store.errors import CatalogueError
from hunchbook.store.vocab import ENTRY_KINDS

if TYPE_CHECKING:
    import pandas as pd

#: Name and version written in every bundle.
FORMAT = "hunchbook-idea-bundle"
FORMAT_VERSION = 2
#: The manifest member.
MANIFEST = "bundle.toml"
#: Largest bundle file accepted (bytes).
MAX_BUNDLE_BYTES = 64 * 1024 * 1024
#: Largest uncompressed member of each kind, and all members together (bytes).
MAX_MANIFEST_BYTES = 32 * 1024 * 1024
MAX_RULE_BYTES = 4 * validate.MAX_RULE_TEXT
MAX_RUN_JSON_BYTES = 64 * 1024 * 1024
MAX_PNL_CSV_BYTES = 8 * 1024 * 1024
MAX_TOTAL_BYTES = 256 * 1024 * 1024
#: Most members in one bundle.
MAX_MEMBERS = 5_000

_TIME_RE = re.compile(r"^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z$")
_UUID = r"[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}"
_MEMBER_PATTERNS = {
    "rule": (re.compile(r"^rules/\d{1,6}-[0-9a-f]{64}\.toml$"), MAX_RULE_BYTES),
    "run": (re.compile(rf"^runs/{_UUID}\.json$"), MAX_RUN_JSON_BYTES),
    "pnl": (re.compile(rf"^runs/{_UUID}\.csv$"), MAX_PNL_CSV_BYTES),
    "holdout": (re.compile(rf"^holdout/{_UUID}\.json$"), MAX_RUN_JSON_BYTES),
    "holdout_pnl": (re.compile(rf"^holdout/{_UUID}\.csv$"), MAX_PNL_CSV_BYTES),
}


@dataclass(frozen=True)
class BundleContent:
    """A bundle after every check: plain values, ready to import."""

    sha256: str
    idea: dict[str, Any]
    revisions: list[dict[str, Any]]
    preregistrations: list[dict[str, Any]]
    journal: list[dict[str, Any]]
    reviews: list[dict[str, Any]]
    runs: list[dict[str, Any]]
    holdout: dict[str, Any] | None = None
    variant_of: dict[str, Any] | None = None


def read_bundle(path: str | os.PathLike[str]) -> BundleContent:
    """Read and check a bundle file completely; raise :class:`CatalogueError` on any fault."""
    path = Path(path)
    where = str(path)
    try:
        size = path.stat().st_size
        if size > MAX_BUNDLE_BYTES:
            raise CatalogueError(f"file of {size:,} bytes is over the limit of "
                                 f"{MAX_BUNDLE_BYTES:,}", where=where)
        raw = path.read_bytes()
    except OSError as exc:
        raise CatalogueError(f"cannot read the file ({exc.strerror or exc})",
                             where=where) from None
    try:
        members = _members(raw)
        content = _content(members)
    except CatalogueError as exc:
        exc.where = where
        raise
    return BundleContent(sha256=hashlib.sha256(raw).hexdigest(), **content)


def _members(raw: bytes) -> dict[str, str]:
    try:
        archive = zipfile.ZipFile(io.BytesIO(raw))
    except (zipfile.BadZipFile, ValueError) as exc:
        raise CatalogueError(f"not an idea bundle: not a complete zip archive ({exc})") from None
    with archive:
        infos = archive.infolist()
        if len(infos) > MAX_MEMBERS:
            raise CatalogueError(f"more than {MAX_MEMBERS:,} files inside")
        names = [i.filename for i in infos]
        if len(set(names)) != len(names):
            raise CatalogueError("a file name appears twice inside the bundle")
        limits = {i.filename: _member_limit(i) for i in infos}
        if MANIFEST not in limits:
            raise CatalogueError(f"no {MANIFEST} inside: not an idea bundle")
        total = sum(i.file_size for i in infos)
        if total > MAX_TOTAL_BYTES:
            raise CatalogueError(f"{total:,} bytes uncompressed is over the limit of "
                                 f"{MAX_TOTAL_BYTES:,}")
        out = {}
        for info in infos:
            out[info.filename] = _read_member(archive, info, limits[info.filename])
        return out


def _member_limit(info: zipfile.ZipInfo) -> int:
    name = info.filename
    if (name.startswith(("/", "\\")) or "\\" in name or ".." in name.split("/")
            or re.match(r"^[A-Za-z]:", name) or "\x00" in name):
        raise CatalogueError(f"unsafe file name {name!r} inside the bundle", field=name)
    if info.flag_bits & 0x1:
        raise CatalogueError("encrypted files are not accepted", field=name)
    if info.is_dir():
        raise CatalogueError("unexpected folder entry", field=name)
    limit = MAX_MANIFEST_BYTES if name == MANIFEST else next(
        (lim for pattern, lim in _MEMBER_PATTERNS.values() if pattern.match(name)), None)
    if limit is None:
        raise CatalogueError(f"unexpected file {name!r} inside the bundle", field=name)
    if info.file_size > limit:
        raise CatalogueError(f"{info.file_size:,} bytes is over the limit of {limit:,}",
                             field=name)
    return limit


def _read_member(archive: zipfile.ZipFile, info: zipfile.ZipInfo, limit: int) -> str:
    try:
        with archive.open(info) as handle:
            data = handle.read(limit + 1)  # never trust the declared size
    except (zipfile.BadZipFile, OSError, EOFError, ValueError, NotImplementedError) as exc:
        raise CatalogueError(f"damaged inside the archive ({exc})", field=info.filename) from None
    if len(data) > limit:
        raise CatalogueError(f"more than {limit:,} bytes", field=info.filename)
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise CatalogueError(f"not UTF-8 text ({exc.reason} at byte {exc.start})",
                             field=info.filename) from None


def _content(members: dict[str, str]) -> dict[str, Any]:
    try:
        top = tomllib.loads(members[MANIFEST])
    except tomllib.TOMLDecodeError as exc:
        raise CatalogueError(f"not valid TOML: {exc}", field=MANIFEST) from None
    t = _Table(top, "")
    t.keys(required=("format", "format_version", "idea"),
           optional=("exported_at", "revisions", "preregistrations", "journal", "reviews",
                     "runs", "holdout", "variant_of"))
    if top["format"] != FORMAT:
        raise CatalogueError(f"format must be '{FORMAT}'", field="format")
    if top["format_version"] != FORMAT_VERSION:
        raise CatalogueError(f"format_version {top['format_version']!r} is not supported "
                             f"(this Hunchbook reads version {FORMAT_VERSION})",
                             field="format_version")
    used = {MANIFEST}
    revs = [_revision(r, members, used) for r in t.array("revisions")]
    rev_uuids = {r["uuid"] for r in revs}
    _unique(revs, "revisions")
    content = {
        "idea": _idea(t.table("idea")),
        "revisions": revs,
        "preregistrations": [_prereg(p, rev_uuids) for p in t.array("preregistrations")],
        "journal": _journal(t.array("journal")),
        "reviews": [_review(r) for r in t.array("reviews")],
        "runs": [_run(r, members, used, rev_uuids) for r in t.array("runs")],
    }
    for key in ("preregistrations", "reviews", "runs"):
        _unique(content[key], key)
    if "holdout" in top:
        content["holdout"] = _holdout(t.table("holdout"), members, used, content["runs"])
    if "variant_of" in top:
        content["variant_of"] = _variant_of(t.table("variant_of"), content["idea"]["uuid"])
    extra = sorted(set(members) - used)
    if extra:
        raise CatalogueError(f"file(s) not referenced by {MANIFEST}: {', '.join(extra)}")
    return content


class _Table:
    """A TOML table being checked; ``path`` names it in messages (``journal[3]``)."""

    def __init__(self, data: Any, path: str) -> None:
        if not isinstance(data, dict):
            raise CatalogueError("expected a table", field=path or MANIFEST)
        self.data, self.path = data, path

    def field(self, key: str) -> str:
        return f"{self.path}.{key}" if self.path else key

    def keys(self, *, required: tuple[str, ...], optional: tuple[str, ...] = ()) -> None:
        unknown = [k for k in self.data if k not in required + optional]
        if unknown:
            raise CatalogueError(f"unknown key(s) {', '.join(unknown)}", field=self.path or None)
        missing = [k for k in required if k not in self.data]
        if missing:
            raise CatalogueError(f"missing key(s) {', '.join(missing)}", field=self.path or None)

    def table(self, key: str) -> _Table:
        return _Table(self.data[key], self.field(key))

    def array(self, key: str) -> list[_Table]:
        value = self.data.get(key, [])
        if not isinstance(value, list):
            raise CatalogueError("expected an array of tables", field=self.field(key))
        return [_Table(item, f"{self.field(key)}[{i}]") for i, item in enumerate(value)]

    def uuid(self, key: str = "uuid") -> str:
        value = self.data.get(key)
        try:
            if not isinstance(value, str) or str(uuidlib.UUID(value)) != value:
                raise ValueError
        except ValueError:
            raise CatalogueError("expected a lower-case uuid", field=self.field(key)) from None
        return value

    def time(self, key: str) -> str:
        value = self.data.get(key)
        if not isinstance(value, str) or not _TIME_RE.match(value):
            raise CatalogueError("expected a UTC time like 2026-01-31T09:00:00.000000Z",
                                 field=self.field(key))
        return value


def _idea(t: _Table) -> dict[str, Any]:
    fields = ("title", "hypothesis", "rationale", "rationale_kind", "source_kind", "citation",
              "link", "submitted_by", "reviewer", "markets", "tags", "stage")
    t.keys(required=("uuid", "title", "hypothesis", "rationale", "rationale_kind",
                     "source_kind", "submitted_by", "markets", "tags", "stage", "created_at",
                     "updated_at"), optional=("citation", "link", "reviewer"))
    out = ideas.clean_fields({k: t.data[k] for k in fields if k in t.data}, prefix="idea.")
    out.update(uuid=t.uuid(), created_at=t.time("created_at"), updated_at=t.time("updated_at"))
    return out


def _revision(t: _Table, members: dict[str, str], used: set[str]) -> dict[str, Any]:
    t.keys(required=("uuid", "number", "sha256", "saved_at", "saved_by", "file"))
    name = _member_ref(t, "file", members, used, "rule")
    text = validate.text(members[name], name, limit=validate.MAX_RULE_TEXT, strip=False)
    digest, key, space = revisions.analyse(text, field=name)
    if t.data["sha256"] != digest:
        raise CatalogueError("the rule text does not match its SHA-256", field=name)
    return {"uuid": t.uuid(), "number": validate.integer(t.data["number"], t.field("number")),
            "sha256": digest, "strategy_key": key, "parameter_space": space, "text": text,
            "saved_at": t.time("saved_at"), "saved_by": validate.name(t.data["saved_by"],
                                                                      t.field("saved_by"))}


def _prereg(t: _Table, rev_uuids: set[str]) -> dict[str, Any]:
    t.keys(required=("uuid", "version", "rationale", "markets", "parameter_space", "revision",
                     "frozen_at", "frozen_by", "reason"))
    revision = t.uuid("revision")
    if revision not in rev_uuids:
        raise CatalogueError("names a rule revision the bundle does not hold",
                             field=t.field("revision"))
    space = t.data["parameter_space"]
    if not isinstance(space, dict):
        raise CatalogueError("expected a table", field=t.field("parameter_space"))
    return {"uuid": t.uuid(), "version": validate.integer(t.data["version"], t.field("version")),
            "rationale": validate.text(t.data["rationale"], t.field("rationale"),
                                       required=False),
            "markets": validate.markets(t.data["markets"], t.field("markets")),
            "parameter_space": json.loads(revisions.canonical_json(
                validate.plain_data(space, t.field("parameter_space")))),
            "revision": revision, "frozen_at": t.time("frozen_at"),
            "frozen_by": validate.name(t.data["frozen_by"], t.field("frozen_by")),
            "reason": validate.text(t.data["reason"], t.field("reason"))}


def _journal(tables: list[_Table]) -> list[dict[str, Any]]:
    out: list[dict[str, Any]] = []
    seen: set[str] = set()
    for t in tables:
        t.keys(required=("uuid", "kind", "at", "by", "text"), optional=("corrects",))
        entry = {"uuid": t.uuid(), "kind": validate.choice(t.data["kind"], t.field("kind"),
                                                           ENTRY_KINDS),
                 "at": t.time("at"), "by": validate.name(t.data["by"], t.field("by")),
                 "text": validate.text(t.data["text"], t.field("text")), "corrects": None}
        if "corrects" in t.data:
            entry["corrects"] = t.uuid("corrects")
            if entry["corrects"] not in seen:
                raise CatalogueError("corrects an entry that does not come before it in the "
                                     "bundle", field=t.field("corrects"))
        if entry["uuid"] in seen:
            raise CatalogueError("this uuid appears twice", field=t.field("uuid"))
        seen.add(entry["uuid"])
        out.append(entry)
    return out


def _review(t: _Table) -> dict[str, Any]:
    t.keys(required=("uuid", "reviewer", "decision", "comments", "at", "checklist"))
    decision = t.data["decision"]
    kind = reviews.kind_of(decision, t.field("decision"))
    checklist = reviews.clean_checklist(t.data["checklist"], t.field("checklist"), kind=kind)
    return {"uuid": t.uuid(), "reviewer": validate.name(t.data["reviewer"], t.field("reviewer")),
            "decision": decision,
            "comments": validate.text(t.data["comments"], t.field("comments"), required=False),
            "at": t.time("at"), "checklist": checklist}


def _variant_of(t: _Table, idea_uuid: str) -> dict[str, Any]:
    t.keys(required=("uuid", "parent", "parent_title", "reason", "set_by", "set_at"))
    parent = t.uuid("parent")
    if parent == idea_uuid:
        raise CatalogueError("an idea cannot be a variant of itself", field=t.field("parent"))
    return {"uuid": t.uuid(), "parent": parent,
            "parent_title": validate.text(t.data["parent_title"], t.field("parent_title"),
                                          limit=validate.MAX_TITLE, one_line=True),
            "reason": validate.text(t.data["reason"], t.field("reason")),
            "set_by": validate.name(t.data["set_by"], t.field("set_by")),
            "set_at": t.time("set_at")}


def _run(t: _Table, members: dict[str, str], used: set[str],
         rev_uuids: set[str]) -> dict[str, Any]:
    t.keys(required=("uuid", "revision", "recorded_at", "recorded_by", "file", "pnl_file"))
    run_uuid = t.uuid()
    revision = t.uuid("revision")
    if revision not in rev_uuids:
        raise CatalogueError("names a rule revision the bundle does not hold",
                             field=t.field("revision"))
    name = _member_ref(t, "file", members, used, "run")
    pnl_name = _member_ref(t, "pnl_file", members, used, "pnl")
    try:
        body = json.loads(members[name])
    except json.JSONDecodeError as exc:
        raise CatalogueError(f"not valid JSON: {exc}", field=name) from None
    if not isinstance(body, Mapping):
        raise CatalogueError("expected a JSON object", field=name)
    keys = ("data_fingerprint", "engine_version", "results")
    if sorted(body) != sorted(keys):
        raise CatalogueError(f"expected exactly the keys {', '.join(keys)}", field=name)
    try:
        result = runs.read_result(body["results"], where="results")
        cleaned = runs.clean(summary=result, data_fingerprint=body["data_fingerprint"],
                             engine_version=body["engine_version"],
                             daily_pnl=_pnl_csv(members[pnl_name], pnl_name))
    except CatalogueError as exc:
        exc.field = f"{name}: {exc.field}" if exc.field else name
        raise
    return {"uuid": run_uuid, "revision": revision, "run": cleaned,
            "recorded_at": t.time("recorded_at"),
            "recorded_by": validate.name(t.data["recorded_by"], t.field("recorded_by"))}


def _holdout(t: _Table, members: dict[str, str], used: set[str],
             bundle_runs: list[dict[str, Any]]) -> dict[str, Any]:
    from hunchbook.core.errors import RecordError
    from hunchbook.core.holdout import HoldoutFigures
    from hunchbook.store.holdout import clean_date

    t.keys(required=("uuid", "run", "revision", "chosen_params", "boundary",
                     "data_fingerprint", "engine_version", "seen_at", "seen_by", "file",
                     "pnl_file"))
    run = next((r for r in bundle_runs if r["uuid"] == t.uuid("run")), None)
    if run is None:
        raise CatalogueError("names a run the bundle does not hold", field=t.field("run"))
    if t.uuid("revision") != run["revision"]:
        raise CatalogueError("is not the rule revision of its run", field=t.field("revision"))
    chosen = validate.param_set(t.data["chosen_params"], t.field("chosen_params"))
    if runs.params_key(chosen) != runs.params_key(run["run"].chosen_params):
        raise CatalogueError("is not the chosen set of its run", field=t.field("chosen_params"))
    boundary = clean_date(t.data["boundary"], t.field("boundary"))
    name = _member_ref(t, "file", members, used, "holdout")
    pnl_name = _member_ref(t, "pnl_file", members, used, "holdout_pnl")
    try:
        figures = HoldoutFigures.from_dict(json.loads(members[name]))
    except (RecordError, json.JSONDecodeError) as exc:
        raise CatalogueError(str(exc), field=name) from None
    if figures.boundary != boundary.isoformat():
        raise CatalogueError(f"figures measured from {figures.boundary}, not the boundary "
                             f"{boundary}", field=name)
    return {"uuid": t.uuid(), "run": run["uuid"], "revision": run["revision"],
            "chosen_params": chosen, "boundary": boundary, "figures": figures,
            "daily_pnl": pnl.clean(_pnl_csv(members[pnl_name], pnl_name), pnl_name),
            "data_fingerprint": validate.name(t.data["data_fingerprint"],
                                              t.field("data_fingerprint")),
            "engine_version": validate.name(t.data["engine_version"],
                                            t.field("engine_version")),
            "seen_at": t.time("seen_at"),
            "seen_by": validate.name(t.data["seen_by"], t.field("seen_by"))}


def _pnl_csv(text: str, name: str) -> pd.DataFrame:
    import pandas as pd

    try:
        rows = list(csv.reader(io.StringIO(text)))
    except csv.Error as exc:
        raise CatalogueError(f"not valid CSV ({exc})", field=name) from None
    headers = (["date", *pnl.PNL_COLUMNS], ["date", *pnl.PNL_COLUMNS, pnl.WALK_FORWARD])
    if not rows or rows[0] not in headers:
        raise CatalogueError(f"the first line must be {','.join(headers[0])} (and "
                             f"{pnl.WALK_FORWARD} after a walk-forward test)", field=name)
    columns = rows[0][1:]
    expected = f"expected date (YYYY-MM-DD) and {len(columns)} numbers"
    dates, values = [], []
    for line, row in enumerate(rows[1:], start=2):
        if len(row) != len(rows[0]) or not re.match(r"^\d{4}-\d{2}-\d{2}$", row[0]):
            raise CatalogueError(expected, field=f"{name} line {line}")
        try:
            values.append([float(v) for v in row[1:]])
            dates.append(pd.Timestamp(row[0]))
        except ValueError:
            raise CatalogueError(expected, field=f"{name} line {line}") from None
    return pd.DataFrame(values, index=pd.DatetimeIndex(dates), columns=columns, dtype=float)


def _member_ref(t: _Table, key: str, members: dict[str, str], used: set[str],
                kind: str) -> str:
    name = t.data.get(key)
    if not isinstance(name, str) or not _MEMBER_PATTERNS[kind][0].match(name):
        raise CatalogueError("expected the name of a file inside the bundle",
                             field=t.field(key))
    if name not in members:
        raise CatalogueError(f"the bundle has no file {name}", field=t.field(key))
    if name in used:
        raise CatalogueError(f"{name} is referenced twice", field=t.field(key))
    used.add(name)
    return name


def _unique(items: list[dict[str, Any]], what: str) -> None:
    uuids = [item["uuid"] for item in items]
    if len(set(uuids)) != len(uuids):
        raise CatalogueError("a uuid appears twice", field=what)
