"""The idea table over 10,000 ideas: read a page at a time, filtered, searched and sorted in
SQL, and refreshed in place after edits.

Reference for every order and filter: Python's ``sorted`` and plain comparisons on the rows
read straight from the SQLite file with the standard library's ``sqlite3`` (not through the
catalogue). Text is compared as SQLite documents its NOCASE collation: ASCII letters folded to
lower case, other characters by code point (https://sqlite.org/datatype3.html#collation).
"""

from __future__ import annotations

import re
import sqlite3
from pathlib import Path

import pytest
from PySide6.QtCore import Qt

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.verdict import LABELS
from hunchbook.gui.models import ID_ROLE, PAGE, IdeaTableModel
from tests.store.helpers import RULES, run_args

IDEAS = 10_000
RUNS = 60
PEOPLE = ("Ines Marwood", "Theo Brackwater", "Nia Oduya-Fell", "Ada Quill")
MARKETS = ("CRUDE", "GOLD", "CORN", "SOYBEAN")
TAGS = ("trend", "carry", "reversion")
# Mixed case and non-ASCII first letters, so that the title order shows its collation.
STARTS = ("alpha", "Alpha", "beta", "Éclair", "zeta", "Zeta", "élan", "Omega")
WORDS = ("backwardation", "harvest", "momentum", "storage", "pension", "rebalancing")


def _ascii_fold(text: str) -> str:
    return "".join(chr(ord(c) + 32) if "A" <= c <= "Z" else c for c in text)


@pytest.fixture(scope="module")
def big(tmp_path_factory) -> Path:
    """10,000 ideas written through the catalogue's API (one transaction per 1,000), 60 of
    them accepted on four-eyes reviews and run (net Sharpe, verdict, trials), the others
    without a run (missing Sharpe and verdict)."""
    path = tmp_path_factory.mktemp("big") / "ideas.sqlite"
    with Catalogue(path) as cat:
        for first in range(0, IDEAS, 1_000):
            with cat.transaction():
                for k in range(first, first + 1_000):
                    cat.add_idea(
                        title=f"{STARTS[k % 8]} {k * 7919 % 10_007:05d}",
                        hypothesis=f"Prices {WORDS[k % 6]} then {WORDS[k * 5 % 6]} {k}.",
                        submitted_by=PEOPLE[k % 4], markets=(  # the run ideas: the rules' own
                            ["CORN", "SOYBEAN"] if k % 50 == 2 else
                            list(dict.fromkeys((MARKETS[k % 4], MARKETS[k % 3])))),
                        tags=[TAGS[k % 3]], stage="submitted" if k % 5 else "draft")
        with cat.transaction():
            for n, idea in enumerate(range(3, 3 + RUNS * 50, 50)):
                author = cat.idea(idea).submitted_by
                cat.save_rules(idea, RULES, by=author)
                reviewer = next(p for p in PEOPLE if p != author)
                cat.review(idea, reviewer=reviewer, checklist=dict.fromkeys(CHECKLIST, True),
                           decision="accept", comments="ok")
                sets = [{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}][:1 + n % 2]
                cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by=author,
                               **run_args(sets, [round(0.1 * (n % 13) - 0.4, 2)] * len(sets),
                                          seed=idea, outcome=("passes", "no_edge")[n % 2]))
    return path


@pytest.fixture
def catalogue(big: Path, tmp_path: Path):
    copy = tmp_path / "ideas.sqlite"
    copy.write_bytes(big.read_bytes())  # each test edits its own copy
    with Catalogue(copy) as cat:
        yield cat


def _rows(path: Path) -> list[dict]:
    """Every idea as stored, read with the standard library."""
    conn = sqlite3.connect(path)
    conn.row_factory = sqlite3.Row
    rows = [dict(r) for r in conn.execute("SELECT * FROM ideas")]
    conn.close()
    return rows


#: Each column's value as the table sorts it (None: missing, sorted last).
KEYS = {
    IdeaTableModel.TITLE: lambda r: _ascii_fold(r["title"]),
    IdeaTableModel.STAGE: lambda r: r["stage"],
    IdeaTableModel.VERDICT: lambda r: (None if r["last_verdict"] is None else
                                       _ascii_fold(LABELS.get(r["last_verdict"],
                                                              r["last_verdict"]))),
    IdeaTableModel.SHARPE: lambda r: r["last_net_sharpe"],
    IdeaTableModel.TRIALS: lambda r: r["trial_count"],
    IdeaTableModel.UPDATED: lambda r: r["updated_at"],
}


def _reference(rows: list[dict], column: int, descending: bool) -> list[int]:
    """Ids in the table's order: by the column's value, missing values last in either
    direction, ties by id in the same direction."""
    key = KEYS[column]
    known = sorted((r for r in rows if key(r) is not None), key=lambda r: (key(r), r["id"]),
                   reverse=descending)
    missing = sorted((r["id"] for r in rows if key(r) is None), reverse=descending)
    return [r["id"] for r in known] + missing


def _all_ids(model: IdeaTableModel) -> list[int]:
    while model.canFetchMore():
        model.fetchMore()
    return [model.index(r, 0).data(ID_ROLE) for r in range(model.rowCount())]


def test_rows_are_read_a_page_at_a_time(catalogue):
    """rowCount grows by one page per fetchMore, until every idea is read and canFetchMore
    turns false; each idea is read once."""
    model = IdeaTableModel()
    model.set_query(catalogue)
    assert model.rowCount() == PAGE and model.matching_count() == IDEAS
    counts = []
    while model.canFetchMore():
        model.fetchMore()
        counts.append(model.rowCount())
    assert counts == list(range(2 * PAGE, IDEAS + 1, PAGE))
    assert not model.canFetchMore()
    model.fetchMore()  # nothing left: nothing happens
    ids = [model.index(r, 0).data(ID_ROLE) for r in range(model.rowCount())]
    assert len(set(ids)) == IDEAS


@pytest.mark.parametrize("column", list(KEYS))
@pytest.mark.parametrize("descending", [False, True])
def test_every_order_is_pythons_sort_of_the_stored_rows(catalogue, column, descending):
    rows = _rows(catalogue.path)
    model = IdeaTableModel()
    model.set_query(catalogue)
    model.sort(column, Qt.SortOrder.DescendingOrder if descending else
               Qt.SortOrder.AscendingOrder)
    assert _all_ids(model) == _reference(rows, column, descending)


def _words(row: dict) -> list[str]:
    return re.findall(r"\w+", " ".join((row["title"], row["hypothesis"],
                                         row["rationale"])).casefold())


@pytest.mark.parametrize(("filters", "test"), [
    ({"stage": "draft"}, lambda r: r["stage"] == "draft"),
    ({"market": "SOYBEAN", "tag": "carry"}, lambda r: '"SOYBEAN"' in r["markets"]
     and r["tags"] == '["carry"]'),
    ({"author": "Nia Oduya-Fell", "verdict": "passes"},
     lambda r: r["submitted_by"] == "Nia Oduya-Fell" and r["last_verdict"] == "passes"),
    # full-text search: every word typed begins a word of the title, hypothesis or rationale
    ({"text": "harv Rebal"}, lambda r: all(any(w.startswith(t) for w in _words(r))
                                           for t in ("harv", "rebal"))),
    ({"text": "rebalancing", "stage": "submitted"},
     lambda r: "rebalancing" in _words(r) and r["stage"] == "submitted"),
])
def test_filters_and_search_are_pythons_filter_of_the_stored_rows(catalogue, filters, test):
    rows = _rows(catalogue.path)
    model = IdeaTableModel()
    model.set_query(catalogue, **filters)
    model.sort(IdeaTableModel.TITLE, Qt.SortOrder.AscendingOrder)
    expected = _reference([r for r in rows if test(r)], IdeaTableModel.TITLE, False)
    assert expected  # every filter keeps some ideas
    assert model.matching_count() == len(expected)
    assert _all_ids(model) == expected


def _spy(model: IdeaTableModel) -> list[tuple]:
    """Every change signal the model emits, in order."""
    seen: list[tuple] = []
    model.dataChanged.connect(lambda a, b, *_: seen.append(("data", a.row(), b.row())))
    for name in ("modelReset", "layoutChanged", "rowsInserted", "rowsRemoved"):
        getattr(model, name).connect(lambda *args, name=name: seen.append(
            (name, *(a for a in args[1:] if isinstance(a, int)))))
    return seen


def _shown(model: IdeaTableModel) -> dict[int, tuple]:
    return {model.index(r, 0).data(ID_ROLE): tuple(model.index(r, c).data()
                                                   for c in range(model.columnCount()))
            for r in range(model.rowCount())}


def test_refreshing_one_idea_changes_that_row_only(catalogue):
    """An edit to a loaded idea: one dataChanged for its row, no reset, no layout change, no
    rows inserted or removed; the row shows the edit and keeps its place."""
    model = IdeaTableModel()
    model.set_query(catalogue)
    model.sort(IdeaTableModel.TITLE, Qt.SortOrder.AscendingOrder)
    before = [model.index(r, 0).data(ID_ROLE) for r in range(model.rowCount())]
    idea_id = before[37]
    seen = _spy(model)
    catalogue.update_idea(idea_id, by="Ada Quill", title="zz moved to the end")
    model.refresh_ideas([idea_id])
    assert seen == [("data", 37, 37)]
    assert model.index(37, IdeaTableModel.TITLE).data() == "zz moved to the end"
    assert [model.index(r, 0).data(ID_ROLE) for r in range(model.rowCount())] == before


def test_everything_shown_stays_right_after_edits(catalogue):
    """Under a stage filter and the title order: an idea edited out of the filter leaves
    (rows removed, no reset), one edited into it comes in where the order puts it, a title
    edit stays in its row; once every page is read, the rows are exactly the stored ideas the
    filter keeps (none twice, none missing) and each shows what is stored."""
    model = IdeaTableModel()
    model.set_query(catalogue, stage="submitted")
    model.sort(IdeaTableModel.TITLE, Qt.SortOrder.AscendingOrder)
    model.fetchMore()  # two pages read
    loaded = [model.index(r, 0).data(ID_ROLE) for r in range(model.rowCount())]
    seen = _spy(model)

    renamed, leaving = loaded[3], loaded[10]
    catalogue.update_idea(renamed, by="Ada Quill", title="zzz renamed past every page")
    catalogue.set_stage(leaving, "draft", by="Ada Quill", reason="back to the drawing board")
    # a draft idea whose title sorts first among the submitted ones once it is submitted
    entering = next(r["id"] for r in _rows(catalogue.path) if r["stage"] == "draft")
    catalogue.update_idea(entering, by="Ada Quill", title="a first")
    catalogue.set_stage(entering, "submitted", by="Ada Quill", reason="ready for review")
    model.refresh_ideas([renamed, leaving, entering])

    assert ("modelReset",) not in seen and ("layoutChanged",) not in seen
    assert ("rowsRemoved", 10, 10) in seen and ("rowsInserted", 0, 0) in seen
    assert model.index(0, 0).data(ID_ROLE) == entering
    assert model.index(4, IdeaTableModel.TITLE).data() == "zzz renamed past every page"

    ids = _all_ids(model)
    rows = _rows(catalogue.path)
    expected = {r["id"] for r in rows if r["stage"] == "submitted"}
    assert len(ids) == len(set(ids)) == len(expected) == model.matching_count()
    assert set(ids) == expected
    fresh = IdeaTableModel()
    fresh.set_query(catalogue, among=ids)
    _all_ids(fresh)
    assert _shown(model) == _shown(fresh)


def test_run_lines_are_the_run_records_fields(catalogue):
    """The runs listed without parsing their records say what the parsed records say."""
    lines = catalogue.run_lines()
    runs = catalogue.runs()
    assert len(lines) == len(runs) == RUNS
    for line, run in zip(lines, runs, strict=True):
        assert (line.id, line.idea_id, line.revision_number, line.recorded_at) == (
            run.id, run.idea_id, run.revision_number, run.recorded_at)
        assert line.verdict_label == run.result.verdict.label
        assert line.idea_title == catalogue.idea(run.idea_id).title
