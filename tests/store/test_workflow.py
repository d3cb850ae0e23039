"""Ideas through their stages: transitions, reviews, edits and pre-registration."""

from __future__ import annotations

import hashlib

import pytest

from hunchbook.catalogue import CHECKLIST, TRANSITIONS, Catalogue
from hunchbook.store.errors import CatalogueError
from tests.store.helpers import RULES, accepted_idea, amended_run, run_args

SET = [{"fast": 5.0, "slow": 50.0}]


def test_a_new_idea_is_stored_as_given(cat: Catalogue) -> None:
    idea_id = cat.add_idea(title="  Copper carry ", hypothesis="Backwardation pays.",
                           rationale="Scarce inventory.\nHolders earn convenience yield.",
                           rationale_kind="risk_premium", source_kind="paper",
                           citation="A paper", link="https://example.invalid/p",
                           submitted_by="Nia", markets=["COPPER"], tags=["carry", "métaux"])
    idea = cat.idea(idea_id)
    assert (idea.title, idea.rationale_kind, idea.source_kind, idea.markets, idea.tags) == (
        "Copper carry", "risk_premium", "paper", ("COPPER",), ("carry", "métaux"))
    assert idea.stage == "draft" and idea.frozen_at is None and idea.trial_count == 0
    assert [e.kind for e in cat.journal(idea_id)] == ["stage"]


@pytest.mark.parametrize(("fields", "message"), [
    ({"title": ""}, "must not be empty"),
    ({"title": "a\nb"}, "line breaks"),
    ({"rationale_kind": "hunch"}, "expected one of risk_premium"),
    ({"source_kind": "dream"}, "expected one of own"),
    ({"markets": ["CORN", "CORN"]}, "listed twice"),
    ({"markets": ["CO RN"]}, "market name"),
    ({"markets": "CORN"}, "expected a list"),
    ({"tags": ["has space"]}, "without spaces"),
    ({"rationale": "x" * 100_000_000}, "longer than the limit"),
    ({"title": 42}, "expected text"),
    ({"stage": "tested"}, "starts as 'draft' or 'submitted'"),
])
def test_bad_idea_fields_are_refused_with_the_field_named(cat: Catalogue, fields: dict,
                                                          message: str) -> None:
    args = {"title": "t", "hypothesis": "h", "submitted_by": "Nia", **fields}
    with pytest.raises(CatalogueError, match=message):
        cat.add_idea(**args)
    assert cat.list_ideas() == []


def test_every_allowed_transition_is_journalled_with_who_and_why(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo")
    for stage, by in (("submitted", "Theo"), ("draft", "Theo"), ("shelved", "Ines"),
                      ("draft", "Ines")):
        cat.set_stage(idea, stage, by=by, reason=f"because {stage}")
    stages = [e for e in cat.journal(idea) if e.kind == "stage"][1:]
    assert [(e.by, e.text) for e in stages] == [
        ("Theo", "Stage draft -> submitted. because submitted"),
        ("Theo", "Stage submitted -> draft. because draft"),
        ("Ines", "Stage draft -> shelved. because shelved"),
        ("Ines", "Stage shelved -> draft. because draft")]


def test_a_disallowed_transition_is_refused_and_names_the_allowed_ones(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo")
    with pytest.raises(CatalogueError, match="from 'draft' an idea can move to: submitted, "
                                             "shelved"):
        cat.set_stage(idea, "promoted", by="Theo", reason="keen")
    assert cat.idea(idea).stage == "draft"
    assert "promoted" not in TRANSITIONS["draft"]


def test_tested_is_reached_only_by_recording_a_run(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    with pytest.raises(CatalogueError, match="record a run"):
        cat.set_stage(idea, "tested", by="Nia", reason="I looked at a chart")
    rev = cat.save_rules(idea, RULES, by="Nia")
    cat.record_run(idea, revision_id=rev.id, by="Nia", **run_args(SET, [0.3]))
    assert cat.idea(idea).stage == "tested"


def test_runs_are_refused_before_review(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo", stage="submitted")
    rev = cat.save_rules(idea, RULES, by="Theo")
    with pytest.raises(CatalogueError, match="waits for its review") as refused:
        cat.record_run(idea, revision_id=rev.id, by="Theo", **run_args(SET, [0.3]))
    # the idea is named once, where the error says what it is about
    assert str(refused.value).startswith(f"idea {idea}: it is 'submitted'")
    assert cat.runs(idea) == []


def test_review_accept_needs_every_checklist_item(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo", stage="submitted")
    answers = dict.fromkeys(CHECKLIST, True) | {"rationale_not_data_mined": False}
    with pytest.raises(CatalogueError, match="unticked checklist item"):
        cat.review(idea, reviewer="Ines", checklist=answers, decision="accept", comments="")
    with pytest.raises(CatalogueError, match="unanswered item"):
        cat.review(idea, reviewer="Ines", checklist={"markets_named": True},
                   decision="accept", comments="")
    assert cat.reviews(idea) == [] and cat.idea(idea).stage == "submitted"


def test_review_accept_needs_a_valid_rule_file(cat: Catalogue) -> None:
    """Accepting declares the parameter space, so the tool checks a rule file exists and
    parses, whatever the checklist says (common practice, no source: pre-registration)."""
    from hunchbook.starter import starter_rules

    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo", stage="submitted",
                        markets=["CORN"])
    ticked = dict.fromkeys(CHECKLIST, True)
    for rules, problem in ((None, "without a rule file"),
                           (starter_rules("t", ["CORN"]), "unedited starter template"),
                           (RULES.replace("mean(close, fast)", "mean(close, fats)"),
                            "does not parse.*fats")):
        if rules is not None:
            cat.save_rules(idea, rules, by="Theo")
        assert problem.split(".*")[0] in (cat.acceptance_problem(idea) or "")
        with pytest.raises(CatalogueError, match=problem):
            cat.review(idea, reviewer="Ines", checklist=ticked, decision="accept", comments="")
        assert cat.reviews(idea) == [] and cat.idea(idea).stage == "submitted"
    cat.save_rules(idea, RULES, by="Theo")
    assert cat.acceptance_problem(idea) is None
    cat.review(idea, reviewer="Ines", checklist=ticked, decision="accept", comments="")
    assert cat.idea(idea).stage == "accepted"


def test_review_return_records_comments_and_moves_the_stage(cat: Catalogue) -> None:
    idea = cat.add_idea(title="t", hypothesis="h", submitted_by="Theo", stage="submitted")
    answers = dict.fromkeys(CHECKLIST, True) | {"rationale_not_data_mined": False}
    with pytest.raises(CatalogueError, match="say in the comments"):
        cat.review(idea, reviewer="Ines", checklist=answers, decision="return", comments=" ")
    review_id = cat.review(idea, reviewer="Ines", checklist=answers, decision="return",
                           comments="A pattern is not a reason.")
    (review,) = cat.reviews(idea)
    assert (review.id, review.checklist, review.decision) == (review_id, answers, "return")
    stored = cat.idea(idea)
    assert (stored.stage, stored.reviewer) == ("returned", "Ines")
    kinds = [(e.kind, e.by) for e in cat.journal(idea)][-2:]
    assert kinds == [("review", "Ines"), ("stage", "Ines")]
    assert "A pattern is not a reason." in cat.journal(idea)[-1].text
    with pytest.raises(CatalogueError, match="only submitted ideas"):
        cat.review(idea, reviewer="Ines", checklist=answers, decision="return", comments="x")


def test_edits_are_journalled_with_old_and_new_values(cat: Catalogue) -> None:
    idea = cat.add_idea(title="Old title", hypothesis="h", submitted_by="Theo")
    updated = cat.update_idea(idea, by="Theo", title="New title", tags=["grains"])
    assert (updated.title, updated.tags) == ("New title", ("grains",))
    edit = cat.journal(idea)[-1]
    assert edit.kind == "edit"
    assert "title: 'Old title' -> 'New title'" in edit.text and "tags: (none) -> grains" in \
        edit.text
    assert cat.update_idea(idea, by="Theo", title="New title") == updated  # no change, no entry
    assert cat.journal(idea)[-1].id == edit.id
    with pytest.raises(CatalogueError, match="cannot edit stage"):
        cat.update_idea(idea, by="Theo", stage="promoted")


def test_the_first_run_freezes_rationale_markets_and_parameter_space(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    cat.update_idea(idea, by="Nia", rationale="Still editable before the first run.")
    assert cat.preregistrations(idea) == []
    cat.record_run(idea, revision_id=rev.id, by="Nia", **run_args(SET, [0.3]))
    (frozen,) = cat.preregistrations(idea)
    assert (frozen.version, frozen.rationale, frozen.markets, frozen.revision_id) == (
        1, "Still editable before the first run.", ("CORN", "SOYBEAN"), rev.id)
    assert frozen.parameter_space == {"fast": [5.0, 10.0], "slow": [50.0]}
    assert cat.idea(idea).frozen_at == frozen.frozen_at
    with pytest.raises(CatalogueError, match="frozen by pre-registration"):
        cat.update_idea(idea, by="Nia", markets=["CORN"])
    assert cat.idea(idea).markets == ("CORN", "SOYBEAN")
    # Non-frozen fields stay editable without a reason.
    cat.update_idea(idea, by="Nia", title="Grain trend, both beans and corn")


def test_changing_a_frozen_field_writes_a_new_version_and_keeps_counting(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    rev = cat.save_rules(idea, RULES, by="Nia")
    cat.record_run(idea, revision_id=rev.id, by="Nia",
                   **run_args([{"fast": 5.0, "slow": 50.0}, {"fast": 10.0, "slow": 50.0}],
                              [0.3, 0.4]))
    cat.update_idea(idea, by="Ines", reason="SOYBEAN data has a gap", markets=["CORN"])
    versions = cat.preregistrations(idea)
    assert [(p.version, p.markets) for p in versions] == [(1, ("CORN", "SOYBEAN")),
                                                          (2, ("CORN",))]
    assert versions[1].reason == "SOYBEAN data has a gap"
    entry = [e for e in cat.journal(idea) if e.kind == "preregistration"][-1]
    assert "version 2" in entry.text and "2 so far" in entry.text
    # A revision with a wider parameter space amends nothing when saved: its run waits for
    # an amendment with a person's reason, which writes version 3.
    wider = RULES.replace("fast = [5, 10]", "fast = [5, 10, 20]").replace(
        '"CORN", "SOYBEAN"', '"CORN"')  # the pre-registered markets are now CORN alone
    cat.save_rules(idea, wider, by="Nia")
    assert len(cat.preregistrations(idea)) == 2
    amended_run(cat, idea, wider, [{"fast": 20.0, "slow": 50.0}], [0.1],
                reason="A slower fast average is worth one more trial")
    assert cat.preregistrations(idea)[-1].parameter_space["fast"] == [5.0, 10.0, 20.0]
    assert cat.trial_count(idea) == 3
    assert len(cat.preregistrations(idea)) == 3


def test_saving_identical_rule_text_returns_the_latest_revision(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    first = cat.save_rules(idea, RULES, by="Nia")
    assert cat.save_rules(idea, RULES, by="Theo") == first
    second = cat.save_rules(idea, RULES + "# a comment\n", by="Nia")
    back = cat.save_rules(idea, RULES, by="Nia")  # a revert is a new revision
    assert [r.number for r in cat.revisions(idea)] == [1, 2, 3]
    assert (second.number, back.number, back.sha256) == (2, 3, first.sha256)
    assert first.sha256 == hashlib.sha256(RULES.encode("utf-8")).hexdigest()  # hashlib reference
    assert cat.latest_revision(idea) == back
    assert cat.revisions(idea)[0].text == RULES


def test_rule_text_must_be_toml(cat: Catalogue) -> None:
    idea = accepted_idea(cat)
    with pytest.raises(CatalogueError, match="not a valid TOML rule file.*line 2"):
        cat.save_rules(idea, 'name = "x"\nmarkets = ]\n', by="Nia")
    assert [r.text for r in cat.revisions(idea)] == [RULES]  # only the one saved before review
