"""The catalogue's records as frozen dataclasses (what the API returns; never live rows)."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, NamedTuple

if TYPE_CHECKING:
    import pandas as pd

    from hunchbook.core.holdout import HoldoutFigures
    from hunchbook.core.prereg import Scope
    from hunchbook.core.results import RunSummary


@dataclass(frozen=True)
class Idea:
    """One trading idea with everything written about it on its own row.

    ``frozen_at`` is when its first run froze the pre-registration (``None`` before);
    ``last_verdict``, ``last_net_sharpe`` come from the latest run; ``trial_count`` is the
    number of distinct trials ever run (see :func:`hunchbook.store.runs.trial_count`).
    """

    id: int
    uuid: str
    title: str
    hypothesis: str
    rationale: str
    rationale_kind: str
    source_kind: str
    citation: str | None
    link: str | None
    submitted_by: str
    reviewer: str | None
    markets: tuple[str, ...]
    tags: tuple[str, ...]
    stage: str
    created_at: str
    updated_at: str
    last_verdict: str | None = None
    last_net_sharpe: float | None = None
    trial_count: int = 0
    last_run_at: str | None = None
    frozen_at: str | None = None


class IdeaSummary(NamedTuple):
    """One line of an idea list (a named tuple: lists of ten thousand build quickly)."""

    id: int
    uuid: str
    title: str
    hypothesis: str
    stage: str
    submitted_by: str
    reviewer: str | None
    source_kind: str
    markets: tuple[str, ...]
    tags: tuple[str, ...]
    last_verdict: str | None
    last_net_sharpe: float | None
    trial_count: int
    updated_at: str


@dataclass(frozen=True)
class IdeaChoices:
    """What the ideas name, for the idea list's filters: markets, tags and authors, sorted."""

    markets: tuple[str, ...]
    tags: tuple[str, ...]
    authors: tuple[str, ...]


@dataclass(frozen=True)
class Revision:
    """One saved rule file, kept whole.

    ``strategy_key`` identifies the strategy apart from its parameter declaration, name and
    description (see :func:`hunchbook.store.revisions.strategy_key`); ``parameter_space`` is the
    rule file's ``[parameters]`` table.
    """

    id: int
    uuid: str
    idea_id: int
    number: int
    text: str
    sha256: str
    strategy_key: str
    parameter_space: dict[str, Any]
    saved_at: str
    saved_by: str


@dataclass(frozen=True)
class Preregistration:
    """What an idea committed to before testing: version 1 is frozen at the first run, each
    later version records a change made after that."""

    idea_id: int
    uuid: str
    version: int
    rationale: str
    markets: tuple[str, ...]
    parameter_space: dict[str, Any]
    revision_id: int
    frozen_at: str
    frozen_by: str
    reason: str


@dataclass(frozen=True)
class RunPreregistration:
    """A run against its idea's pre-registration: ``scope`` against version 1 (frozen at the
    first run; ``scope.within`` says whether the run lies within it), ``version`` the version
    in force when it was recorded (the run lay within that one), and ``finding`` the verdict
    warning's sentence when it lies outside version 1 (empty when within)."""

    version: int
    scope: Scope
    finding: str

    @property
    def within(self) -> bool:
        """Whether the run lies within the pre-registration frozen at the first run."""
        return self.scope.within


@dataclass(frozen=True)
class RunRecord:
    """One recorded run of an idea: its provenance and its results record (``result``; None
    for a run recorded by an earlier version in another shape). ``daily_pnl`` is decoded only
    by ``Catalogue.run``.

    ``trial_count`` is the idea's trial count just after this run was recorded;
    ``preregistration`` where it lies against the idea's pre-registration (None: not checked,
    an imported run whose idea had none).
    """

    id: int
    uuid: str
    idea_id: int
    revision_id: int
    revision_number: int
    parameter_sets: tuple[dict[str, float], ...]
    data_fingerprint: str
    engine_version: str
    result: RunSummary | None
    verdict_label: str
    chosen_params: dict[str, float]
    chosen_net_sharpe: float | None
    trial_count: int
    recorded_at: str
    recorded_by: str
    daily_pnl: pd.DataFrame | None = field(default=None, compare=False)
    preregistration: RunPreregistration | None = None

    @property
    def set_count(self) -> int:
        """How many parameter sets the run tried."""
        return len(self.parameter_sets)


@dataclass(frozen=True)
class DataRead:
    """What a run read: its id and uuid, its whole-data fingerprint and its per-market digests (None
    when not recorded, as for a run recorded before they existed)."""

    run_id: int
    uuid: str
    data_fingerprint: str
    markets: dict[str, str] | None


class RunLine(NamedTuple):
    """One line of a list of runs: the run, its idea (id and title), rule revision, when it
    was recorded and its verdict's label (read from the stored record without parsing it)."""

    id: int
    idea_id: int
    idea_title: str
    revision_number: int
    recorded_at: str
    verdict_label: str


@dataclass(frozen=True)
class Entry:
    """One journal entry. ``corrects`` points at the entry a correction amends;
    ``corrected_by`` at the latest correction of this entry, if any."""

    id: int
    uuid: str
    idea_id: int | None
    kind: str
    text: str
    by: str
    at: str
    corrects: int | None = None
    corrected_by: int | None = None


@dataclass(frozen=True)
class Review:
    """One review: the checklist answers, the decision and comments.

    ``kind`` is ``idea`` (a submitted idea accepted or returned) or ``promotion`` (a tested
    idea promoted or declined; see :data:`hunchbook.store.vocab.REVIEW_KINDS`);
    ``by_author`` is true when the reviewer is the idea's author (allowed only on a one-person
    desk, and said wherever the review is shown).
    """

    id: int
    uuid: str
    idea_id: int
    reviewer: str
    checklist: dict[str, bool]
    decision: str
    comments: str
    at: str
    kind: str = "idea"
    by_author: bool = False


@dataclass(frozen=True)
class ImportReport:
    """What importing a bundle did.

    ``added`` and ``already_present`` count records by kind (``revisions``,
    ``preregistrations``, ``journal``, ``reviews``, ``runs``, ``holdout``: the idea's
    unlocking of its held-out years, ``variant_link``: its link to the idea it is a variant
    of); ``conflicts`` lists every difference between the bundle and the catalogue that was
    kept as the catalogue had it, and a variant link that could not be made (with why).
    """

    idea_id: int
    created: bool
    added: dict[str, int]
    already_present: dict[str, int]
    conflicts: tuple[str, ...]


@dataclass(frozen=True)
class EarlierStrategy:
    """Trials an idea ran under one earlier strategy (a rule text whose signal, roll, sizing,
    costs or dates differ from the new one, or sets outside the new space): the latest rule
    text of that strategy, the parameter sets and each one's stored net Sharpe ratio."""

    rule_text: str
    parameter_sets: tuple[dict[str, float], ...]
    net_sharpes: tuple[float | None, ...]


@dataclass(frozen=True)
class TrialHistory:
    """An idea's trials as they will stand once a new space has run: the ``total`` count and the
    trials run before, outside the new space, grouped by strategy."""

    total: int
    earlier: tuple[EarlierStrategy, ...]


@dataclass(frozen=True)
class HoldoutBoundary:
    """One setting of the catalogue's holdout boundary: runs see only the dates before
    ``boundary``; who set it, when and why. The latest setting holds."""

    id: int
    uuid: str
    boundary: dt.date
    reason: str
    set_by: str
    set_at: str


@dataclass(frozen=True)
class HoldoutView:
    """An idea's one unlocking of its held-out years.

    ``run_id`` is the in-sample run it continues (on rule revision ``revision_number``, with
    the chosen set ``chosen_params``); ``figures`` the held-out figures beside the in-sample
    ones; ``data_fingerprint`` that of the whole data read; ``daily_pnl`` the chosen set's
    daily P&L on the held-out dates (decoded by ``Catalogue.holdout_view``).
    """

    id: int
    uuid: str
    idea_id: int
    revision_id: int
    revision_number: int
    run_id: int
    chosen_params: dict[str, float]
    boundary: dt.date
    data_fingerprint: str
    engine_version: str
    figures: HoldoutFigures
    seen_by: str
    seen_at: str
    daily_pnl: pd.DataFrame | None = field(default=None, compare=False)


@dataclass(frozen=True)
class VariantLink:
    """An idea recorded as a variant of another (its parent): who linked them, when and why.
    Written once per idea and never undone, so that a family's trials keep counting."""

    id: int
    uuid: str
    idea_id: int
    parent_id: int
    reason: str
    set_by: str
    set_at: str


@dataclass(frozen=True)
class FamilyMember:
    """One idea of a family tree: its id, title, stage, author, last verdict (outcome key, or
    None before a run), the trials run under this idea itself (``own_trials``), the link to its
    parent (None for the root) and its variants (``children``, oldest first)."""

    id: int
    title: str
    stage: str
    submitted_by: str
    last_verdict: str | None
    own_trials: int
    link: VariantLink | None
    children: tuple[FamilyMember, ...] = ()


@dataclass(frozen=True)
class Family:
    """An idea's family: the tree of the ideas linked as variants, from its ``root``.

    ``idea_id`` is the idea asked about; ``trial_count`` the distinct trials of every member
    together, which each member's deflated Sharpe counts (a lone idea is a family of one).
    """

    idea_id: int
    root: FamilyMember
    trial_count: int

    def members(self) -> list[tuple[int, FamilyMember]]:
        """Every member with its depth in the tree (the root at 0), depth first, variants
        oldest first."""
        out: list[tuple[int, FamilyMember]] = []
        stack = [(0, self.root)]
        while stack:
            depth, member = stack.pop()
            out.append((depth, member))
            stack.extend((depth + 1, child) for child in reversed(member.children))
        return out

    def __len__(self) -> int:
        return len(self.members())


@dataclass(frozen=True)
class DeskSetting:
    """One setting of a desk rule (see :data:`hunchbook.store.vocab.DESK_SETTINGS`): who set
    it, when and why. ``value`` as its kind reads it (on/off a bool; an amount a float, None
    when unset). The latest setting of each key holds."""

    id: int
    uuid: str
    key: str
    value: bool | float | None
    reason: str
    set_by: str
    set_at: str
