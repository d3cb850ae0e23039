"""The catalogue's fixed vocabularies: stages, kinds of rationale, source, journal entry, review."""

from __future__ import annotations

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

#: Kinds of rationale: a premium paid for bearing a risk, a behavioural bias, a structural or
#: flow effect (index rolls, hedging pressure), or something else.
RATIONALE_KINDS = ("risk_premium", "behavioural", "structural", "other")

#: Where an idea came from.
SOURCE_KINDS = ("own", "paper", "book", "web", "colleague")

#: Kinds of journal entry. ``stage``, ``run``, ``review``, ``edit`` and ``preregistration``
#: entries are written by the catalogue itself; ``correction`` entries amend an earlier entry.
ENTRY_KINDS = ("note", "decision", "review", "run", "stage", "edit", "preregistration",
               "correction")

#: Kinds a person may write directly with ``add_entry``.
USER_ENTRY_KINDS = ("note", "decision")

#: The review checklist: key -> the question a reviewer answers yes or no.
CHECKLIST: dict[str, str] = {
    "rationale_not_data_mined": "The rationale is economic or behavioural, not found by data "
                                "mining.",
    "markets_named": "The markets to trade are named.",
    "parameter_space_declared": "The parameter space is declared before testing.",
    "series_and_costs_stated": "The continuous-series method and the trading costs are stated.",
}

#: Review decisions and the stage each leads to.
DECISIONS = {"accept": "accepted", "return": "returned"}

#: Fields of an idea frozen by pre-registration at its first run.
FROZEN_FIELDS = ("rationale", "markets")


def sql_list(values: tuple[str, ...] | list[str]) -> str:
    """``('a', 'b')`` as SQL text for a CHECK constraint (values are our own constants)."""
    return "(" + ", ".join(f"'{v}'" for v in values) + ")"
