"""Shared builders for the store tests: an accepted idea, a rule file, a run's arguments."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.catalogue import CHECKLIST, Catalogue

RULES = """name = "Two averages"
markets = ["CORN", "SOYBEAN"]

[parameters]
fast = [5, 10]
slow = [50]

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"
"""


def accepted_idea(cat: Catalogue, title: str = "Grain trend", **fields: Any) -> int:
    """An idea taken through submission and an accepting review."""
    fields.setdefault("hypothesis", "Grain prices trend for weeks.")
    fields.setdefault("rationale", "Hedgers adjust slowly after crop reports.")
    fields.setdefault("markets", ["CORN", "SOYBEAN"])
    idea = cat.add_idea(title=title, submitted_by="Nia", stage="submitted", **fields)
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


def run_args(sets: list[dict[str, float]], sharpes: list[float | None], *,
             chosen: int = 0, outcome: str = "no_edge", seed: int = 1) -> dict[str, Any]:
    """Keyword arguments of ``Catalogue.record_run`` (apart from the idea, revision, by)."""
    return {
        "parameter_sets": sets,
        "data_fingerprint": "f" * 64,
        "engine_version": "0.1.0",
        "summary": {"sets": [{"params": s, "net_sharpe": x}
                             for s, x in zip(sets, sharpes, strict=True)]},
        "statistics": {"psr": 0.5, "n_days": 300},
        "verdict": {"outcome": outcome, "label": outcome.replace("_", " "),
                    "reasons": ["Gross result not significant."]},
        "chosen_params": sets[chosen],
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
