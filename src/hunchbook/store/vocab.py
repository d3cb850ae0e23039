"""The catalogue's fixed vocabularies: stages, kinds of rationale, source, journal entry, review
(and its checklists), desk settings and whose step each stage waits for."""

from __future__ import annotations

from dataclasses import dataclass

from hunchbook.core.labels import Vocabulary
from hunchbook.store.setting_kinds import AMOUNT, ON_OFF, DeskSettingSpec

#: Stages of an idea, in pipeline order: written down, sent for review, accepted for testing or
#: returned with comments, tested (at least one run recorded), promoted to full research or shelved.
STAGES = ("draft", "submitted", "accepted", "returned", "tested", "promoted", "shelved")

#: Allowed stage changes. ``tested`` is reached by recording a run (see ``store.runs``).
TRANSITIONS: dict[str, tuple[str, ...]] = {
    "draft": ("submitted", "shelved"),
    "submitted": ("accepted", "returned", "draft"),
    "returned": ("submitted", "draft", "shelved"),
    "accepted": ("tested", "returned", "shelved"),
    "tested": ("promoted", "shelved", "accepted"),
    "promoted": ("shelved",),
    "shelved": ("draft",),
}

#: Stages at which a run may be recorded (the idea has passed review).
RUNNABLE_STAGES = ("accepted", "tested", "promoted")

#: What an idea at each stage needs before it can be run (a quick run refused, an idea without
#: runs): one plain sentence per stage.
RUN_ADVICE: dict[str, str] = {
    "draft": "Write its rules and submit it for review; it can run once a reviewer accepts it.",
    "submitted": "It waits for its review: it can run once a reviewer accepts it.",
    "returned": "Rework it as the review asks and submit it again; it can run once accepted.",
    "accepted": "Run its rules: the first run freezes its markets and parameter space.",
    "tested": "Run it again, or send it to its promotion review.",
    "promoted": "It is promoted: runs go on being recorded against it.",
    "shelved": "Move it back to draft to work on it again.",
}

#: Kinds of rationale: a premium paid for bearing a risk, a behavioural bias, a structural or
#: flow effect (index rolls, hedging pressure), or something else.
RATIONALE_KINDS = ("risk_premium", "behavioural", "structural", "other")

#: Where an idea came from.
SOURCE_KINDS = ("own", "paper", "book", "web", "colleague")

#: The vocabularies as people read them (label or key accepted, label printed: see
#: :mod:`hunchbook.core.labels`). Stages read as their own plain words.
STAGE_WORDS = Vocabulary.of("stage", STAGES, {s: s for s in STAGES})
RATIONALE_WORDS = Vocabulary.of("kind of rationale", RATIONALE_KINDS,
                                {"structural": "Structural or flow"})
SOURCE_WORDS = Vocabulary.of("source", SOURCE_KINDS, {"own": "Own idea"})

#: How each editable field of an idea reads in the journal's sentences.
FIELD_LABELS = {"title": "Title", "hypothesis": "Hypothesis", "rationale": "Rationale",
                "rationale_kind": "Kind of rationale", "source_kind": "Source",
                "citation": "Citation", "link": "Link", "reviewer": "Reviewer",
                "markets": "Markets", "tags": "Tags"}

#: Kinds of journal entry. ``stage``, ``run``, ``review``, ``edit`` and ``preregistration``
#: entries are written by the catalogue itself; ``correction`` entries amend an earlier entry.
ENTRY_KINDS = ("note", "decision", "review", "run", "stage", "edit", "preregistration",
               "correction")

#: Kinds a person may write directly with ``add_entry``.
USER_ENTRY_KINDS = ("note", "decision")

#: Journal entry kinds as people read them (the window, the review pack, the command line).
ENTRY_WORDS = Vocabulary.of("journal entry kind", ENTRY_KINDS,
                            {"preregistration": "Pre-registration"})
USER_ENTRY_WORDS = Vocabulary.of("journal entry kind", USER_ENTRY_KINDS)

#: The review checklist: key -> the question a reviewer answers yes or no.
CHECKLIST: dict[str, str] = {
    "rationale_not_data_mined": "The rationale is economic or behavioural, not found by data "
                                "mining.",
    "markets_named": "The markets to trade are named.",
    "parameter_space_declared": "The parameter space is declared before testing.",
    "series_and_costs_stated": "The continuous-series method and the trading costs are stated.",
}

#: Decisions of a review of a submitted idea and the stage each leads to (the decisions the
#: first schema allowed; see :data:`REVIEW_KINDS` for every kind of review).
DECISIONS = {"accept": "accepted", "return": "returned"}

#: The promotion checklist: what a second person confirms before an idea is promoted.
PROMOTION_CHECKLIST: dict[str, str] = {
    "holdout_seen": "The held-out years were unlocked and their figures read.",
    "book_correlation_seen": "Its correlation with the ideas already on the book was looked at.",
    "costs_checked": "The trading costs assumed were checked against what the desk pays.",
}

#: Decisions of a promotion review and the stage each leads to (``None``: the stage stays).
PROMOTION_DECISIONS: dict[str, str | None] = {"promote": "promoted", "decline": None}


@dataclass(frozen=True)
class ReviewKind:
    """One kind of review: the stage an idea waits at for it, the checklist the reviewer
    answers, its decisions (decision -> the stage it leads to, ``None``: stays), the decision
    that needs every item ticked and those that need comments."""

    stage: str
    checklist: dict[str, str]
    decisions: dict[str, str | None]
    approves: str
    needs_comments: tuple[str, ...]


#: Every kind of review, by name. Both are reviews by someone other than the idea's author
#: (unless the desk setting ``one_person_desk`` is on), journalled as ``review`` entries.
REVIEW_KINDS: dict[str, ReviewKind] = {
    "idea": ReviewKind(stage="submitted", checklist=CHECKLIST, decisions=dict(DECISIONS),
                       approves="accept", needs_comments=("return",)),
    "promotion": ReviewKind(stage="tested", checklist=PROMOTION_CHECKLIST,
                            decisions=PROMOTION_DECISIONS, approves="promote",
                            needs_comments=("decline",)),
}

#: How each review decision reads (in the journal, the command line and the window).
DECISION_LABELS: dict[str, str] = {"accept": "Accepted for testing",
                                   "return": "Returned with comments", "promote": "Promoted",
                                   "decline": "Promotion declined"}

#: The decisions of an idea review as people read them (label or key accepted).
DECISION_WORDS = Vocabulary("decision", {k: DECISION_LABELS[k] for k in DECISIONS})

#: Every review decision, and the kind of review it belongs to.
REVIEW_DECISIONS: dict[str, str] = {decision: name for name, kind in REVIEW_KINDS.items()
                                    for decision in kind.decisions}

#: Desk settings: key -> kind (on/off or an amount: :mod:`hunchbook.store.setting_kinds`),
#: default and meaning. Each is set with a reason; the latest setting of a key holds.
DESK_SETTINGS: dict[str, DeskSettingSpec] = {
    "one_person_desk": DeskSettingSpec(
        ON_OFF, False, "One person may review their own ideas (each such review says so): for "
                       "a desk of one."),
    "capital": DeskSettingSpec(
        AMOUNT, None, "The capital, in the run currency, that returns and drawdowns are "
                      "measured in % of when a rule file's [sizing] gives none and the run is "
                      "given none."),
}

#: What a review by the idea's own author (on a one-person desk) says about itself.
BY_AUTHOR = "one-person desk: reviewed by the author"

#: Whose next step an idea waits for at each stage ("author", or "reviewer": anyone but the
#: author, or the author too on a one-person desk), and what that step is. A tested idea waits
#: for a promotion review only when its last verdict is :data:`PROMOTION_VERDICT`; with any
#: other verdict it waits for its author (:data:`TESTED_REWORK`). Ideas at other stages (draft,
#: promoted, shelved) wait for nobody.
NEXT_STEPS: dict[str, tuple[str, str]] = {
    "submitted": ("reviewer", "review"),
    "returned": ("author", "rework"),
    "accepted": ("author", "run"),
    "tested": ("reviewer", "promotion review"),
}

#: The verdict outcome (see :mod:`hunchbook.core.verdict`) after which a tested idea waits for
#: its promotion review.
PROMOTION_VERDICT = "passes"

#: The author's step for a tested idea whose last verdict is another: rework and run again, or
#: shelve it.
TESTED_REWORK = ("author", "rework or shelve")

#: Fields of an idea frozen by pre-registration at its first run.
FROZEN_FIELDS = ("rationale", "markets")


def sql_list(values: tuple[str, ...] | list[str]) -> str:
    """``('a', 'b')`` as SQL text for a CHECK constraint (values are our own constants)."""
    return "(" + ", ".join(f"'{v}'" for v in values) + ")"
