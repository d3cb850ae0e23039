"""Shared builders for the store tests: an accepted idea, a rule file, a run's arguments."""

from __future__ import annotations

import zipfile
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.metrics import summarise
from hunchbook.core.results import ChosenSet, Performance, PnlFigures, RunSummary, SetSummary
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import Check, Verdict

RULES = """name = "Two averages"
markets = ["CORN", "SOYBEAN"]

[parameters]
fast = [5, 10]
slow = [50]

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
"""


def accepted_idea(cat: Catalogue, title: str = "Grain trend", **fields: Any) -> int:
    """An idea taken through submission, its rule file (:data:`RULES`) and an accepting
    review."""
    fields.setdefault("hypothesis", "Grain prices trend for weeks.")
    fields.setdefault("rationale", "Hedgers adjust slowly after crop reports.")
    fields.setdefault("markets", ["CORN", "SOYBEAN"])
    idea = cat.add_idea(title=title, submitted_by="Nia", stage="submitted", **fields)
    cat.save_rules(idea, RULES, by="Nia")
    cat.review(idea, reviewer="Ines", checklist=dict.fromkeys(CHECKLIST, True),
               decision="accept", comments="Go ahead.")
    return idea


def daily_pnl(days: int = 300, seed: int = 1) -> pd.DataFrame:
    """Random daily P&L with the documented columns and a business-day index."""
    rng = np.random.default_rng(seed)
    gross = rng.normal(100.0, 1_000.0, days)
    cost = rng.uniform(5.0, 20.0, days)
    return pd.DataFrame({"gross_pnl": gross, "cost": cost, "net_pnl": gross - cost},
                        index=pd.bdate_range("2021-01-04", periods=days, name="date"))


def run_summary(sets: list[dict[str, float]], sharpes: list[float | None], *,
                chosen: int = 0, outcome: str = "no_edge", seed: int = 1,
                warnings: Sequence[Check] = ()) -> RunSummary:
    """A results record for the store tests: statistics computed by the engine's code on
    generated P&L (one column per set, the chosen one being ``daily_pnl(seed=seed)``), the
    given per-set net Sharpe ratios and a verdict with the given outcome (and ``warnings``
    among its checks and reasons)."""
    daily = daily_pnl(seed=seed)
    rng = np.random.default_rng(seed + 100)
    gross = np.column_stack([daily["gross_pnl"].to_numpy() if k == chosen
                             else rng.normal(50.0, 1_000.0, len(daily))
                             for k in range(len(sets))])
    cost = np.column_stack([daily["cost"].to_numpy()] * len(sets))
    stats = first_pass_statistics(gross, cost, chosen=chosen, spa_reps=0)
    nan = float("nan")
    set_summaries = tuple(SetSummary(
        params=dict(s), gross_sharpe=nan, net_sharpe=nan if x is None else float(x),
        gross_total=nan, net_total=nan, net_max_drawdown=nan, trades_per_year=nan,
        contracts_per_year=nan, cost_total=nan, break_even_cost=nan)
        for s, x in zip(sets, sharpes, strict=True))
    frame = daily.assign(contracts_traded=2.0, trades=1.0)
    performance = summarise(frame)
    performance = Performance(**{**performance, "gross": PnlFigures(**performance["gross"]),
                                 "net": PnlFigures(**performance["net"])})
    verdict = Verdict(outcome=outcome, label=outcome.replace("_", " "), action="Do something.",
                      reasons=("Gross result not significant.", *(w.finding for w in warnings)),
                      numbers={}, checks=tuple(warnings))
    return RunSummary(name="Two averages", markets=("CORN", "SOYBEAN"), currency="USD",
                      data_folder="", sets=set_summaries,
                      chosen=ChosenSet(params=dict(sets[chosen]) if sets else {},
                                       performance=performance, markets=()),
                      statistics=stats, verdict=verdict)


def run_args(sets: list[dict[str, float]], sharpes: list[float | None], *,
             chosen: int = 0, outcome: str = "no_edge", seed: int = 1,
             warnings: Sequence[Check] = ()) -> dict[str, Any]:
    """Keyword arguments of ``Catalogue.record_run`` (apart from the idea, revision, by)."""
    return {
        "summary": run_summary(sets, sharpes, chosen=chosen, outcome=outcome, seed=seed,
                               warnings=warnings),
        "data_fingerprint": "f" * 64,
        "engine_version": "0.1.0",
        "daily_pnl": daily_pnl(seed=seed),
    }


def table_counts(cat: Catalogue) -> dict[str, int]:
    """Row count of every record table (to show that nothing was written)."""
    return {t: cat.db.execute(f"SELECT count(*) FROM {t}").fetchone()[0]
            for t in ("ideas", "rule_revisions", "preregistrations", "runs", "trials",
                      "journal", "reviews", "imports")}


def desk(path: Path) -> Path:
    """A catalogue file as a desk has it: an accepted idea with a rule revision, a run (which
    pre-registers it) and a note, written through the API and closed."""
    with Catalogue(path) as cat:
        idea = accepted_idea(cat)
        revision = cat.save_rules(idea, RULES, by="Nia")
        cat.record_run(idea, revision_id=revision.id, by="Nia",
                       **run_args([{"fast": 5.0, "slow": 50.0}], [0.4]))
        cat.add_entry(idea_id=idea, kind="note", text="Roll dates checked.", by="Theo")
    return path


def bundle_members(path: Path) -> dict[str, bytes]:
    """Every member of a bundle file, by name."""
    with zipfile.ZipFile(path) as archive:
        return {n: archive.read(n) for n in archive.namelist()}


def write_bundle(path: Path, members: dict[str, bytes]) -> Path:
    """A bundle file holding exactly these members (for hand-made, hostile bundles)."""
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in members.items():
            archive.writestr(name, data)
    return path


def promote(cat: Catalogue, idea_id: int, *, reviewer: str = "Ines") -> int:
    """Promote a tested idea through the promotion review, by someone other than its author,
    every item ticked (the held-out years ticked as seen only when they were unlocked)."""
    from hunchbook.catalogue import PROMOTION_CHECKLIST

    checklist = {**dict.fromkeys(PROMOTION_CHECKLIST, True),
                 "holdout_seen": cat.holdout_view(idea_id) is not None}
    return cat.review(idea_id, reviewer=reviewer, checklist=checklist, decision="promote",
                      comments="Passes.")


def amended_run(cat: Catalogue, idea: int, rule_text: str, sets: list[dict[str, float]],
                sharpes: list[float | None], *, reason: str, by: str = "Nia",
                **kwargs: Any) -> int:
    """Amend the idea's pre-registration to the space of ``rule_text`` with ``reason``, then
    record a run of these sets with the warning the catalogue asks for."""
    cat.amend_preregistration(idea, by=by, reason=reason, rule_text=rule_text)
    revision = cat.latest_revision(idea)
    assert revision is not None and revision.text == rule_text
    warnings = cat.check_preregistration(idea, rule_text, sets)
    return cat.record_run(idea, revision_id=revision.id, by=by,
                          **run_args(sets, sharpes, warnings=warnings, **kwargs))
