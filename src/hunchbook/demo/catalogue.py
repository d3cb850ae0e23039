"""The invented demo desk's catalogue: 15 ideas across every stage, with journal notes,
reviews, rule revisions and runs carrying verdicts of each kind.

Everything here is invented: the firm (Fernhollow Lane Partners, see :data:`DESK`), its people,
their ideas, citations, notes, dates and the stored run records (daily P&L drawn from a seeded
random generator and scaled to the stated Sharpe ratios; statistics, verdict and record made
from it by the engine's own code, as for a real run). Each idea carries the tag ``invented-demo``.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import heapq
import math
import os
from collections.abc import Iterator
from dataclasses import dataclass
from itertools import product
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.metrics import summarise
from hunchbook.core.results import build_run_summary
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import decide
from hunchbook.demo.desk import DESK
from hunchbook.store.errors import CatalogueError

INES, THEO, NIA = (p.name for p in DESK.people)
#: A story of one idea: yields the time (``YYYY-MM-DDTHH``) of its next step, then does it.
Story = Iterator[str]
#: Seed of the invented run records.
DEMO_SEED = 20_240
#: Tag on every demo idea.
DEMO_TAG = "invented-demo"
_ENGINE = "0.1.0 (invented demo record)"
_FINGERPRINT = hashlib.sha256(b"hunchbook invented demo data, seed 20240").hexdigest()
#: Bootstrap replications of the SPA test in the invented run records.
DEMO_SPA_REPS = 500


class _Clock:
    """A clock the builder sets to invented dates; each reading is one minute later."""

    def __init__(self) -> None:
        self.now = dt.datetime(2025, 1, 1, tzinfo=dt.UTC)

    def at(self, when: str) -> None:
        """Jump to ``YYYY-MM-DDTHH`` (never backwards: steps at the same hour stay in order)."""
        moment = dt.datetime.strptime(when, "%Y-%m-%dT%H").replace(tzinfo=dt.UTC)
        self.now = max(self.now, moment)

    def __call__(self) -> dt.datetime:
        self.now += dt.timedelta(minutes=1)
        return self.now


def _rules(name: str, description: str, markets: list[str], parameters: str, signal: str,
           extra: str = "") -> str:
    quoted = ", ".join(f'"{m}"' for m in markets)
    return (f"# Invented rule file of the Fernhollow Lane Partners demo desk (fictional).\n"
            f'name = "{name}"\ndescription = "{description}"\nmarkets = [{quoted}]\n\n'
            f"[parameters]\n{parameters}\n\n[signal]\nposition = \"{signal}\"\n\n"
            f'[roll]\ndays_before_expiry = 5\nadjust = "difference"\n{extra}')


@dataclass(frozen=True)
class _RunPlan:
    outcome: str  # the verdict the invented P&L is drawn to reach (checked by the tests)
    grid: dict[str, list[float]]
    gross_sr: float
    net_sr: float
    days: int
    chosen: int = 0
    repeats: int = 0  # sets already counted as trials by an earlier run of the same strategy


def build_demo_catalogue(path: str | os.PathLike[str]) -> Path:
    """Write the invented demo catalogue to a new file ``path`` and return it."""
    path = Path(path)
    if path.exists():
        raise CatalogueError("file exists; the demo catalogue is written to a new file",
                             where=str(path))
    path.parent.mkdir(parents=True, exist_ok=True)
    clock = _Clock()
    rng = np.random.default_rng(DEMO_SEED)
    with Catalogue(path, clock=clock) as cat, cat.transaction():
        _Builder(cat, clock, rng).build()
    return path


class _Builder:
    def __init__(self, cat: Catalogue, clock: _Clock, rng: np.random.Generator) -> None:
        self.cat, self.clock, self.rng = cat, clock, rng

    def idea(self, **fields: Any) -> int:
        fields["tags"] = [*fields.get("tags", ()), DEMO_TAG]
        return self.cat.add_idea(**fields)

    def note(self, idea: int | None, by: str, text: str, kind: str = "note") -> int:
        return self.cat.add_entry(idea_id=idea, kind=kind, text=text, by=by)

    def stage(self, idea: int, stage: str, by: str, reason: str) -> None:
        self.cat.set_stage(idea, stage, by=by, reason=reason)

    def review(self, idea: int, decision: str, comments: str,
               unmet: tuple[str, ...] = (), by: str = INES) -> None:
        self.cat.review(idea, reviewer=by, checklist={k: k not in unmet for k in CHECKLIST},
                        decision=decision, comments=comments)

    def rules(self, idea: int, by: str, text: str) -> int:
        return self.cat.save_rules(idea, text, by=by).id

    def run(self, idea: int, revision: int, by: str, plan: _RunPlan) -> int:
        record = _run_record(self.rng, plan, self.cat.trial_count(idea))
        return self.cat.record_run(idea, revision_id=revision, by=by, **record)

    def build(self) -> None:
        """Play every story in date order, one step at a time, so that the catalogue is
        written in the order a real desk would have written it."""
        stories = [self._desk(), self._trend(), self._breakout(), self._reversion(),
                   self._natgas(), self._gold(), self._roll_down(), self._waiting(),
                   self._early()]
        queue = [(next(story), k, story) for k, story in enumerate(stories)]
        heapq.heapify(queue)
        while queue:
            when, k, story = heapq.heappop(queue)
            self.clock.at(when)
            step = next(story, None)
            if step is not None:
                heapq.heappush(queue, (step, k, story))

    def _desk(self) -> Story:
        yield "2025-01-06T14"
        self.note(None, INES, "Desk rule from today: every idea goes into the "
                  "catalogue with its rationale, markets and parameter grid BEFORE anyone runs "
                  "it. Invented demo desk.", kind="decision")
        yield "2025-06-30T14"
        self.note(None, INES, "Half-year review: five ideas tested, one promoted. "
                  "Too many grid points per idea in Q1; keep grids to a handful of values.")

    def _trend(self) -> Story:
        yield "2025-01-08T09"
        i = self.idea(title="Two-average trend across the book",
                      hypothesis="Futures drift for months; a fast and a slow average tell the "
                                 "direction of the drift.",
                      rationale="News is absorbed slowly and hedgers adjust positions "
                                "gradually, so price moves persist for weeks to months.",
                      rationale_kind="behavioural", submitted_by=INES,
                      markets=["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN",
                               "TNOTE10", "EQIDX"], tags=["trend"], stage="submitted")
        yield "2025-01-09T16"
        self.review(i, "accept", "Textbook idea, clean grid. Go.", by=NIA)
        yield "2025-01-10T10"
        rev = self.rules(i, INES, _rules(
            "Two-average trend", "Sign of fast minus slow exponential average.",
            ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"],
            "fast = [8, 16, 32]\nslow = [64, 128]\nconstraint = \"fast < slow\"",
            "sign(ewm(close, fast) - ewm(close, slow))"))
        yield "2025-01-13T17"
        self.run(i, rev, INES, _RunPlan(
            "passes", {"fast": [8, 16, 32], "slow": [64, 128]}, 0.95, 0.82, 2600, chosen=2))
        yield "2025-01-14T14"
        self.note(i, INES, "Equity curve is smooth apart from 2019; gains spread "
                  "over energy, metals and rates. Costs about 14 % of gross.")
        yield "2025-01-20T11"
        self.stage(i, "promoted", INES, "Passes first pass; moving to full "
                   "research with out-of-sample years held back.")

    def _breakout(self) -> Story:
        yield "2025-01-15T09"
        i = self.idea(title="Channel midpoint breakout",
                      hypothesis="A close above the midpoint of the recent high-low channel "
                                 "means buyers are in control.",
                      rationale="Breakouts attract late trend followers; the channel midpoint "
                                "is a memory-free form of the classic channel rule.",
                      rationale_kind="behavioural", source_kind="book",
                      citation="Invented: 'Channels and Crowds', desk reading list, ch. 4",
                      submitted_by=NIA, markets=["CRUDE", "GOLD", "COPPER", "EQIDX"],
                      tags=["trend", "breakout"], stage="submitted")
        yield "2025-01-17T16"
        self.review(i, "accept", "Fine. Keep the grid small.")
        yield "2025-01-20T10"
        rev = self.rules(i, NIA, _rules(
            "Channel midpoint breakout", "Side of the n-bar channel midpoint.",
            ["CRUDE", "GOLD", "COPPER", "EQIDX"], "n = { start = 20, stop = 120, step = 20 }",
            "sign(close - (max(high, n) + min(low, n)) / 2)"))
        grid = {"n": [20.0, 40.0, 60.0, 80.0, 100.0, 120.0]}
        yield "2025-01-21T17"
        self.run(i, rev, NIA, _RunPlan(
            "selection_luck", grid, 0.66, 0.52, 2600, chosen=1))
        yield "2025-01-22T14"
        self.note(i, NIA, "Best length is 40 but 20 and 60 are much weaker. "
                  "Trying shorter channels in case the edge sits below 20.")
        yield "2025-01-23T10"
        rev2 = self.rules(i, NIA, _rules(
            "Channel midpoint breakout", "Side of the n-bar channel midpoint.",
            ["CRUDE", "GOLD", "COPPER", "EQIDX"], "n = { start = 5, stop = 30, step = 5 }",
            "sign(close - (max(high, n) + min(low, n)) / 2)"))
        yield "2025-01-24T17"
        self.run(i, rev2, NIA, _RunPlan(
            "selection_luck", {"n": [5.0, 10.0, 15.0, 20.0, 25.0, 30.0]}, 0.71, 0.55, 2600,
            chosen=2, repeats=1))
        yield "2025-01-27T14"
        entry = self.note(i, INES, "Twelve lengths tried now, and the trial count "
                          "says so. Stop widening the grid.", kind="decision")
        yield "2025-01-27T15"
        self.cat.correct_entry(entry, "Eleven distinct lengths (20 was run under both "
                               "revisions, but the strategy was unchanged so it counts once). "
                               "Stop widening the grid.", by=INES)

    def _reversion(self) -> Story:
        yield "2025-02-03T09"
        i = self.idea(title="Short-term reversion in grains and rates",
                      hypothesis="Sharp three-to-ten-day moves partly reverse.",
                      rationale="Liquidity providers who absorbed a sharp move are paid to "
                                "unwind it, so part of the move comes back.",
                      rationale_kind="behavioural", source_kind="web",
                      citation="Invented: a trading forum thread the desk read in January",
                      link="https://example.invalid/forum/reversion", submitted_by=THEO,
                      markets=["CORN", "SOYBEAN", "TNOTE10"], tags=["reversion"])
        yield "2025-02-04T11"
        self.stage(i, "submitted", THEO, "Ready for review.")
        yield "2025-02-05T16"
        self.review(i, "accept", "Accepting, but watch the costs: this trades "
                    "every few days.")
        yield "2025-02-06T10"
        rev = self.rules(i, THEO, _rules(
            "Short-term reversion", "Fade stretched closes.", ["CORN", "SOYBEAN", "TNOTE10"],
            "n = [3, 5, 10]\nentry = [0.5, 1.0]",
            "-sign(zscore(close, n)) if abs(zscore(close, n)) > entry else 0"))
        yield "2025-02-07T17"
        self.run(i, rev, THEO, _RunPlan(
            "lost_to_costs", {"n": [3, 5, 10], "entry": [0.5, 1.0]}, 0.92, 0.08, 2600))
        yield "2025-02-10T14"
        self.note(i, THEO, "Gross looks great, net is nothing. Each round trip "
                  "costs about a tick and a half; the edge per trade is about the same.")

    def _natgas(self) -> Story:
        yield "2025-02-12T09"
        i = self.idea(title="Natural gas storage-report drift",
                      hypothesis="NATGAS keeps drifting for two days in the direction of the "
                                 "weekly storage surprise.",
                      rationale="Hedgers who must adjust after a storage surprise spread their "
                                "orders over several sessions.",
                      rationale_kind="structural", source_kind="colleague",
                      citation="Invented: idea from a former colleague of Theo's",
                      submitted_by=THEO, markets=["NATGAS"], tags=["energy", "event"])
        yield "2025-02-12T11"
        self.stage(i, "submitted", THEO, "Ready for review.")
        yield "2025-02-14T16"
        self.review(i, "accept", "Plausible mechanism; only two years of "
                    "storage-day history though.")
        yield "2025-02-17T10"
        rev = self.rules(i, THEO, _rules(
            "Storage-report drift", "Two-day drift after the storage day.", ["NATGAS"],
            "hold = [1, 2, 3]", "sign(close - delay(close, hold))"))
        yield "2025-02-18T17"
        self.run(i, rev, THEO, _RunPlan(
            "too_little_data", {"hold": [1, 2, 3]}, 0.9, 0.78, 500))
        yield "2025-02-19T14"
        self.note(i, INES, "Promising but two years is not enough. Theo to look "
                  "for a longer storage-day calendar.", kind="decision")

    def _gold(self) -> Story:
        yield "2025-03-03T09"
        i = self.idea(title="Gold momentum after real-rate shocks",
                      hypothesis="After a large move in TNOTE10, GOLD follows for a month.",
                      rationale="Gold is priced off real rates; slow-moving holders rebalance "
                                "after a rate shock.",
                      rationale_kind="risk_premium", source_kind="paper",
                      citation="Invented: 'Real rates and metal drift', working paper, 2019",
                      submitted_by=INES, markets=["GOLD", "TNOTE10"], tags=["metals",
                                                                            "cross-asset"])
        yield "2025-03-03T11"
        self.stage(i, "submitted", INES, "For review.")
        yield "2025-03-04T16"
        self.review(i, "accept", "Nothing to add.", by=THEO)
        yield "2025-03-05T10"
        rev = self.rules(i, INES, _rules(
            "Gold after rate shocks", "Follow GOLD after a large TNOTE10 move.",
            ["GOLD", "TNOTE10"], "window = [10, 20]\nthreshold = [1.5, 2.0]",
            "sign(zscore(close, window)) if abs(zscore(close, window)) > threshold else 0"))
        yield "2025-03-06T17"
        self.run(i, rev, INES, _RunPlan(
            "no_edge", {"window": [10, 20], "threshold": [1.5, 2.0]}, 0.11, -0.09, 2600))
        yield "2025-03-07T11"
        self.stage(i, "shelved", INES, "No edge before costs. Shelved; the paper's "
                   "sample probably ended at a lucky time.")

    def _roll_down(self) -> Story:
        yield "2025-03-10T09"
        i = self.idea(title="Rates trend, traded slowly",
                      hypothesis="TNOTE10 and EQIDX trends pay if trades are few.",
                      rationale="Rate cycles last years; slow central-bank moves make trends "
                                "persistent.", rationale_kind="risk_premium",
                      submitted_by=NIA, markets=["TNOTE10", "EQIDX"], tags=["trend", "costs"])
        yield "2025-03-10T11"
        self.stage(i, "submitted", NIA, "For review.")
        yield "2025-03-11T16"
        self.review(i, "accept", "OK. State the costs you assume in the rule "
                    "file.")
        yield "2025-03-12T10"
        rev = self.rules(i, NIA, _rules(
            "Rates trend", "Price against its n-bar average.", ["TNOTE10", "EQIDX"],
            "n = [10, 20, 40]\nbuffer = [0.0, 0.5]",
            "sign(close - mean(close, n)) if abs(zscore(close, n)) > buffer else 0"))
        yield "2025-03-13T17"
        self.run(i, rev, NIA, _RunPlan(
            "lost_to_costs", {"n": [10, 20, 40], "buffer": [0.0, 0.5]}, 0.84, 0.21, 2600))
        yield "2025-03-14T14"
        self.note(i, NIA, "As the verdict says: slower windows and a wider "
                  "buffer. Changing the grid, and the trial count keeps counting.")
        yield "2025-03-17T10"
        rev2 = self.rules(i, NIA, _rules(
            "Rates trend, slow", "Price against its n-bar average, wide buffer.",
            ["TNOTE10", "EQIDX"], "n = [60, 120, 250]\nbuffer = [1.0, 1.5]",
            "sign(close - mean(close, n)) if abs(zscore(close, n)) > buffer else 0"))
        yield "2025-03-18T17"
        self.run(i, rev2, NIA, _RunPlan(
            "passes", {"n": [60, 120, 250], "buffer": [1.0, 1.5]}, 0.95, 0.86, 2600))
        yield "2025-03-19T14"
        self.note(i, INES, "Passes with 12 trials counted. Promotion decision at "
                  "the April meeting.", kind="decision")

    def _waiting(self) -> Story:
        for day, title, hyp, rat, kind, by, markets, tags in (
            ("2025-04-01", "Copper carry from the curve slope",
             "COPPER pays to hold when the curve is backwardated.",
             "Backwardation means scarce inventory; holders earn the convenience yield.",
             "risk_premium", NIA, ["COPPER"], ["carry", "metals"]),
            ("2025-04-02", "Equity index month-end flow",
             "EQIDX rises in the last three days of the month.",
             "Pension and balanced funds rebalance at month end; the flow is predictable.",
             "structural", NIA, ["EQIDX"], ["calendar", "flow"]),
            ("2025-04-03", "Crude roll-yield tilt",
             "Long CRUDE in backwardation, short in contango.",
             "Producers pay a hedging premium to lock in prices.",
             "risk_premium", THEO, ["CRUDE"], ["carry", "energy"]),
        ):
            yield f"{day}T09"
            i = self.idea(title=title, hypothesis=hyp, rationale=rat, rationale_kind=kind,
                          submitted_by=by, markets=markets, tags=tags, stage="submitted")
            yield f"{day}T14"
            self.note(i, by, "Rule file to follow once accepted; grid kept to six sets.")
        yield "2025-04-07T09"
        i = self.idea(title="Soybean crush-season seasonality",
                      hypothesis="SOYBEAN rises from September to November.",
                      rationale="It did in 11 of the last 14 years.", rationale_kind="other",
                      source_kind="web", submitted_by=THEO, markets=["SOYBEAN"],
                      tags=["seasonal"], stage="submitted")
        yield "2025-04-08T16"
        self.review(i, "return", "'It did in 11 of 14 years' is a pattern, not a "
                    "reason. Who is forced to buy in autumn, and why is it not arbitraged?",
                    unmet=("rationale_not_data_mined",))
        yield "2025-04-09T14"
        self.note(i, THEO, "Fair. Reading up on crush margins and harvest "
                  "hedging before resubmitting.")
        yield "2025-04-10T09"
        i = self.idea(title="Ten-year note trend with a volatility filter",
                      hypothesis="TNOTE10 trends are cleaner when volatility is low.",
                      rationale="In calm markets moves are driven by slow policy news rather "
                                "than by forced deleveraging.",
                      rationale_kind="behavioural", submitted_by=NIA, markets=["TNOTE10"],
                      tags=["trend", "rates"], stage="submitted")
        yield "2025-04-11T16"
        self.review(i, "accept", "Accepted. Run it on the full history.")

    def _early(self) -> Story:
        for day, title, hyp, by, markets in (
            ("2025-05-02", "Grain weather-premium fade",
             "CORN gives back its June weather premium in July.", THEO, ["CORN"]),
            ("2025-05-05", "Volatility-scaled cross-market momentum",
             "Rank the eight markets by twelve-month return, scaled by volatility.", INES,
             ["CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX"]),
            ("2025-05-06", "Equity index overnight gap fade",
             "Large overnight gaps in EQIDX close half-way by noon.", NIA, ["EQIDX"]),
        ):
            yield f"{day}T09"
            i = self.idea(title=title, hypothesis=hyp, submitted_by=by, markets=markets)
            yield f"{day}T14"
            self.note(i, by, "First notes only; rationale still to be written.")
        yield "2025-05-07T09"
        i = self.idea(title="Metals pair spread reversion",
                      hypothesis="The GOLD/COPPER ratio reverts to its one-year mean.",
                      submitted_by=THEO, markets=["GOLD", "COPPER"], tags=["pairs"])
        yield "2025-05-09T11"
        self.stage(i, "shelved", THEO, "No economic link that would pull the two "
                   "back together; dropping it before testing.")


def _run_record(rng: np.random.Generator, plan: _RunPlan, trials_before: int) -> dict[str, Any]:
    """A stored run for the plan, built by the engine's own statistics, verdict and record
    builder from invented daily P&L: the chosen set's scaled to the stated Sharpe ratios, the
    other sets' correlated with it and a little weaker."""
    names = list(plan.grid)
    sets = [dict(zip(names, map(float, combo), strict=True))
            for combo in product(*plan.grid.values())]
    daily = [_daily_pnl(rng, plan.days, plan.gross_sr - step, plan.net_sr - step, base)
             for step, base in _set_shapes(rng, plan, len(sets))]
    gross = np.column_stack([d["gross_pnl"].to_numpy() for d in daily])
    cost = np.column_stack([d["cost"].to_numpy() for d in daily])
    contracts = np.array([d["contracts_traded"].sum() for d in daily])
    stats = first_pass_statistics(
        gross, cost, grid_shape=tuple(len(v) for v in plan.grid.values()),
        n_trials=trials_before + len(sets) - plan.repeats, contracts_traded=contracts,
        spa_reps=DEMO_SPA_REPS, seed=DEMO_SEED)
    verdict = decide(stats)
    metrics = [{"portfolio": summarise(d)} for d in daily]
    summary = build_run_summary(
        name=f"Invented demo run ({', '.join(names)})", markets=(), currency="USD",
        data_folder="", parameter_sets=sets, set_metrics=metrics,
        chosen_metrics=metrics[stats.chosen], statistics=stats, verdict=verdict)
    return {"summary": summary, "data_fingerprint": _FINGERPRINT, "engine_version": _ENGINE,
            "daily_pnl": daily[stats.chosen][["gross_pnl", "cost", "net_pnl"]]}


def _set_shapes(rng: np.random.Generator, plan: _RunPlan,
                n_sets: int) -> Iterator[tuple[float, np.ndarray]]:
    """Per set: how much weaker than the chosen set it is, and its standard normal draws
    (the chosen set's, mixed with the set's own for the others)."""
    base = rng.standard_normal(plan.days)
    for k in range(n_sets):
        if k == plan.chosen:
            yield 0.0, base
        else:
            own = rng.standard_normal(plan.days)
            yield float(rng.uniform(0.1, 0.45)), 0.8 * base + 0.6 * own


def _daily_pnl(rng: np.random.Generator, days: int, gross_sr: float, net_sr: float,
               z: np.ndarray) -> pd.DataFrame:
    """Daily gross P&L with exactly the stated Sharpe ratio, contracts drawn around 6 a day
    and a cost per contract that brings the net Sharpe ratio near ``net_sr``."""
    dates = pd.bdate_range(end="2024-12-31", periods=days)
    z = (z - z.mean()) / z.std(ddof=1)
    sigma = 12_000.0
    gross = sigma * (z + gross_sr / math.sqrt(252))
    contracts = rng.poisson(6.0, days).astype(float)
    per_contract = sigma * (gross_sr - net_sr) / math.sqrt(252) / 6.0
    cost = contracts * per_contract
    return pd.DataFrame({"gross_pnl": gross, "cost": cost, "net_pnl": gross - cost,
                         "contracts_traded": contracts, "trades": (contracts > 0) * 1.0},
                        index=pd.DatetimeIndex(dates, name="date"))
