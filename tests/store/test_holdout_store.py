"""The catalogue's holdout: boundary settings journalled with who, when and why; one unlocking
per idea, refused when the idea's runs saw past the boundary; append-only, hash-chained rows;
the migration that adds them."""

from __future__ import annotations

import dataclasses
import datetime as dt
import sqlite3
from pathlib import Path

import pytest

from hunchbook.catalogue import Catalogue, CatalogueError
from hunchbook.core.holdout import holdout_figures
from hunchbook.store import SCHEMA_VERSION, chain
from hunchbook.store.migrations import migration_names
from hunchbook.store.opening import open_catalogue_db
from tests.store.helpers import accepted_idea, daily_pnl, run_args

BOUNDARY = dt.date(2021, 10, 1)
SET = {"fast": 5.0, "slow": 50.0}


def _run(cat: Catalogue, idea: int, boundary: str | None = BOUNDARY.isoformat(),
         by: str = "Nia") -> int:
    """Record a run of the idea's latest revision made on the dates before ``boundary``."""
    args = run_args([SET], [0.4])
    args["summary"] = dataclasses.replace(args["summary"], holdout_boundary=boundary)
    revision = cat.latest_revision(idea)
    assert revision is not None
    return cat.record_run(idea, revision_id=revision.id, by=by, **args)


def _figures(boundary: dt.date = BOUNDARY):
    daily = daily_pnl(days=500, seed=3)  # 2021-01-04 on: about 40 % of it from the boundary
    return holdout_figures(daily, boundary=boundary, in_sample_sharpe=1.1, in_sample_days=180,
                           in_sample_sets=1), daily[daily.index >= boundary.isoformat()]


def _unlock(cat: Catalogue, idea: int, run_id: int, by: str = "Ines Marwood"):
    figures, held = _figures()
    return cat.record_holdout_view(idea, run_id=run_id, figures=figures, daily_pnl=held,
                                   data_fingerprint="a" * 64, engine_version="0.1.0", by=by)


def test_setting_the_boundary_is_journalled_with_who_when_and_why(cat: Catalogue) -> None:
    assert cat.holdout_boundary() is None
    first = cat.set_holdout_boundary("2021-10-01", by="Ines Marwood",
                                     reason="hold out the last year")
    assert (first.boundary, first.set_by, first.reason) == (BOUNDARY, "Ines Marwood",
                                                           "hold out the last year")
    entry = cat.journal(kind="decision")[-1]
    assert (entry.idea_id, entry.by, entry.at) == (None, "Ines Marwood", first.set_at)
    assert entry.text == "Holdout boundary set to 2021-10-01: hold out the last year"
    moved = cat.set_holdout_boundary(dt.date(2021, 7, 1), by="Theo", reason="new data")
    assert cat.holdout_boundary() == moved
    assert cat.journal()[-1].text == ("Holdout boundary set to 2021-07-01 (was 2021-10-01): "
                                      "new data")
    assert [b.boundary for b in cat.holdout_boundaries()] == [BOUNDARY, dt.date(2021, 7, 1)]
    # the date in force again: nothing written
    entries = len(cat.journal())
    assert cat.set_holdout_boundary("2021-07-01", by="Theo", reason="again") == moved
    assert len(cat.journal()) == entries and len(cat.holdout_boundaries()) == 2
    assert cat.check() == []


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"boundary": "2021-10-01", "reason": "  "}, "reason: must not be empty"),
    ({"boundary": "1 October", "reason": "x"}, "boundary: expected a date YYYY-MM-DD"),
    ({"boundary": dt.datetime(2021, 10, 1), "reason": "x"},
     "boundary: expected a date YYYY-MM-DD"),
    ({"boundary": "2021-10-01", "reason": "x", "by": ""}, "by: must not be empty"),
])
def test_bad_settings_are_refused_and_write_nothing(cat: Catalogue, kwargs, message) -> None:
    kwargs = {"by": "Ines", **kwargs}
    with pytest.raises(CatalogueError, match=message):
        cat.set_holdout_boundary(kwargs.pop("boundary"), **kwargs)
    assert cat.holdout_boundaries() == [] and cat.journal() == []


def test_an_idea_sees_its_holdout_once_and_the_journal_says_who_and_when(
        cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    cat.set_holdout_boundary(BOUNDARY, by="Ines Marwood", reason="last year out")
    assert cat.unlock_problem(idea) == "it has no run yet: run it before the boundary first"
    run_id = _run(cat, idea)
    assert cat.unlock_problem(idea) is None and cat.holdout_view(idea) is None
    view = _unlock(cat, idea, run_id)
    assert (view.idea_id, view.run_id, view.revision_number, view.chosen_params,
            view.boundary, view.seen_by) == (idea, run_id, 1, SET, BOUNDARY, "Ines Marwood")
    assert view.figures == _figures()[0]
    assert view.daily_pnl.equals(_figures()[1])
    entry = cat.journal(idea)[-1]
    assert (entry.kind, entry.by, entry.at) == ("run", "Ines Marwood", view.seen_at)
    assert entry.text.startswith(
        "Holdout unlocked by Ines Marwood: rule revision 1, chosen set fast=5, slow=50 (of "
        f"run {run_id}) run once on the held-out dates 2021-10-01 to ")
    assert view.figures.finding() in entry.text
    # once per idea: a second unlocking is refused, naming who saw it and when
    problem = (f"its held-out years were already unlocked by Ines Marwood on "
               f"{view.seen_at[:10]} (continuing run {run_id}); they are seen once per idea")
    assert cat.unlock_problem(idea) == problem
    before = (len(cat.journal()), len(cat.holdout_views()))
    with pytest.raises(CatalogueError, match="already unlocked by Ines Marwood"):
        _unlock(cat, idea, run_id, by="Theo")
    assert (len(cat.journal()), len(cat.holdout_views())) == before
    assert cat.check() == []


def test_unlocking_is_refused_when_runs_saw_past_the_boundary(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    _run(cat, idea, boundary=None)  # made on the whole history
    cat.set_holdout_boundary(BOUNDARY, by="Ines", reason="from now on")
    later = _run(cat, idea)
    assert "saw the whole history, past the holdout boundary 2021-10-01" in \
        cat.unlock_problem(idea)
    with pytest.raises(CatalogueError, match="its held-out years are not unseen"):
        _unlock(cat, idea, later)
    other = accepted_idea(cat, title="Another")
    _run(cat, other)
    cat.set_holdout_boundary("2021-06-01", by="Ines", reason="earlier")  # the run saw later
    assert "saw the dates before 2021-10-01, past the holdout boundary 2021-06-01" in \
        cat.unlock_problem(other)
    third = accepted_idea(cat, title="Third")
    _run(cat, third, boundary="2021-03-01")  # an earlier boundary: saw less, but not this one
    assert cat.unlock_problem(third) == (
        f"its latest run (run {cat.runs(third)[-1].id}) was made before "
        "2021-03-01, not at the boundary in force (2021-06-01): run it again first")
    assert cat.holdout_views() == []


def test_only_the_latest_run_at_the_boundary_in_force_is_continued(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    cat.set_holdout_boundary(BOUNDARY, by="Ines", reason="x")
    first = _run(cat, idea)
    _run(cat, idea)
    with pytest.raises(CatalogueError, match=f"run {first} is not the latest run of idea"):
        _unlock(cat, idea, first)
    figures, held = _figures(dt.date(2021, 11, 1))
    with pytest.raises(CatalogueError, match="figures measured from 2021-11-01, but the "
                                             "boundary is 2021-10-01"):
        cat.record_holdout_view(idea, run_id=cat.runs(idea)[-1].id, figures=figures,
                                daily_pnl=held, data_fingerprint="a" * 64,
                                engine_version="0.1.0", by="Ines")
    assert cat.holdout_views() == []


def test_holdout_rows_are_append_only_and_chained(cat_path: Path) -> None:
    with Catalogue(cat_path) as cat:
        idea = accepted_idea(cat)
        cat.set_holdout_boundary(BOUNDARY, by="Ines", reason="x")
        _unlock(cat, idea, _run(cat, idea))
    conn = sqlite3.connect(cat_path)
    for sql in ("UPDATE holdout_boundaries SET boundary = '2020-01-01'",
                "DELETE FROM holdout_boundaries", "UPDATE holdout_views SET seen_by = 'Eve'",
                "DELETE FROM holdout_views",
                "INSERT OR REPLACE INTO holdout_views SELECT * FROM holdout_views"):
        with pytest.raises(sqlite3.IntegrityError, match="append-only"):
            conn.execute(sql)
    # a row changed behind the catalogue's back breaks its chained hash
    conn.execute("DROP TRIGGER holdout_views_no_update")
    conn.execute("UPDATE holdout_views SET seen_by = 'Eve'")
    conn.commit()
    conn.close()
    with Catalogue(cat_path, read_only=True) as cat:
        assert any(p.startswith("holdout_views: row(s) 1 changed") for p in cat.check())
    assert "holdout_views" in chain.COLUMNS and "holdout_boundaries" in chain.COLUMNS


def test_a_version_5_catalogue_migrates_with_no_boundary(tmp_path: Path) -> None:
    path = tmp_path / "v5.sqlite"
    open_catalogue_db(path, stop_before=migration_names()[5]).close()
    with Catalogue(path) as cat:
        assert cat.schema_version() == SCHEMA_VERSION > 6
        assert cat.holdout_boundary() is None and cat.holdout_views() == []
        assert cat.check() == []
