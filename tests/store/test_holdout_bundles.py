"""An idea's unlocking of its held-out years travels with it in a bundle: imported where the
catalogue has none (so the idea is seen once however many catalogues hold it), kept and
reported where it has another, and a bundle whose holdout does not add up is refused whole."""

from __future__ import annotations

import dataclasses
import datetime as dt
from pathlib import Path

import pandas as pd
import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import bundle_members, table_counts, write_bundle
from tests.store.test_holdout_store import BOUNDARY, _run, _unlock, accepted_idea


@pytest.fixture
def unlocked(cat: Catalogue, tmp_path: Path) -> tuple[int, Path]:
    idea = accepted_idea(cat)
    cat.set_holdout_boundary(BOUNDARY, by="Ines Marwood", reason="last year out")
    _unlock(cat, idea, _run(cat, idea))
    path = tmp_path / "idea.zip"
    cat.export_bundle(idea, path)
    return idea, path


def test_the_unlocking_travels_with_the_idea(cat: Catalogue, unlocked, tmp_path) -> None:
    idea, path = unlocked
    mine = cat.holdout_view(idea)
    with Catalogue(tmp_path / "other.sqlite") as other:
        other.set_holdout_boundary("2021-03-01", by="Theo", reason="their own boundary")
        report = other.import_bundle(path, by="Theo")
        assert report.added["holdout"] == 1 and report.conflicts == ()
        theirs = other.holdout_view(report.idea_id)
        assert theirs is not None
        assert dataclasses.replace(theirs, id=0, idea_id=0, revision_id=0, run_id=0) == \
            dataclasses.replace(mine, id=0, idea_id=0, revision_id=0, run_id=0)
        pd.testing.assert_frame_equal(theirs.daily_pnl, mine.daily_pnl)
        assert other.runs(report.idea_id)[-1].uuid == cat.run(mine.run_id).uuid
        assert "already unlocked by Ines Marwood" in other.unlock_problem(report.idea_id)
        again = other.import_bundle(path, by="Theo")
        assert (again.added["holdout"], again.already_present["holdout"]) == (0, 1)
        assert other.check() == []


def test_another_unlocking_in_the_catalogue_is_kept_and_reported(cat: Catalogue, unlocked,
                                                                  tmp_path) -> None:
    idea, path = unlocked
    with Catalogue(tmp_path / "other.sqlite") as other:
        copy = other.import_bundle(path, by="Theo").idea_id
    members = bundle_members(path)
    view = cat.holdout_view(idea)
    text = members["bundle.toml"].decode().replace(view.uuid, "0" * 8 + view.uuid[8:])
    renamed = {n.replace(view.uuid, "0" * 8 + view.uuid[8:]): v for n, v in members.items()}
    bundle = write_bundle(tmp_path / "renamed.zip", renamed | {"bundle.toml": text.encode()})
    with Catalogue(tmp_path / "other.sqlite") as other:
        report = other.import_bundle(bundle, by="Theo")
        assert report.added["holdout"] == 0
        assert any("differs from the catalogue's" in c for c in report.conflicts)
        assert other.holdout_view(copy).uuid == view.uuid


def _edit_manifest(old: str, new: str):
    def edit(members: dict[str, bytes]) -> dict[str, bytes]:
        text = members["bundle.toml"].decode()
        assert old in text, old
        return members | {"bundle.toml": text.replace(old, new, 1).encode()}
    return edit


def _edit_figures(members: dict[str, bytes]) -> dict[str, bytes]:
    name = next(n for n in members if n.startswith("holdout/") and n.endswith(".json"))
    return members | {name: members[name].replace(b'"boundary": "2021-10-01"',
                                                  b'"boundary": "2021-11-01"')}


HOSTILE = {
    "boundary not the figures'": (_edit_manifest('boundary = "2021-10-01"',
                                                 'boundary = "2021-09-01"'),
                                  "figures measured from 2021-10-01"),
    "figures of another boundary": (_edit_figures, "figures measured from 2021-11-01"),
    "not the chosen set": (_edit_manifest("[holdout.chosen_params]\nfast = 5.0",
                                          "[holdout.chosen_params]\nfast = 6.0"),
                           "is not the chosen set of its run"),
    "bad date": (_edit_manifest('boundary = "2021-10-01"', 'boundary = "October"'),
                 "holdout.boundary: expected a date"),
    "missing figures": (lambda m: {k: v for k, v in m.items()
                                   if not (k.startswith("holdout/") and k.endswith(".json"))},
                        "has no file"),
}


@pytest.mark.parametrize("case", list(HOSTILE))
def test_a_bundle_whose_holdout_does_not_add_up_is_refused_whole(cat, unlocked, tmp_path,
                                                                 case) -> None:
    _, path = unlocked
    edit, message = HOSTILE[case]
    bad = write_bundle(tmp_path / "bad.zip", edit(bundle_members(path)))
    with Catalogue(tmp_path / "victim.sqlite") as victim:
        before = table_counts(victim)
        with pytest.raises(CatalogueError, match=message):
            victim.import_bundle(bad, by="Ines")
        assert table_counts(victim) == before and victim.holdout_views() == []


def test_the_run_it_names_must_be_in_the_bundle(cat, unlocked, tmp_path) -> None:
    idea, path = unlocked
    run_uuid = cat.run(cat.holdout_view(idea).run_id).uuid
    text = bundle_members(path)["bundle.toml"].decode()
    holdout_part = text[text.index("[holdout]"):]
    edited = text.replace(holdout_part, holdout_part.replace(
        f'run = "{run_uuid}"', 'run = "00000000-0000-4000-8000-000000000000"'))
    bad = write_bundle(tmp_path / "bad.zip",
                       bundle_members(path) | {"bundle.toml": edited.encode()})
    with Catalogue(tmp_path / "victim.sqlite") as victim, \
            pytest.raises(CatalogueError, match="holdout.run: names a run the bundle does not"):
        victim.import_bundle(bad, by="Ines")
    assert dt.date.fromisoformat(cat.holdout_view(idea).figures.boundary) == BOUNDARY
