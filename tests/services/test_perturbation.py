"""No figure, chart or statistic computed before unlocking depends on a price after the holdout
boundary: every price (and activity) cell of every row dated on or after the boundary is
changed, the events after it too, and everything a quick run records or shows is compared
byte for byte with what it was before the change."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import Study
from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.history import common_history, default_boundary
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.gui.workers import set_curves
from hunchbook.services import holdout_plan, run_idea
from tests.gui.run_records import ONE_PARAMETER_RULES, TWO_PARAMETER_RULES

#: Reads events and another market's series as well as the traded markets' prices.
EVENT_RULES = """\
name = "Storage day and rates"
markets = ["NATGAS", "GOLD"]
reads = ["TNOTE10"]

[parameters]
days = [1, 3]

[signal]
position = 'hold(sign(diff(close, 1)) * event("storage"), days) + \
sign(zscore(close["TNOTE10"], 20))'
"""

RULES = {"two": TWO_PARAMETER_RULES, "one": ONE_PARAMETER_RULES, "events": EVENT_RULES}
PRICE_CELLS = ("open", "high", "low", "close")
ACTIVITY_CELLS = ("volume", "open_interest")


def _perturb(folder: Path, boundary: dt.date, seed: int) -> int:
    """Change every price and activity cell of the rows dated on or after ``boundary`` in
    every price file (prices times a random factor between 0.5 and 1.5, each cell its own),
    and move, drop and add events after it; return how many rows changed."""
    rng = np.random.default_rng(seed)
    changed = 0
    for path in sorted(folder.glob("*.csv")):
        frame = pd.read_csv(path, dtype=str)
        if path.name == "events.csv":
            keep = frame[frame["date"] < boundary.isoformat()]
            extra = pd.DataFrame({"date": ["2019-06-03", "2019-06-04"],
                                  "event": ["storage", "storage"],
                                  "market": ["NATGAS", "GOLD"]})
            pd.concat([keep, extra]).to_csv(path, index=False)
            continue
        later = frame["date"] >= boundary.isoformat()
        n = int(later.sum())
        for column in PRICE_CELLS:
            values = frame.loc[later, column].astype(float) * rng.uniform(0.5, 1.5, n)
            frame.loc[later, column] = values.round(4).astype(str)
        for column in ACTIVITY_CELLS:
            values = frame.loc[later, column].astype(float) * rng.uniform(0.1, 3.0, n)
            frame.loc[later, column] = values.round().astype(int).astype(str)
        frame.to_csv(path, index=False)
        changed += n
    return changed


def _record(cat_path: Path, data: Path) -> dict[str, object]:
    """Quick runs of every rule file into a new catalogue, and what they record and show."""
    out: dict[str, object] = {}
    with Catalogue(cat_path) as cat:
        for name, text in RULES.items():
            idea = cat.add_idea(title=name, hypothesis="h", submitted_by="Nia",
                                stage="submitted")
            cat.save_rules(idea, text, by="Nia")
            cat.review(idea, reviewer="Ines", checklist=dict.fromkeys(CHECKLIST, True),
                       decision="accept", comments="Go.")
            outcome = run_idea(cat, idea, text, data, by="Nia", runner=InProcess(),
                               spa_reps=200)
            row = cat.db.execute("SELECT summary, statistics, verdict, daily_pnl, "
                                 "data_fingerprint, chosen_params, trial_count FROM runs "
                                 "WHERE id = ?", [outcome.run_id]).fetchone()
            boundary = outcome.summary.holdout_boundary
            # what the window computes before unlocking: a clicked set's curves
            params, curves, pick = set_curves(text, data,
                                              dict(outcome.summary.chosen.params), boundary,
                                              outcome.summary.statistics)
            plan = holdout_plan(cat, idea, data)
            out[name] = {
                "summary json": json.dumps(outcome.summary.to_dict(), allow_nan=False),
                "stored row": tuple(row),
                "stored daily P&L": cat.run(outcome.run_id).daily_pnl.to_csv(),
                "chosen set P&L table": outcome.chosen.pnl.to_csv(),
                "set curves": curves.to_csv(),
                "picked set's verdict": json.dumps(dataclasses.asdict(pick), allow_nan=False,
                                                   default=str),
                "held-out dates": (plan.first_held, plan.last_held, plan.held_out_days),
                "boundary": boundary,
            }
        out["setting"] = cat.holdout_boundary().boundary
    return out


def test_no_recorded_or_shown_figure_depends_on_a_price_after_the_boundary(
        tmp_path: Path) -> None:
    data = write_demo_data(tmp_path / "data", start="2015-01-02", end="2019-12-31")
    boundary = default_boundary(common_history(data))
    before = _record(tmp_path / "before.sqlite", data)
    whole_before = Study.from_text(TWO_PARAMETER_RULES, data).run_set(
        {"fast": 40.0, "slow": 120.0}).portfolio
    assert _perturb(data, boundary, seed=11) > 1000
    # the default boundary depends on dates only: the same after the change
    assert default_boundary(common_history(data)) == boundary == before["setting"]
    after = _record(tmp_path / "after.sqlite", data)
    assert after.keys() == before.keys()
    for name in RULES:
        for key, value in before[name].items():
            assert after[name][key] == value, f"{name}: {key} moved"
    # the change is real: the whole history (what only unlocking reads) differs after it.
    # Built over the whole history, even the earlier days move in their last digits (the
    # difference-adjusted series carry the later roll gaps as a constant): only cutting the
    # data before anything is built keeps them byte for byte.
    whole_after = Study.from_text(TWO_PARAMETER_RULES, data).run_set(
        {"fast": 40.0, "slow": 120.0}).portfolio
    early = whole_before.index < pd.Timestamp(boundary)
    np.testing.assert_allclose(whole_after[early]["net_pnl"], whole_before[early]["net_pnl"],
                               rtol=1e-9, atol=1e-6)
    assert not np.allclose(whole_after[~early]["net_pnl"], whole_before[~early]["net_pnl"])


@pytest.mark.parametrize("name", sorted(RULES))
def test_every_rule_file_parses(name: str, tmp_path: Path) -> None:
    """The rule files above are valid (so the comparison above compares real runs)."""
    data = write_demo_data(tmp_path / "data", start="2018-01-02", end="2018-12-31")
    study = Study.from_text(RULES[name], data)
    assert len(study.parameter_sets()) >= 2
