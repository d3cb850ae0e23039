"""The invented demo catalogue: every stage, every verdict kind, sound records, and every
stored run equal to a re-run of its rule revision on the demo data."""

from __future__ import annotations

import math
import os
from pathlib import Path

import pandas as pd
import pytest
from scipy.stats import kurtosis, norm, skew

from hunchbook.api import Study
from hunchbook.catalogue import CHECKLIST, STAGES, Catalogue
from hunchbook.core.runners import InProcess
from hunchbook.core.verdict import LABELS
from hunchbook.demo import DESK
from hunchbook.demo.build import CATALOGUE_FILE, DATA_DIR, built_demo, prepare_demo
from hunchbook.demo.catalogue import DEMO_TAG, build_demo_catalogue
from hunchbook.services import run_idea


@pytest.fixture(scope="module")
def desk(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A working copy of the demo desk (built once per session into the test user cache)."""
    catalogue, _ = prepare_demo(tmp_path_factory.mktemp("demo"))
    return catalogue.parent


@pytest.fixture(scope="module")
def demo(desk: Path) -> Catalogue:
    return Catalogue(desk / CATALOGUE_FILE, create=False)


def test_the_demo_covers_every_stage_and_every_verdict(demo: Catalogue) -> None:
    ideas = demo.list_ideas()
    assert 12 <= len(ideas) <= 20
    assert {i.stage for i in ideas} == set(STAGES)
    assert {r.verdict_label for r in demo.runs()} == set(LABELS)
    assert all(DEMO_TAG in i.tags for i in ideas)
    assert {i.submitted_by for i in ideas} == {p.name for p in DESK.people}
    juniors = {p.name for p in DESK.people[1:]}
    waiting = demo.list_ideas(stage="submitted")
    assert waiting and all(i.submitted_by in juniors for i in waiting)
    assert demo.check() == []


def test_demo_runs_are_consistent_with_the_catalogue(demo: Catalogue) -> None:
    for summary in demo.runs():
        run = demo.run(summary.id)
        stats = run.result.statistics
        assert stats.n_trials == run.trial_count
        assert run.result.verdict.label == LABELS[run.verdict_label]
        assert len(run.daily_pnl) >= stats.n_days  # statistics use the days every set has
        assert run.result.chosen.params == run.chosen_params


def test_demo_runs_reach_the_verdict_each_story_tells(demo: Catalogue) -> None:
    """Each real run lands on the outcome its story (and its journal notes) describe."""
    assert [r.verdict_label for r in demo.runs()] == [
        "passes", "too_little_data", "selection_luck", "lost_to_costs", "too_little_data",
        "no_edge", "lost_to_costs", "passes", "not_judged", "no_edge", "passes"]


def test_every_stored_run_equals_its_re_run(demo: Catalogue, desk: Path,
                                            tmp_path: Path) -> None:
    """Re-running each stored run's rule revision on the demo data by the quick run's own
    path (run_idea, in-process runner, default SPA seed) in a fresh catalogue that has seen
    the same earlier trials gives exactly the stored verdict and net Sharpe ratio (the
    engine against its own record: no outside source)."""
    fresh = Catalogue(tmp_path / "rerun.sqlite")
    fresh.set_holdout_boundary(demo.holdout_boundary().boundary, by="t", reason="the demo's")
    twins: dict[int, int] = {}
    for stored in demo.runs():
        if stored.idea_id not in twins:
            twins[stored.idea_id] = fresh.add_idea(title=f"re-run of idea {stored.idea_id}",
                                                   hypothesis="h", submitted_by="t",
                                                   stage="submitted")
            fresh.save_rules(twins[stored.idea_id],
                             demo.revisions(stored.idea_id)[-1].text, by="t")
            fresh.review(twins[stored.idea_id], reviewer="r", decision="accept",
                         checklist=dict.fromkeys(CHECKLIST, True), comments="")
            link = demo.variant_link(stored.idea_id)  # a variant counts its family's trials
            if link is not None:
                fresh.set_variant_of(twins[stored.idea_id], twins[link.parent_id], by="t",
                                     reason="as in the demo")
        text = demo.revision(stored.revision_id).text
        twin = twins[stored.idea_id]
        # the demo's amendments made before this run, replayed with their reasons
        made = len(fresh.preregistrations(twin))
        for version in demo.preregistrations(stored.idea_id)[max(made, 1):]:
            if version.frozen_at < stored.recorded_at:
                fresh.amend_preregistration(twin, by="t", reason=version.reason,
                                            rule_text=demo.revision(version.revision_id).text)
        again = run_idea(fresh, twins[stored.idea_id], text, desk / DATA_DIR, by="t",
                         runner=InProcess())
        record = demo.run(stored.id).result
        assert again.summary.verdict.outcome == record.verdict.outcome
        assert again.summary.statistics.net.sharpe == record.statistics.net.sharpe
        assert again.summary.statistics.n_trials == record.statistics.n_trials


def test_every_idea_has_a_rule_file_that_runs_on_the_demo_data(demo: Catalogue,
                                                                desk: Path) -> None:
    """All 16 ideas carry a rule file, and each runs its first parameter set on the data."""
    for idea in demo.list_ideas():
        revision = demo.latest_revision(idea.id)
        assert revision is not None, idea.title
        study = Study.from_text(revision.text, desk / DATA_DIR)
        result = study.run_set(study.parameter_sets()[0])
        assert len(result.portfolio) > 100, idea.title


def test_demo_psr_matches_scipy(demo: Catalogue) -> None:
    """Probabilistic Sharpe ratio (Bailey & Lopez de Prado 2012, eq. for PSR(0)) recomputed
    from the stored P&L (the days every set of the run has: the last ``n_days``) with scipy's
    bias-corrected skewness and kurtosis."""
    for summary in demo.runs():
        run = demo.run(summary.id)
        x = run.daily_pnl["net_pnl"].to_numpy()[-run.result.statistics.n_days:]
        sr = x.mean() / x.std(ddof=1)
        g3, g4 = skew(x, bias=False), kurtosis(x, fisher=False, bias=False)
        psr = norm.cdf(sr * math.sqrt(len(x) - 1) / math.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr**2))
        assert run.result.statistics.net.psr == pytest.approx(psr, abs=1e-4)
        assert run.result.statistics.net.sharpe == pytest.approx(sr * math.sqrt(252), abs=1e-4)


def test_the_journal_reads_like_a_desk(demo: Catalogue) -> None:
    entries = demo.journal()
    kinds = {e.kind for e in entries}
    assert {"note", "decision", "review", "run", "stage", "preregistration",
            "correction"} <= kinds
    assert [e.at for e in entries] == sorted(e.at for e in entries)
    assert any(e.idea_id is None for e in entries)


def test_the_demo_refuses_to_overwrite(demo: Catalogue, desk: Path) -> None:
    with pytest.raises(Exception, match="file exists"):
        build_demo_catalogue(Path(demo.path), desk / DATA_DIR)


def test_the_built_desk_is_kept_once_per_version_and_copied(tmp_path: Path) -> None:
    """The second start copies the cached desk instead of building it again (common
    practice, no source: a cache keyed by version and inputs)."""
    first = built_demo()
    assert built_demo() == first
    catalogue, data = prepare_demo(tmp_path / "copy")
    assert catalogue.read_bytes() == (first / CATALOGUE_FILE).read_bytes()
    assert sorted(p.name for p in data.iterdir()) == sorted(
        p.name for p in (first / DATA_DIR).iterdir())


def test_the_promoted_trend_idea_saw_its_holdout_once(demo: Catalogue) -> None:
    """The demo's promoted idea unlocked its held-out year in the tool (not elsewhere): one
    unlocking, by the research lead, journalled with who and when (engine against its own
    record: no outside source)."""
    (view,) = demo.holdout_views()
    idea = demo.idea(view.idea_id)
    assert idea.title == "Two-average trend across the book" and idea.stage == "promoted"
    assert view.boundary == demo.holdout_boundary().boundary
    assert view.seen_by == DESK.people[0].name
    entries = [e for e in demo.journal(view.idea_id) if e.text.startswith("Holdout unlocked")]
    assert len(entries) == 1 and entries[0].by == view.seen_by
    assert entries[0].at == view.seen_at
    assert demo.unlock_problem(view.idea_id) is not None  # once per idea


def test_the_analysts_variant_is_told_it_is_the_promoted_trend_again(demo: Catalogue) -> None:
    """The demo's faster variant of the promoted trend idea, run after the promotion, is told
    it is mostly the same bet as idea 1, at the correlation pandas computes from the two stored
    daily net P&L series (reference: pandas ``corr`` over the common dates); no other demo run
    is the same bet as the promoted idea, and the variant was declined for promotion for it."""
    (variant,) = [i for i in demo.list_ideas() if i.title.startswith("Two-average trend with")]
    (trend,) = demo.list_ideas(stage="promoted")
    run = demo.run(demo.runs(variant.id)[-1].id)
    promoted = demo.run(run.result.book.ideas[0].run_id)
    assert promoted.idea_id == trend.id == 1
    joined = pd.concat([run.daily_pnl["net_pnl"], promoted.daily_pnl["net_pnl"]], axis=1,
                       join="inner")
    rho = joined.corr().iloc[0, 1]
    assert rho >= 0.8
    assert (f"Mostly the same bet as idea 1 ({trend.title}): correlation {rho:.2f} over "
            f"{len(joined):,} common days.") in run.result.verdict.reasons
    assert variant.stage == "tested"  # declined for promotion, so it can be run again
    assert demo.reviews(variant.id)[-1].decision == "decline"
    others = [demo.run(r.id).result for r in demo.runs() if r.idea_id != variant.id]
    assert not any(c.key.startswith("same_bet") for r in others for c in r.verdict.checks)


def test_every_demo_review_is_made_by_a_second_person(demo: Catalogue) -> None:
    """Four eyes (common practice, no source): no review and no promotion by the idea's own
    author; the promoted idea went through a promotion review with every item ticked."""
    from hunchbook.catalogue import PROMOTION_CHECKLIST

    assert demo.desk_setting("one_person_desk") is False
    for summary in demo.list_ideas():
        for review in demo.reviews(summary.id):
            assert review.reviewer != summary.submitted_by and not review.by_author
    (promoted,) = demo.list_ideas(stage="promoted")
    review = demo.reviews(promoted.id)[-1]
    assert (review.kind, review.decision) == ("promotion", "promote")
    assert review.checklist == dict.fromkeys(PROMOTION_CHECKLIST, True)
    stage = [e for e in demo.journal(promoted.id, kind="stage") if "-> promoted" in e.text]
    assert len(stage) == 1 and stage[0].by == review.reviewer
    assert stage[0].text.startswith(f"Stage tested -> promoted. Review {review.id}:")


def test_the_demo_family_counts_its_trials_together(demo: Catalogue) -> None:
    """The volatility-filter idea is a variant of the slow rates trend: its runs count the
    parent's trials as well as its own (its markets differ, so every set of its own is a new
    trial: common practice, no source)."""
    titles = {i.title: i.id for i in demo.list_ideas()}
    parent = titles["Rates trend, traded slowly"]
    variant = titles["Ten-year note trend with a volatility filter"]
    link = demo.variant_link(variant)
    assert link is not None and link.parent_id == parent and link.set_by == DESK.people[2].name
    family = demo.family(variant)
    assert [m.id for _, m in family.members()] == [parent, variant]
    parent_runs, variant_runs = demo.runs(parent), demo.runs(variant)
    assert variant_runs[0].recorded_at > link.set_at > parent_runs[-1].recorded_at
    assert variant_runs[0].trial_count == parent_runs[-1].trial_count + \
        variant_runs[0].set_count
    assert family.trial_count == demo.idea(parent).trial_count == demo.idea(variant).trial_count
    assert family.trial_count == sum(m.own_trials for _, m in family.members())


def test_a_new_demo_build_forgets_builds_older_than_a_day(tmp_path):
    # times are fixed numbers set on the folders (no clock): the new build at t, an older
    # version two days before it, a half-made build an hour before it
    from hunchbook.demo.build import OLD_BUILD_SECONDS, forget_old_builds

    t = 1_800_000_000.0
    built, stale, recent = (tmp_path / name for name in ("0.2-new", "0.1-old", ".building-x"))
    for folder, at in ((built, t), (stale, t - 2 * 86_400), (recent, t - 3_600)):
        folder.mkdir()
        (folder / "file").write_text("x")
        os.utime(folder, (at, at))
    assert OLD_BUILD_SECONDS == 86_400
    assert forget_old_builds(built, t) == [stale]
    assert sorted(p.name for p in tmp_path.iterdir()) == [".building-x", "0.2-new"]
