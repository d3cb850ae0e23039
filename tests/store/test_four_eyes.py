"""Four eyes: reviews and promotions by someone other than the author (unless the desk is a
one-person desk, and then the review says so); promotion as a review with its checklist; whose
next step an idea waits for.

These are house rules of a research desk (common practice, no source): the person who wrote
an idea does not approve it; promotion is a decision a second person signs with a checklist.
"""

from __future__ import annotations

import pytest

from hunchbook.catalogue import CHECKLIST, PROMOTION_CHECKLIST, Catalogue, CatalogueError
from tests.store.helpers import RULES, accepted_idea, daily_pnl, run_args, table_counts

ALL = dict.fromkeys(CHECKLIST, True)
PROMOTE = dict.fromkeys(PROMOTION_CHECKLIST, True)


def _submitted(cat: Catalogue, by: str = "Nia") -> int:
    idea = cat.add_idea(title="Grain trend", hypothesis="h", submitted_by=by,
                        stage="submitted")
    cat.save_rules(idea, RULES, by=by)
    return idea


def _tested(cat: Catalogue) -> int:
    idea = accepted_idea(cat)
    revision = cat.latest_revision(idea)
    cat.record_run(idea, revision_id=revision.id, by="Nia",
                   **run_args([{"fast": 5.0, "slow": 50.0}], [0.9], outcome="passes"))
    return idea


def _unlock(cat: Catalogue, idea: int) -> None:
    """Keep an unlocking of the idea's held-out years (the figures of generated P&L: only the
    record of the unlocking matters here)."""
    import datetime as dt

    from hunchbook.core.holdout import holdout_figures
    from hunchbook.store import holdout

    run = cat.runs(idea)[-1]
    whole = daily_pnl(days=400)
    boundary = whole.index[300].date()
    figures = holdout_figures(whole, boundary=boundary, in_sample_sharpe=0.9,
                              in_sample_days=300, in_sample_sets=1)
    with cat.transaction():
        holdout.insert_view(cat.db, idea_id=idea, revision_id=run.revision_id, run_id=run.id,
                            chosen_params=run.chosen_params, boundary=boundary,
                            data_fingerprint="f" * 64, engine_version="0.1.0", figures=figures,
                            daily_pnl=whole.loc[whole.index >= str(boundary)], by="Ines",
                            at=dt.datetime(2026, 1, 1).isoformat() + ".000000Z")


def test_the_author_cannot_review_their_own_idea(cat: Catalogue) -> None:
    idea = _submitted(cat)
    before = table_counts(cat)
    for name in ("Nia", " nia "):  # the same person, however the name is typed
        with pytest.raises(CatalogueError, match="^idea 1: Nia wrote this idea, so someone else "
                                                 "reviews it .four eyes.; a desk of one can "
                                                 "allow it with the desk setting "
                                                 "one_person_desk$"):
            cat.review(idea, reviewer=name, checklist=ALL, decision="accept", comments="")
    assert table_counts(cat) == before and cat.idea(idea).stage == "submitted"
    cat.review(idea, reviewer="Ines", checklist=ALL, decision="accept", comments="Go.")
    review = cat.reviews(idea)[-1]
    assert (review.kind, review.by_author, review.reviewer) == ("idea", False, "Ines")


def test_a_one_person_desk_lets_the_author_review_and_the_review_says_so(
        cat: Catalogue) -> None:
    assert cat.desk_setting("one_person_desk") is False
    setting = cat.set_desk_setting("one_person_desk", True, by="Nia", reason="I trade alone.")
    assert (setting.key, setting.value, setting.set_by, setting.reason) == (
        "one_person_desk", True, "Nia", "I trade alone.")
    entry = cat.journal(kind="decision")[-1]
    assert entry.idea_id is None and entry.text.startswith("Desk setting one_person_desk "
                                                           "turned on")
    assert entry.text.endswith(": I trade alone.")
    # the value in force again writes nothing
    assert cat.set_desk_setting("one_person_desk", True, by="Nia", reason="again") == setting
    assert len(cat.desk_settings()) == 1
    idea = _submitted(cat)
    cat.review(idea, reviewer="Nia", checklist=ALL, decision="accept", comments="")
    review = cat.reviews(idea)[-1]
    assert review.by_author and review.decision == "accept"
    text = cat.journal(idea, kind="review")[-1].text
    assert text.startswith("Accepted for testing. (One-person desk: reviewed by the author.)")
    # switched off again, the earlier review still says it was the author's own
    cat.set_desk_setting("one_person_desk", False, by="Nia", reason="Ines joined.")
    assert cat.desk_setting("one_person_desk") is False
    assert cat.reviews(idea)[-1].by_author
    assert [s.value for s in cat.desk_settings()] == [True, False]
    assert cat.check() == []


@pytest.mark.parametrize("key, value, message", [
    ("two_person_desk", True, "expected one of one_person_desk"),
    ("one_person_desk", "yes", "expected on or off"),
])
def test_bad_desk_settings_are_refused(cat: Catalogue, key: str, value: object,
                                       message: str) -> None:
    with pytest.raises(CatalogueError, match=message):
        cat.set_desk_setting(key, value, by="Nia", reason="r")  # type: ignore[arg-type]
    assert cat.desk_settings() == []


def test_promotion_is_not_a_stage_change(cat: Catalogue) -> None:
    idea = _tested(cat)
    with pytest.raises(CatalogueError, match="promoted by a promotion review, not a stage "
                                             "change.*holdout_seen, book_correlation_seen, "
                                             "costs_checked.*hunchbook ideas promote"):
        cat.set_stage(idea, "promoted", by="Ines", reason="looks good")
    assert cat.idea(idea).stage == "tested"
    # shelving stays a plain stage change
    cat.set_stage(idea, "shelved", by="Nia", reason="not worth it")
    assert cat.idea(idea).stage == "shelved"


def test_the_promotion_review_needs_a_second_person_its_checklist_and_the_holdout(
        cat: Catalogue) -> None:
    idea = _tested(cat)
    with pytest.raises(CatalogueError, match="Nia wrote this idea"):
        cat.review(idea, reviewer="Nia", checklist=PROMOTE, decision="promote", comments="")
    with pytest.raises(CatalogueError, match="unticked checklist item.*costs_checked"):
        cat.review(idea, reviewer="Theo", checklist={**PROMOTE, "costs_checked": False},
                   decision="promote", comments="")
    with pytest.raises(CatalogueError, match="unanswered item.*holdout_seen"):
        cat.review(idea, reviewer="Theo", checklist=ALL, decision="promote", comments="")
    with pytest.raises(CatalogueError, match="held-out years of idea 1 have not been unlocked"):
        cat.review(idea, reviewer="Theo", checklist=PROMOTE, decision="promote", comments="")
    with pytest.raises(CatalogueError, match="say in the comments"):
        cat.review(idea, reviewer="Theo", checklist={**PROMOTE, "holdout_seen": False},
                   decision="decline", comments="")
    declined = cat.review(idea, reviewer="Theo", checklist={**PROMOTE, "holdout_seen": False},
                          decision="decline", comments="Unlock the held-out years first.")
    assert cat.idea(idea).stage == "tested"
    _unlock(cat, idea)
    promoted = cat.review(idea, reviewer="Theo", checklist=PROMOTE, decision="promote",
                          comments="Held-out years hold up.")
    assert cat.idea(idea).stage == "promoted"
    reviews = cat.reviews(idea)
    assert [(r.id, r.kind, r.decision) for r in reviews[1:]] == [
        (declined, "promotion", "decline"), (promoted, "promotion", "promote")]
    assert reviews[-1].checklist == PROMOTE
    review_entry, stage_entry = cat.journal(idea)[-2:]
    assert (review_entry.kind, review_entry.by) == ("review", "Theo")
    assert review_entry.text.startswith("Promoted. Promotion checklist: [x] holdout_seen; "
                                        "[x] book_correlation_seen; [x] costs_checked.")
    assert stage_entry.text.startswith("Stage tested -> promoted. Review 3:")
    assert cat.idea(idea).reviewer == "Ines"  # the idea's reviewer stays the first one
    # a promotion review is only for tested ideas; an idea review only for submitted ones
    with pytest.raises(CatalogueError, match="promotion reviews are for tested ideas"):
        cat.review(idea, reviewer="Theo", checklist=PROMOTE, decision="promote", comments="")
    with pytest.raises(CatalogueError, match="only submitted ideas are reviewed"):
        cat.review(idea, reviewer="Theo", checklist=ALL, decision="accept", comments="")
    assert cat.check() == []


@pytest.mark.parametrize("stage, author, named, verdict, user, alone, expected", [
    ("submitted", "Nia", None, None, "Ines", False, "review"),
    ("submitted", "Nia", None, None, "Nia", False, None),
    ("submitted", "Nia", None, None, "Nia", True, "review"),
    ("submitted", "Nia", "Theo", None, "Ines", False, None),  # another reviewer is named
    ("submitted", "Nia", "Theo", None, "theo", False, "review"),
    ("returned", "Nia", "Ines", None, "Nia", False, "rework"),
    ("returned", "Nia", "Ines", None, "Ines", False, None),
    ("accepted", "Nia", "Ines", None, "Nia", False, "run"),
    ("accepted", "Nia", "Ines", None, "Ines", False, None),
    ("tested", "Nia", "Ines", "passes", "Theo", False, "promotion review"),
    ("tested", "Nia", "Ines", "passes", "Nia", False, None),
    ("tested", "Nia", "Ines", "passes", "Nia", True, "promotion review"),
    ("tested", "Nia", "Ines", "lost_to_costs", "Theo", False, None),
    ("tested", "Nia", "Ines", "lost_to_costs", "Nia", False, "rework or shelve"),
    ("draft", "Nia", None, None, "Nia", False, None),
    ("promoted", "Nia", "Ines", "passes", "Theo", False, None),
    ("shelved", "Nia", None, None, "Nia", False, None),
])
def test_whose_next_step_each_stage_waits_for(stage: str, author: str, named: str | None,
                                              verdict: str | None, user: str, alone: bool,
                                              expected: str | None) -> None:
    from hunchbook.store.settings import next_step

    assert next_step(stage, author, named, user, one_person_desk=alone,
                     last_verdict=verdict) == expected


def test_waiting_for_me_lists_the_ideas_whose_next_step_is_mine(cat: Catalogue) -> None:
    mine_to_review = _submitted(cat, by="Nia")
    named = _submitted(cat, by="Nia")
    cat.update_idea(named, by="Nia", reviewer="Theo")
    tested = _tested(cat)  # by Nia, verdict passes
    theos = _submitted(cat, by="Theo")
    cat.review(theos, reviewer="Ines", checklist={**ALL, "markets_named": False},
               decision="return", comments="Name the markets.")
    draft = cat.add_idea(title="d", hypothesis="h", submitted_by="Ines")
    assert {i.id for i in cat.list_ideas(waiting_for="Ines")} == {mine_to_review, tested}
    assert {i.id for i in cat.list_ideas(waiting_for="Theo")} == {mine_to_review, named, tested,
                                                                 theos}
    assert cat.list_ideas(waiting_for="Nia") == []
    assert [i.id for i in cat.list_ideas(waiting_for="Theo", stage="returned")] == [theos]
    assert len(cat.list_ideas(waiting_for="Theo", limit=2)) == 2
    assert cat.next_step(theos, "Theo") == "rework" and cat.next_step(draft, "Ines") is None
    cat.set_desk_setting("one_person_desk", True, by="Nia", reason="alone for a month")
    assert {i.id for i in cat.list_ideas(waiting_for="Nia")} == {mine_to_review, tested}


def test_reviews_made_before_four_eyes_and_imported_keep_what_they_were(
        cat: Catalogue, tmp_path) -> None:
    """A review by the author recorded on a one-person desk travels in a bundle to a desk of
    several, where it is kept as it was and still says so."""
    cat.set_desk_setting("one_person_desk", True, by="Nia", reason="alone")
    idea = _submitted(cat)
    cat.review(idea, reviewer="Nia", checklist=ALL, decision="accept", comments="")
    cat.export_bundle(idea, tmp_path / "b.zip")
    with Catalogue(tmp_path / "desk.sqlite") as other:
        report = other.import_bundle(tmp_path / "b.zip", by="Ines")
        assert other.reviews(report.idea_id)[-1].by_author
        assert other.desk_setting("one_person_desk") is False
