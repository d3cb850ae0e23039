"""Idea bundles: round trip, appending to an existing idea, and hostile files rejected whole."""

from __future__ import annotations

import dataclasses
import tomllib
import zipfile
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.store import bundle_read
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import (
    RULES,
    accepted_idea,
    amended_run,
    bundle_members,
    run_args,
    table_counts,
    write_bundle,
)


@pytest.fixture
def exported(cat: Catalogue, tmp_path: Path) -> tuple[int, Path]:
    """An idea with two revisions, a correction, a review, two runs, exported."""
    idea = accepted_idea(cat, rationale="Hedgers adjust slowly.\nSecond paragraph: \"quoted\".")
    rev1 = cat.save_rules(idea, RULES, by="Nia")
    cat.record_run(idea, revision_id=rev1.id, by="Nia",
                   **run_args([{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}],
                              [0.3, None], chosen=0))
    entry = cat.add_entry(idea_id=idea, kind="note", text="Corn only?", by="Theo")
    cat.correct_entry(entry, "Corn and soybean, as declared.", by="Theo")
    amended_run(cat, idea, RULES.replace("fast = [5, 10]", "fast = [20]"),
                [{"fast": 20.0, "slow": 50.0}], [0.7], outcome="passes", seed=2, by="Ines",
                reason="The fast average of 20 days is the one the paper used")
    path = tmp_path / "idea.zip"
    cat.export_bundle(idea, path)
    return idea, path


def _records(cat: Catalogue, idea_id: int) -> dict[str, Any]:
    """Everything about an idea, local row ids replaced by uuids or numbers."""
    idea = dataclasses.replace(cat.idea(idea_id), id=0)
    revs = {r.id: r.uuid for r in cat.revisions(idea_id)}
    entries = cat.journal(idea_id)
    entry_uuid = {e.id: e.uuid for e in entries}
    runs = [cat.run(r.id) for r in cat.runs(idea_id)]
    return {
        "idea": idea,
        "revisions": [dataclasses.replace(r, id=0, idea_id=0) for r in cat.revisions(idea_id)],
        "prereg": [dataclasses.replace(p, idea_id=0, revision_id=revs[p.revision_id])
                   for p in cat.preregistrations(idea_id)],
        "journal": [(e.uuid, e.kind, e.text, e.by, e.at, entry_uuid.get(e.corrects),
                     entry_uuid.get(e.corrected_by)) for e in entries],
        "reviews": [dataclasses.replace(v, id=0, idea_id=0) for v in cat.reviews(idea_id)],
        "runs": [dataclasses.replace(r, id=0, idea_id=0, revision_id=revs[r.revision_id])
                 for r in runs],
        "pnl": [r.daily_pnl for r in runs],
        "trials": (cat.trial_count(idea_id), sorted(cat.trial_sharpes(idea_id))),
    }


def test_export_then_import_into_an_empty_catalogue_gives_identical_records(
        cat: Catalogue, exported: tuple[int, Path], tmp_path: Path) -> None:
    idea, path = exported
    with Catalogue(tmp_path / "reviewer.sqlite") as other:
        report = other.import_bundle(path, by="Ines")
        assert report.created and report.conflicts == ()
        assert report.added == {"revisions": 2, "preregistrations": 2,
                                "journal": len(cat.journal(idea)), "reviews": 1, "runs": 2,
                                "holdout": 0, "variant_link": 0}
        mine, theirs = _records(cat, idea), _records(other, report.idea_id)
        for key in mine:
            if key == "pnl":
                for a, b in zip(mine[key], theirs[key], strict=True):
                    pd.testing.assert_frame_equal(a, b)
            else:
                assert mine[key] == theirs[key], key
        assert other.check() == []


def test_the_bundle_is_plain_readable_text(exported: tuple[int, Path]) -> None:
    _, path = exported
    with zipfile.ZipFile(path) as archive:
        names = archive.namelist()
        manifest = tomllib.loads(archive.read("bundle.toml").decode())
        rule_files = [n for n in names if n.startswith("rules/")]
        assert archive.read(rule_files[0]).decode() == RULES
    assert manifest["idea"]["title"] == "Grain trend"
    assert manifest["idea"]["rationale"].startswith("Hedgers adjust slowly.\nSecond")
    assert len(rule_files) == 2 and sum(n.endswith(".csv") for n in names) == 2


def test_importing_twice_adds_nothing(exported: tuple[int, Path], tmp_path: Path) -> None:
    _, path = exported
    with Catalogue(tmp_path / "r.sqlite") as other:
        other.import_bundle(path, by="Ines")
        before = table_counts(other)
        report = other.import_bundle(path, by="Ines")
        assert not report.created and sum(report.added.values()) == 0
        assert report.already_present["runs"] == 2 and report.conflicts == ()
        after = table_counts(other)
    assert after == before | {"imports": before["imports"] + 1}


def test_same_idea_appends_new_records_and_reports_conflicts_without_overwriting(
        cat: Catalogue, exported: tuple[int, Path], tmp_path: Path) -> None:
    idea, path = exported
    with Catalogue(tmp_path / "reviewer.sqlite") as other:
        theirs = other.import_bundle(path, by="Ines").idea_id
        other.update_idea(theirs, by="Ines", title="Grain trend (reviewer's title)")
        other.add_entry(idea_id=theirs, kind="note", text="Reviewer's own note", by="Ines")
    # Meanwhile the author adds a note and a revision, and exports again.
    cat.add_entry(idea_id=idea, kind="note", text="Author's later note", by="Nia")
    cat.amend_preregistration(idea, by="Nia", reason="A slower average suits the grain cycle",
                              rule_text=RULES.replace("slow = [50]", "slow = [80]"))
    second = tmp_path / "idea-2.zip"
    cat.export_bundle(idea, second)
    with Catalogue(tmp_path / "reviewer.sqlite") as other:
        report = other.import_bundle(second, by="Ines")
        assert not report.created and report.idea_id == theirs
        assert report.added["revisions"] == 1
        # The author's note, the edit entry and the pre-registration entry are new.
        assert report.added["journal"] == 3
        # The author's third pre-registration version continues the reviewer's two.
        assert report.added["preregistrations"] == 1
        assert [p.version for p in other.preregistrations(theirs)] == [1, 2, 3]
        assert [c.split(":")[0] for c in report.conflicts] == ["idea title"]
        assert other.idea(theirs).title == "Grain trend (reviewer's title)"
        texts = [e.text for e in other.journal(theirs)]
        assert "Reviewer's own note" in texts and "Author's later note" in texts
        assert [r.number for r in other.revisions(theirs)] == [1, 2, 3]


def test_diverging_pre_registration_histories_are_reported_not_merged(
        cat: Catalogue, exported: tuple[int, Path], tmp_path: Path) -> None:
    idea, path = exported
    with Catalogue(tmp_path / "reviewer.sqlite") as other:
        theirs = other.import_bundle(path, by="Ines").idea_id
        other.update_idea(theirs, by="Ines", markets=["CORN"], reason="the reviewer drops soybeans")
    cat.update_idea(idea, by="Nia", markets=["SOYBEAN"], reason="the author drops corn")
    second = tmp_path / "idea-2.zip"
    cat.export_bundle(idea, second)
    with Catalogue(tmp_path / "reviewer.sqlite") as other:
        report = other.import_bundle(second, by="Ines")
        assert any("pre-registration version 3 of the bundle differs" in c
                   for c in report.conflicts)
        assert other.preregistrations(theirs)[-1].markets == ("CORN",)
        assert other.idea(theirs).markets == ("CORN",)


# -- hostile bundles ------------------------------------------------------------------------
def _manifest_edit(old: str, new: str) -> Any:
    def edit(members: dict[str, bytes]) -> dict[str, bytes]:
        text = members["bundle.toml"].decode()
        assert old in text
        return members | {"bundle.toml": text.replace(old, new, 1).encode()}
    return edit


def _run_json_edit(members: dict[str, bytes]) -> dict[str, bytes]:
    name = next(n for n in members if n.endswith(".json"))
    return members | {name: members[name].replace(b'"engine_version"', b'"engine_versions"')}


def _results_edit(old: bytes, new: bytes) -> Any:
    def edit(members: dict[str, bytes]) -> dict[str, bytes]:
        name = next(n for n in members if n.endswith(".json"))
        assert old in members[name]
        return members | {name: members[name].replace(old, new, 1)}
    return edit


def _pnl_edit(members: dict[str, bytes]) -> dict[str, bytes]:
    name = next(n for n in members if n.endswith(".csv"))
    lines = members[name].split(b"\n")
    lines[5] = b"2021-01-11,1.0,oops,2.0"
    return members | {name: b"\n".join(lines)}


HOSTILE = {
    "wrong type": (_manifest_edit('title = "Grain trend"', "title = 42"), "idea.title"),
    "unknown stage": (_manifest_edit('stage = "tested"', 'stage = "promoted-by-me"'),
                      "idea.stage"),
    "unknown key": (_manifest_edit("[idea]\n", "[idea]\nowner = \"me\"\n"), "unknown key"),
    "bad uuid": (_manifest_edit('[idea]\nuuid = "', '[idea]\nuuid = "x'), "uuid"),
    "100 MB text field": (_manifest_edit('title = "Grain trend"',
                                         'title = "' + "A" * 100_000_000 + '"'),
                          "over the limit"),
    "long journal text": (_manifest_edit('text = "Corn only?"',
                                         'text = "' + "z" * 300_000 + '"'), "longer than"),
    "rule text altered": (lambda m: m | {n: m[n] + b"# sneaky\n" for n in m
                                         if n.startswith("rules/")}, "SHA-256"),
    "path traversal": (lambda m: m | {"../../etc/cron.d/evil": b"x"}, "unsafe file name"),
    "absolute path": (lambda m: m | {"/tmp/evil.toml": b"x"}, "unsafe file name"),
    "backslash path": (lambda m: m | {"rules\\..\\evil.toml": b"x"}, "unsafe file name"),
    "unexpected member": (lambda m: m | {"notes.txt": b"hi"}, "unexpected file"),
    "missing member": (lambda m: {k: v for k, v in m.items() if not k.endswith(".csv")},
                       "has no file"),
    "missing manifest": (lambda m: {k: v for k, v in m.items() if k != "bundle.toml"},
                         "no bundle.toml"),
    "not utf-8": (lambda m: m | {"bundle.toml": m["bundle.toml"] + b"\n# \xff\xfe\n"},
                  "not UTF-8"),
    "broken toml": (lambda m: m | {"bundle.toml": m["bundle.toml"][:-40]}, "not valid TOML"),
    "bad run json": (_run_json_edit, "expected exactly the keys"),
    "bad pnl csv": (_pnl_edit, "line 6"),
    "results of another schema": (_results_edit(b'"schema": 2', b'"schema": 7'), "schema 2"),
    "results field of the wrong kind": (_results_edit(b'"currency": "USD"', b'"currency": 5'),
                                        "field 'currency': expected text"),
    "wrong format version": (_manifest_edit("format_version = 2", "format_version = 9"),
                             "not supported"),
}


@pytest.mark.parametrize("case", list(HOSTILE))
def test_hostile_bundles_are_rejected_whole(cat: Catalogue, exported: tuple[int, Path],
                                            tmp_path: Path, case: str) -> None:
    _, path = exported
    edit, message = HOSTILE[case]
    bad = write_bundle(tmp_path / "bad.zip", edit(bundle_members(path)))
    with Catalogue(tmp_path / "victim.sqlite") as victim:
        before = table_counts(victim)
        with pytest.raises(CatalogueError, match=message):
            victim.import_bundle(bad, by="Ines")
        assert table_counts(victim) == before
    assert not (tmp_path.parent / "etc").exists()


def test_a_truncated_bundle_is_rejected(cat: Catalogue, exported: tuple[int, Path],
                                        tmp_path: Path) -> None:
    _, path = exported
    data = path.read_bytes()
    for cut in (10, len(data) // 2, len(data) - 30):
        bad = tmp_path / f"cut{cut}.zip"
        bad.write_bytes(data[:cut])
        with Catalogue(tmp_path / "victim.sqlite") as victim:
            with pytest.raises(CatalogueError, match="not an idea bundle|damaged"):
                victim.import_bundle(bad, by="Ines")
            assert victim.list_ideas() == []


def test_a_member_lying_about_its_size_is_cut_off(cat: Catalogue, exported: tuple[int, Path],
                                                  tmp_path: Path,
                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    """The declared size is checked first; the bounded read catches a header that lies."""
    _, path = exported
    monkeypatch.setattr(bundle_read, "MAX_MANIFEST_BYTES", 1_000)
    monkeypatch.setattr(bundle_read, "_member_limit", lambda info: 1_000)
    with Catalogue(tmp_path / "victim.sqlite") as victim, \
            pytest.raises(CatalogueError, match="more than 1,000 bytes"):
        victim.import_bundle(path, by="Ines")


def test_an_oversize_file_is_rejected_before_reading(cat: Catalogue, tmp_path: Path,
                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    big = tmp_path / "big.zip"
    big.write_bytes(b"\0" * 2_000)
    monkeypatch.setattr(bundle_read, "MAX_BUNDLE_BYTES", 1_000)
    with pytest.raises(CatalogueError, match="over the limit"):
        cat.import_bundle(big, by="Ines")


def test_a_run_referring_to_a_missing_revision_is_rejected(cat: Catalogue,
                                                           exported: tuple[int, Path],
                                                           tmp_path: Path) -> None:
    _, path = exported
    members = bundle_members(path)
    manifest = tomllib.loads(members["bundle.toml"].decode())
    rev_uuid = manifest["revisions"][1]["uuid"]
    text = members["bundle.toml"].decode()
    head, _, tail = text.partition("[[runs]]")
    bad = write_bundle(tmp_path / "bad.zip", members | {
        "bundle.toml": (head + "[[runs]]" + tail.replace(rev_uuid, rev_uuid[:-4] + "0000"))
        .encode()})
    with pytest.raises(CatalogueError, match="revision the bundle does not hold"):
        Catalogue(tmp_path / "v.sqlite").import_bundle(bad, by="Ines")


def test_export_never_overwrites_unless_asked(cat: Catalogue, exported: tuple[int, Path]) -> None:
    idea, path = exported
    with pytest.raises(CatalogueError, match="file exists"):
        cat.export_bundle(idea, path)
    cat.export_bundle(idea, path, overwrite=True)
    assert set(CHECKLIST) == set(tomllib.loads(
        bundle_members(path)["bundle.toml"].decode())["reviews"][0]["checklist"])


def test_a_failure_while_applying_leaves_nothing_behind(cat: Catalogue,
                                                        exported: tuple[int, Path],
                                                        tmp_path: Path) -> None:
    """A bundle that passes every check but collides while being applied (a journal entry's
    uuid already belongs to another idea here) is rolled back whole."""
    _, path = exported
    members = bundle_members(path)
    manifest = tomllib.loads(members["bundle.toml"].decode())
    old_uuid = manifest["idea"]["uuid"]
    new_uuid = old_uuid[:-12] + "000000000000"
    clone = write_bundle(tmp_path / "clone.zip", members | {
        "bundle.toml": members["bundle.toml"].decode().replace(
            f'[idea]\nuuid = "{old_uuid}"', f'[idea]\nuuid = "{new_uuid}"').encode()})
    with Catalogue(tmp_path / "victim.sqlite") as victim:
        victim.import_bundle(path, by="Ines")
        before = table_counts(victim)
        with pytest.raises(CatalogueError, match="belongs to another idea"):
            victim.import_bundle(clone, by="Ines")
        assert table_counts(victim) == before
        assert victim.check() == []
