"""A catalogue run against the book, end to end on invented demo data: an analyst's variant of a
promoted trend idea is told it is mostly the same bet, with the correlation recomputed with
pandas from the two runs' stored daily P&L; the idea itself is left out of its own book; the
holdout warning and the book's are given together; the command line prints the table and
writes it in the JSON."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pandas as pd
import pytest

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.cli import main
from hunchbook.core.book import BOOK_CORRELATION_THRESHOLD
from hunchbook.core.runners import InProcess
from hunchbook.demo import rules as demo_rules
from hunchbook.demo import write_demo_data
from hunchbook.services import run_idea, unlock_holdout
from tests.store.helpers import accepted_idea, promote, run_args


@pytest.fixture(scope="module")
def data(tmp_path_factory) -> Path:
    return write_demo_data(tmp_path_factory.mktemp("demo") / "data", start="2015-01-02",
                           end="2019-12-31")


def _idea(cat: Catalogue, title: str, text: str) -> int:
    idea = cat.add_idea(title=title, hypothesis="Trends persist.", submitted_by="Theo",
                        stage="submitted")
    cat.save_rules(idea, text, by="Theo")
    cat.review(idea, reviewer="Ines", checklist=dict.fromkeys(CHECKLIST, True),
               decision="accept", comments="Go.")
    return idea


def _run(cat: Catalogue, idea: int, text: str, data: Path):
    return run_idea(cat, idea, text, data, by="Theo", runner=InProcess(), spa_reps=50)


@pytest.fixture
def desk(tmp_path: Path, data: Path) -> tuple[Catalogue, int, int]:
    """A catalogue whose trend idea (1) is promoted, and an accepted faster variant (2)."""
    cat = Catalogue(tmp_path / "desk.sqlite")
    trend = _idea(cat, "Two-average trend", demo_rules.TREND)
    _run(cat, trend, demo_rules.TREND, data)
    unlock_holdout(cat, trend, data, by="Ines")
    promote(cat, trend)
    variant = _idea(cat, "Faster trend <variant>", demo_rules.TREND_FASTER)
    yield cat, trend, variant
    cat.close()


def test_the_variant_is_told_it_is_the_same_bet_as_the_promoted_idea(desk, data) -> None:
    """The done-when of the comparison: the variant's verdict says it is mostly the same bet as
    idea 1, quoting the correlation that pandas computes from the two stored daily net P&L
    series over their common dates (reference: pandas ``corr``)."""
    cat, trend, variant = desk
    outcome = _run(cat, variant, demo_rules.TREND_FASTER, data)
    stored = cat.run(outcome.run_id)
    promoted = cat.run(cat.runs(trend)[-1].id)
    joined = pd.concat([stored.daily_pnl["net_pnl"], promoted.daily_pnl["net_pnl"]], axis=1,
                       join="inner")
    rho = joined.corr().iloc[0, 1]
    assert rho > BOOK_CORRELATION_THRESHOLD  # a near copy: different average lengths only
    book = stored.result.book
    (row,) = book.ideas
    assert (row.idea_id, row.title, row.run_id) == (trend, "Two-average trend", promoted.id)
    assert row.correlation == pytest.approx(rho, abs=1e-12) and row.days == len(joined)
    sentence = (f"Mostly the same bet as idea {trend} (Two-average trend): correlation "
                f"{rho:.2f} over {len(joined):,} common days.")
    assert sentence in stored.result.verdict.reasons
    assert [c.key for c in stored.result.verdict.checks if c.status == "warn"][-1:] == [
        f"same_bet_idea_{trend}"]
    assert outcome.summary == stored.result  # what run_idea returns is what was stored
    # the book of one idea at equal risk: Sharpe ratios recomputed with pandas (mean / std x
    # sqrt 252 of the scaled series' mean)
    scaled = joined / joined.std()
    ann = math.sqrt(252)
    assert book.sharpe_before == pytest.approx(
        scaled.iloc[:, 1].mean() / scaled.iloc[:, 1].std() * ann, rel=1e-9)
    both = scaled.mean(axis=1)
    assert book.sharpe_after == pytest.approx(both.mean() / both.std() * ann, rel=1e-9)


def test_the_idea_is_left_out_of_its_own_book(desk, data) -> None:
    """A run of the promoted idea itself is not compared with itself: with no other promoted
    idea there is no book, and no warning."""
    cat, trend, _ = desk
    outcome = _run(cat, trend, demo_rules.TREND, data)
    book = outcome.summary.book
    assert book is not None and book.ideas == () and book.book_ideas == 0
    assert not any(c.key.startswith("same_bet") for c in outcome.summary.verdict.checks)


def test_the_holdout_and_book_warnings_are_given_together(desk, data) -> None:
    """Once the variant's holdout is unlocked, its next run carries both warnings: the same bet
    first, "Holdout already seen" as the last reason (as docs/holdout.md says)."""
    cat, trend, variant = desk
    _run(cat, variant, demo_rules.TREND_FASTER, data)
    unlock_holdout(cat, variant, data, by="Ines")
    again = _run(cat, variant, demo_rules.TREND_FASTER, data)
    reasons = again.summary.verdict.reasons
    assert reasons[-1].startswith("Holdout already seen")
    assert reasons[-2].startswith(f"Mostly the same bet as idea {trend} ")
    assert [c.key for c in again.summary.verdict.checks if c.status == "warn"][-2:] == [
        f"same_bet_idea_{trend}", "holdout"]


def test_the_command_line_prints_the_table_and_writes_it_in_the_json(desk, data, tmp_path,
                                                                      capsys) -> None:
    cat, trend, variant = desk
    rules = tmp_path / "variant.toml"
    rules.write_text(demo_rules.TREND_FASTER, encoding="utf-8")
    out = tmp_path / "run.json"
    code = main(["run", str(rules), "--data", str(data), "--idea", str(variant), "--catalogue",
                 str(cat.path), "--by", "Theo", "--workers", "1", "--json", str(out)])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    record = json.loads(out.read_text())
    row = record["book"]["ideas"][0]
    assert row["idea_id"] == trend and row["correlation"] > BOOK_CORRELATION_THRESHOLD
    text = captured.out
    assert "Against the book (promoted ideas):" in text
    statistics, book = text.index("Statistics of the chosen set"), text.index("Against the book")
    assert statistics < book < text.index("Hypothetical backtest results")
    assert f"{trend}  Two-average trend" in text and f"{row['correlation']:.2f}" in text
    assert "Book Sharpe without this run" in text
    assert f"Mostly the same bet as idea {trend} (Two-average trend)" in text
    # the idea's page in the catalogue commands says it in one line
    code = main(["ideas", "show", str(variant), "--catalogue", str(cat.path)])
    shown = capsys.readouterr().out
    assert code == 0 and f"Against the book: highest correlation {row['correlation']:.2f} " \
                         f"(idea {trend})" in shown


def test_promotion_waits_for_the_held_out_years_when_there_are_some(tmp_path, data) -> None:
    """A promotion review needs the held-out years seen when the idea has some left unseen;
    without a boundary to hold them (runs made on the whole history) the item is waived and the
    review says so (house rule, common practice, no source)."""
    from hunchbook.catalogue import NOTHING_HELD_OUT, PROMOTION_CHECKLIST
    from hunchbook.store.errors import CatalogueError

    with Catalogue(tmp_path / "c.sqlite") as cat:
        trend = _idea(cat, "Two-average trend", demo_rules.TREND)
        _run(cat, trend, demo_rules.TREND, data)
        unseen = {**dict.fromkeys(PROMOTION_CHECKLIST, True), "holdout_seen": False}
        with pytest.raises(CatalogueError, match="unticked checklist item.*holdout_seen"):
            cat.review(trend, reviewer="Ines", checklist=unseen, decision="promote",
                       comments="")
        assert cat.idea(trend).stage == "tested"
        unlock_holdout(cat, trend, data, by="Ines")
        promote(cat, trend)
        assert cat.idea(trend).stage == "promoted"
    with Catalogue(tmp_path / "old.sqlite") as cat:
        idea = accepted_idea(cat, "Run on the whole history")
        cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Nia",
                       **run_args([{"fast": 5.0, "slow": 50.0}], [0.6]))
        cat.review(idea, reviewer="Ines", checklist=unseen, decision="promote", comments="")
        assert cat.idea(idea).stage == "promoted"
        assert cat.reviews(idea)[-1].comments == NOTHING_HELD_OUT
