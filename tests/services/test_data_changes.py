"""A re-run of an idea on changed data says which markets changed since its last run: end to end
through ``run_idea``, the command line, the catalogue's record and a bundle, on generated
contract data.

References: the market whose price the test changes is the one expected (the test plants it);
a digest changes when its input changes and not otherwise (common practice, no source).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.catalogue import Catalogue
from hunchbook.cli import main
from hunchbook.core.data_changes import DataChanges
from hunchbook.core.runners import InProcess
from hunchbook.services import run_idea
from tests.core.data_folders import write_folder
from tests.reference_impl import random_contract_rows
from tests.store.helpers import RULES, accepted_idea, run_args

MARKETS = ("CORN", "SOYBEAN")


def _rows() -> dict[str, pd.DataFrame]:
    return {m: random_contract_rows(seed, "2018-01-02", 700, 9)
            for seed, m in enumerate(MARKETS, start=3)}


def _write(folder: Path, rows: dict[str, pd.DataFrame]) -> Path:
    return write_folder(folder, {m: r.assign(date=r["date"].dt.strftime("%Y-%m-%d"),
                                             expiry=r["expiry"].dt.strftime("%Y-%m-%d"))
                                 for m, r in rows.items()})


def _bump(rows: pd.DataFrame, day: dt.date) -> pd.DataFrame:
    """One close on ``day`` (its first row) moved by a tick."""
    out = rows.copy()
    out.loc[out.index[out["date"] == pd.Timestamp(day)][0], "close"] += 0.01
    return out


def _run(cat: Catalogue, idea: int, data: Path):
    return run_idea(cat, idea, RULES, data, by="Nia", runner=InProcess(), spa_reps=20)


@pytest.fixture
def desk(tmp_path: Path):
    cat = Catalogue(tmp_path / "desk.sqlite")
    yield cat, accepted_idea(cat)
    cat.close()


def _boundary_and_days(cat: Catalogue, rows: dict[str, pd.DataFrame]) -> tuple[dt.date, ...]:
    boundary = cat.holdout_boundary().boundary
    dates = sorted(set(rows["SOYBEAN"]["date"].dt.date))
    before = [d for d in dates if d < boundary]
    after = [d for d in dates if d >= boundary]
    return boundary, before[len(before) // 2], after[len(after) // 2]


def test_a_re_run_names_exactly_the_market_whose_price_changed(desk, tmp_path, capsys):
    cat, idea = desk
    rows = _rows()
    first = _run(cat, idea, _write(tmp_path / "a", rows))
    assert first.summary.data_changes is None  # a first run compares with nothing
    stored = cat.data_read(run_id=first.run_id)
    assert list(stored.markets) == list(MARKETS)
    assert stored.markets == first.summary.market_fingerprints
    assert cat.run(first.run_id).result.market_fingerprints == stored.markets

    # the same data again: nothing is said
    same = _run(cat, idea, _write(tmp_path / "b", rows))
    assert same.summary.data_changes is None
    # a price after the holdout boundary changed: not read, nothing is said
    _, inside, held = _boundary_and_days(cat, rows)
    later = _run(cat, idea, _write(tmp_path / "c", {**rows, "SOYBEAN": _bump(rows["SOYBEAN"],
                                                                                 held)}))
    assert later.summary.data_changes is None
    assert later.summary.market_fingerprints == first.summary.market_fingerprints

    # one close of SOYBEAN before the boundary: SOYBEAN alone, since the last run
    changed = _write(tmp_path / "d", {**rows, "SOYBEAN": _bump(rows["SOYBEAN"], inside)})
    again = _run(cat, idea, changed)
    expected = DataChanges(since_run=later.run_id, changed=("SOYBEAN",),
                           since_uuid=cat.run(later.run_id).uuid)
    assert again.summary.data_changes == expected
    assert cat.run(again.run_id).result.data_changes == expected  # the record keeps it
    entry = [e for e in cat.journal(idea) if e.kind == "run"][-1]  # and the journal says it
    assert f"Data changed since run {later.run_id}: SOYBEAN (prices differ)." in entry.text
    assert again.summary.market_fingerprints["CORN"] == first.summary.market_fingerprints["CORN"]

    # the command line says it in one line, against the run just recorded
    rules = tmp_path / "rules.toml"
    rules.write_text(RULES, encoding="utf-8")
    code = main(["run", str(rules), "--data", str(tmp_path / "a"), "--idea", str(idea),
                 "--catalogue", str(cat.path), "--by", "Nia", "--workers", "1"])
    out = capsys.readouterr()
    assert code == 0, out.err
    assert (f"Data changed since run {again.run_id}: SOYBEAN (prices differ)."
            in out.out.splitlines())
    code = main(["run", str(rules), "--data", str(tmp_path / "a"), "--idea", str(idea),
                 "--catalogue", str(cat.path), "--by", "Nia", "--workers", "1"])
    out = capsys.readouterr()
    assert code == 0 and "Data changed" not in out.out


def test_a_last_run_without_digests_says_not_recorded(desk, tmp_path):
    cat, idea = desk
    revision = cat.latest_revision(idea)
    # a run recorded as an earlier version did: a whole-data fingerprint, no per-market ones
    old = cat.record_run(idea, revision_id=revision.id, by="Nia",
                         **run_args([{"fast": 5, "slow": 50}, {"fast": 10, "slow": 50}],
                                    [0.1, 0.2]))
    assert cat.data_read(run_id=old).markets is None
    outcome = _run(cat, idea, _write(tmp_path / "a", _rows()))
    changes = outcome.summary.data_changes
    assert changes == DataChanges(since_run=old, recorded=False, since_uuid=cat.run(old).uuid)
    assert changes.sentence() == (f"Data changed since run {old}: which markets is not recorded "
                                  "(that run kept no per-market fingerprints).")


def test_the_changes_travel_in_a_bundle_and_name_the_importing_catalogue_run(desk, tmp_path):
    cat, idea = desk
    rows = _rows()
    _run(cat, idea, _write(tmp_path / "a", rows))
    dates = sorted(set(rows["CORN"]["date"].dt.date))
    second = _run(cat, idea, _write(tmp_path / "b", {**rows, "CORN": _bump(rows["CORN"],
                                                                           dates[5])}))
    assert second.summary.data_changes.changed == ("CORN",)
    path = tmp_path / "idea.zip"
    cat.export_bundle(idea, path)
    other = Catalogue(tmp_path / "other.sqlite")
    try:
        # a run of another idea first, so that the imported runs get other ids
        other.record_run(accepted_idea(other, "Another"), revision_id=1, by="Nia",
                         **run_args([{"fast": 5, "slow": 50}], [0.1]))
        report = other.import_bundle(path, by="Ines")
        first_here, second_here = other.runs(report.idea_id)
        assert first_here.id != cat.runs(idea)[0].id
        moved = second_here.result
        assert moved.data_changes == DataChanges(since_run=first_here.id, changed=("CORN",),
                                                 since_uuid=first_here.uuid)
        assert moved.market_fingerprints == second.summary.market_fingerprints
        assert other.data_read(idea_id=report.idea_id).markets == moved.market_fingerprints
        assert np.array_equal(other.run(second_here.id).daily_pnl.to_numpy(),
                              cat.run(second.run_id).daily_pnl.to_numpy(), equal_nan=True)
        assert other.check() == []  # the renumbered run is chained like any other
    finally:
        other.close()
