"""The invented demo desk's catalogue: 16 ideas across every stage, each with a real rule file,
journal notes, reviews and runs carrying verdicts of each kind. Every review is made by someone
other than the idea's author, the promoted idea through a promotion review; two families (the
ten-year note trend with a volatility filter, a variant of the slow rates trend; the faster
two-average trend, a variant of the promoted one) count their trials together.

Everything here is invented: the firm (Fernhollow Lane Partners, see :data:`DESK`), its people,
their ideas, citations, notes and dates. The runs are not: each is a quick run of the idea's
rule revision on the invented demo data (:func:`hunchbook.demo.write_demo_data`), made by
:func:`hunchbook.services.run_idea` exactly as Ctrl+R makes it (in-process runner, the default
SPA replications and seed), so re-running any stored run gives its figures again. The data are
built so that the runs tell the stories (see :mod:`hunchbook.demo.effects`); the notes that
quote a run's figures take them from the run. Each idea carries the tag ``invented-demo``.
"""

from __future__ import annotations

import datetime as dt
import heapq
import os
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

from hunchbook.catalogue import CHECKLIST, PROMOTION_CHECKLIST, Catalogue
from hunchbook.core.formats import pct
from hunchbook.core.runners import InProcess
from hunchbook.demo import rules as demo_rules
from hunchbook.demo.desk import DESK
from hunchbook.demo.rules import BOOK
from hunchbook.services import IdeaRun, run_idea, unlock_holdout
from hunchbook.store.errors import CatalogueError

INES, THEO, NIA = (p.name for p in DESK.people)
#: A story of one idea: yields the time (``YYYY-MM-DDTHH``) of its next step, then does it.
Story = Iterator[str]
#: Tag on every demo idea.
DEMO_TAG = "invented-demo"
#: Called after each recorded demo run with (runs done, runs in all).
BuildProgress = Callable[[int, int], None]
#: Runs the demo catalogue records (for progress).
DEMO_RUNS = 11
#: The demo desk's holdout boundary: the day after the invented history ends. Its stories are
#: told on the whole history; the held-out years are those still to come.
DEMO_HOLDOUT = dt.date(2025, 1, 2)


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


def build_demo_catalogue(path: str | os.PathLike[str], data_folder: str | os.PathLike[str],
                         progress: BuildProgress | None = None) -> Path:
    """Write the invented demo catalogue to a new file ``path`` and return it.

    Parameters
    ----------
    path
        The new catalogue file (refused when it exists).
    data_folder
        The invented demo data (:func:`hunchbook.demo.write_demo_data` with its defaults):
        the ideas' runs are real quick runs on it.
    progress
        Called after each recorded run with (runs done, :data:`DEMO_RUNS`).
    """
    path = Path(path)
    if path.exists():
        raise CatalogueError("file exists; the demo catalogue is written to a new file",
                             where=str(path))
    path.parent.mkdir(parents=True, exist_ok=True)
    clock = _Clock()
    with Catalogue(path, clock=clock) as cat, cat.transaction():
        _Builder(cat, clock, Path(data_folder), progress).build()
    return path


class _Builder:
    def __init__(self, cat: Catalogue, clock: _Clock, data: Path,
                 progress: BuildProgress | None) -> None:
        self.cat, self.clock, self.data, self.progress = cat, clock, data, progress
        self.done = 0
        self.slow_rates = 0  # the rates trend idea, parent of the volatility-filter variant
        self.trend = 0  # the promoted trend idea, parent of the faster variant

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

    def run(self, idea: int, by: str, text: str) -> IdeaRun:
        """A quick run of ``text`` on the demo data, recorded as Ctrl+R records it."""
        outcome = run_idea(self.cat, idea, text, self.data, by=by, runner=InProcess())
        self.done += 1
        if self.progress is not None:
            self.progress(self.done, DEMO_RUNS)
        return outcome

    def build(self) -> None:
        """Play every story in date order, one step at a time, so that the catalogue is
        written in the order a real desk would have written it."""
        stories = [self._desk(), self._trend(), self._breakout(), self._reversion(),
                   self._natgas(), self._gold(), self._slow_rates(), self._waiting(),
                   self._early(), self._trend_variant()]
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
                  "catalogue with its rationale, markets, rule file and parameter grid BEFORE "
                  "anyone runs it. Invented demo desk.", kind="decision")
        self.cat.set_holdout_boundary(
            DEMO_HOLDOUT, by=INES, reason="the last year of our history (2025) stays "
            "locked; each idea sees it once, when it has earned it")
        yield "2025-06-30T14"
        self.note(None, INES, "Half-year review: eight ideas run, one promoted; another that "
                  "passed was the promoted trend again. Too many grid points per idea in Q1; "
                  "keep grids to a handful of values.")

    def _trend(self) -> Story:
        yield "2025-01-08T09"
        i = self.idea(title="Two-average trend across the book",
                      hypothesis="Futures drift for months; a fast and a slow average tell the "
                                 "direction of the drift.",
                      rationale="News is absorbed slowly and hedgers adjust positions "
                                "gradually, so price moves persist for weeks to months.",
                      rationale_kind="behavioural", submitted_by=INES, markets=list(BOOK),
                      tags=["trend"], stage="submitted")
        self.trend = i
        yield "2025-01-08T11"
        self.rules(i, INES, demo_rules.TREND)
        yield "2025-01-09T16"
        self.review(i, "accept", "Textbook idea, clean grid. Go.", by=NIA)
        yield "2025-01-13T17"
        run = self.run(i, INES, demo_rules.TREND)
        yield "2025-01-14T14"
        self.note(i, INES, f"Net Sharpe {_net(run)} a year over {_years(run)} years with "
                  f"{_chosen(run)}; costs take {_cost_share(run)} of gross. The edge is spread "
                  "over several sectors, not one lucky market.")
        yield "2025-01-17T10"
        view = unlock_holdout(self.cat, i, self.data, by=INES)
        f = view.figures
        yield "2025-01-17T11"
        self.note(i, NIA, f"Held-out 2025: net Sharpe {f.net_sharpe:.2f} against "
                  f"{f.in_sample_net_sharpe:.2f} in sample. {f.finding()}")
        yield "2025-01-20T11"
        self.cat.review(i, reviewer=THEO, decision="promote",
                        checklist=dict.fromkeys(PROMOTION_CHECKLIST, True),
                        comments="Passes first pass and its locked year. First idea on the "
                                 "book, so nothing to be correlated with yet; costs are the "
                                 "desk's own schedule. Moving to full research.")

    def _breakout(self) -> Story:
        yield "2025-01-15T09"
        i = self.idea(title="Channel midpoint breakout",
                      hypothesis="A close above the midpoint of the recent high-low channel "
                                 "means buyers are in control.",
                      rationale="Breakouts attract late trend followers; the channel midpoint "
                                "is a memory-free form of the classic channel rule.",
                      rationale_kind="behavioural", source_kind="book",
                      citation="Invented: 'Channels and Crowds', desk reading list, ch. 4",
                      submitted_by=NIA, markets=list(demo_rules.BREAKOUT_MARKETS),
                      tags=["trend", "breakout"], stage="submitted")
        yield "2025-01-15T11"
        self.rules(i, NIA, demo_rules.BREAKOUT)
        yield "2025-01-17T16"
        self.review(i, "accept", "Fine. Keep the grid small.")
        yield "2025-01-21T17"
        run = self.run(i, NIA, demo_rules.BREAKOUT)
        yield "2025-01-22T14"
        self.note(i, NIA, f"{run.summary.verdict.label}: gross Sharpe {_gross(run)}, net "
                  f"{_net(run)}, best length {_chosen(run)}. Its neighbours are weaker; trying "
                  "every length from 10 to 200 to see whether a clearer edge shows up.")
        yield "2025-01-24T16"
        self.cat.amend_preregistration(
            i, by=NIA, rule_text=demo_rules.BREAKOUT_WIDE,
            reason="The best length sat near the short edge of the grid; every length from "
                   "10 to 200 shows whether the edge is real or one lucky length")
        yield "2025-01-24T17"
        wide = self.run(i, NIA, demo_rules.BREAKOUT_WIDE)
        yield "2025-01-27T14"
        entry = self.note(i, INES, f"Best length {_chosen(wide)}, net Sharpe {_net(wide)}, but "
                          f"after {_trials(wide)} lengths the deflated Sharpe is "
                          f"{_dsr(wide)}: {wide.summary.verdict.label.lower()}. Stop widening "
                          "the grid.", kind="decision")
        yield "2025-01-27T15"
        self.cat.correct_entry(entry, f"{_trials(wide)} distinct lengths, not 26: the six of "
                               "the first grid were run again under the second revision, but "
                               "the strategy was unchanged so they count once. Stop widening "
                               "the grid.", by=INES)

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
        yield "2025-02-04T10"
        self.rules(i, THEO, demo_rules.REVERSION)
        yield "2025-02-04T11"
        self.stage(i, "submitted", THEO, "Ready for review.")
        yield "2025-02-05T16"
        self.review(i, "accept", "Accepting, but watch the costs: this trades "
                    "every few days.")
        yield "2025-02-07T17"
        run = self.run(i, THEO, demo_rules.REVERSION)
        yield "2025-02-10T14"
        self.note(i, THEO, f"Gross Sharpe {_gross(run)}, net {_net(run)}: costs take "
                  f"{_cost_share(run)} of gross. The edge per trade is about what a round "
                  "trip costs.")

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
        yield "2025-02-12T10"
        self.rules(i, THEO, demo_rules.STORAGE)
        yield "2025-02-12T11"
        self.stage(i, "submitted", THEO, "Ready for review.")
        yield "2025-02-14T16"
        self.review(i, "accept", "Plausible mechanism; only one year of "
                    "storage-day history though.")
        yield "2025-02-18T17"
        run = self.run(i, THEO, demo_rules.STORAGE)
        yield "2025-02-19T14"
        self.note(i, INES, f"Promising, not proof: {run.summary.verdict.reasons[0]} Theo to "
                  "look for a longer storage-day calendar.", kind="decision")

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
        yield "2025-03-03T10"
        self.rules(i, INES, demo_rules.GOLD_RATES)
        yield "2025-03-03T11"
        self.stage(i, "submitted", INES, "For review.")
        yield "2025-03-04T16"
        self.review(i, "accept", "Nothing to add.", by=THEO)
        yield "2025-03-06T17"
        run = self.run(i, INES, demo_rules.GOLD_RATES)
        yield "2025-03-07T11"
        self.stage(i, "shelved", INES, f"No edge: gross Sharpe {_gross(run)} before costs. "
                   "Shelved; the paper's sample probably ended at a lucky time.")

    def _slow_rates(self) -> Story:
        yield "2025-03-10T09"
        i = self.idea(title="Rates trend, traded slowly",
                      hypothesis="TNOTE10 and EQIDX trends pay if trades are few.",
                      rationale="Rate cycles last years; slow central-bank moves make trends "
                                "persistent.", rationale_kind="risk_premium",
                      submitted_by=NIA, markets=["TNOTE10", "EQIDX"], tags=["trend", "costs"])
        self.slow_rates = i
        yield "2025-03-10T10"
        self.rules(i, NIA, demo_rules.RATES_DRAFT)
        yield "2025-03-10T11"
        self.stage(i, "submitted", NIA, "For review.")
        yield "2025-03-11T16"
        self.review(i, "accept", "OK. State the costs you assume in the rule file.")
        yield "2025-03-13T17"
        run = self.run(i, NIA, demo_rules.RATES_FAST)
        yield "2025-03-14T14"
        self.note(i, NIA, f"As the verdict says: gross Sharpe {_gross(run)}, net {_net(run)}. "
                  "Slower windows and a wider buffer next; the trial count keeps counting.")
        yield "2025-03-18T16"
        self.cat.amend_preregistration(
            i, by=NIA, rule_text=demo_rules.RATES_SLOW,
            reason="Costs ate the fast version; slower windows and a no-trade buffer trade "
                   "far less, as agreed with Ines")
        yield "2025-03-18T17"
        slow = self.run(i, NIA, demo_rules.RATES_SLOW)
        yield "2025-03-19T14"
        self.note(i, INES, f"{slow.summary.verdict.label}: net Sharpe {_net(slow)} with "
                  f"{_trials(slow)} trials counted (deflated Sharpe {_dsr(slow)}). Promotion "
                  "decision at the April meeting.", kind="decision")

    def _waiting(self) -> Story:
        for day, title, hyp, rat, kind, by, markets, tags, text in (
            ("2025-04-01", "Copper carry from the curve slope",
             "COPPER pays to hold when the curve is backwardated.",
             "Backwardation means scarce inventory; holders earn the convenience yield.",
             "risk_premium", NIA, ["COPPER"], ["carry", "metals"], demo_rules.COPPER_CARRY),
            ("2025-04-02", "Equity index month-end flow",
             "EQIDX rises in the last three days of the month.",
             "Pension and balanced funds rebalance at month end; the flow is predictable.",
             "structural", NIA, ["EQIDX"], ["calendar", "flow"], demo_rules.MONTH_END),
            ("2025-04-03", "Crude roll-yield tilt",
             "Long CRUDE in backwardation, short in contango.",
             "Producers pay a hedging premium to lock in prices.",
             "risk_premium", THEO, ["CRUDE"], ["carry", "energy"], demo_rules.CRUDE_CARRY),
        ):
            yield f"{day}T09"
            i = self.idea(title=title, hypothesis=hyp, rationale=rat, rationale_kind=kind,
                          submitted_by=by, markets=markets, tags=tags, stage="submitted")
            yield f"{day}T14"
            self.rules(i, by, text)
            self.note(i, by, "Rule file saved with the submission; grid kept small.")
            if markets == ["CRUDE"]:
                crude = i
        yield "2025-04-04T16"
        self.review(crude, "accept", "Accepted. Run it once the curve columns of the CRUDE "
                    "file are checked.")
        yield "2025-04-07T09"
        i = self.idea(title="Soybean crush-season seasonality",
                      hypothesis="SOYBEAN rises from September to November.",
                      rationale="It did in 11 of the last 14 years.", rationale_kind="other",
                      source_kind="web", submitted_by=THEO, markets=["SOYBEAN"],
                      tags=["seasonal"], stage="submitted")
        yield "2025-04-07T10"
        self.rules(i, THEO, demo_rules.SOY_SEASON)
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
        self.cat.set_variant_of(i, self.slow_rates, by=NIA, reason="The same rates trend with "
                                "a volatility filter on top: its trials count with the slow "
                                "version's.")
        yield "2025-04-10T10"
        self.rules(i, NIA, demo_rules.VOL_FILTER)
        yield "2025-04-11T16"
        self.review(i, "accept", "Accepted. Run it on the full history.")
        yield "2025-04-14T17"
        quarter = self.run(i, NIA, demo_rules.VOL_FILTER_QUARTER)
        yield "2025-04-15T10"
        self.note(i, INES, f"{quarter.summary.verdict.label}: {quarter.summary.verdict.reasons[0]} "
                  "A quarter tells us nothing either way, and it still counts as trials. Full "
                  "history next, as agreed.", kind="decision")
        yield "2025-04-16T17"
        full = self.run(i, NIA, demo_rules.VOL_FILTER)
        yield "2025-04-17T10"
        self.note(i, NIA, f"Full history: {full.summary.verdict.label.lower()}. "
                  f"{full.summary.verdict.reasons[0]}")

    def _early(self) -> Story:
        for day, title, hyp, by, markets, text in (
            ("2025-05-02", "Grain weather-premium fade",
             "CORN gives back its June weather premium in July.", THEO, ["CORN"],
             demo_rules.WEATHER),
            ("2025-05-05", "Volatility-scaled cross-market momentum",
             "Rank the eight markets by twelve-month return, scaled by volatility.", INES,
             list(BOOK), demo_rules.MOMENTUM),
            ("2025-05-06", "Equity index overnight gap fade",
             "Large overnight gaps in EQIDX close half-way by noon.", NIA, ["EQIDX"],
             demo_rules.GAP_FADE),
        ):
            yield f"{day}T09"
            i = self.idea(title=title, hypothesis=hyp, submitted_by=by, markets=markets)
            yield f"{day}T14"
            self.rules(i, by, text)
            self.note(i, by, "First notes and a first rule file; rationale still to be "
                      "written.")
        yield "2025-05-07T09"
        i = self.idea(title="Metals pair spread reversion",
                      hypothesis="The GOLD/COPPER ratio reverts to its one-year mean.",
                      submitted_by=THEO, markets=["GOLD", "COPPER"], tags=["pairs"])
        yield "2025-05-07T10"
        self.rules(i, THEO, demo_rules.METALS_PAIR)
        yield "2025-05-09T11"
        self.stage(i, "shelved", THEO, "No economic link that would pull the two "
                   "back together; dropping it before testing.")

    def _trend_variant(self) -> Story:
        yield "2025-05-12T09"
        i = self.idea(title="Two-average trend with faster averages",
                      hypothesis="The desk's trend idea turns late; shorter averages catch "
                                 "turns sooner and keep the edge.",
                      rationale="As for the two-average trend: news is absorbed slowly, so "
                                "moves persist; faster averages react to them earlier.",
                      rationale_kind="behavioural", submitted_by=THEO, markets=list(BOOK),
                      tags=["trend"], stage="submitted")
        self.cat.set_variant_of(i, self.trend, by=THEO, reason="The promoted trend idea with "
                                "faster averages: its trials count with that idea's.")
        yield "2025-05-12T10"
        self.rules(i, THEO, demo_rules.TREND_FASTER)
        yield "2025-05-13T16"
        self.review(i, "accept", "Accepted; see how it compares with the trend idea we "
                    "promoted.")
        yield "2025-05-15T17"
        run = self.run(i, THEO, demo_rules.TREND_FASTER)
        book = run.summary.book
        assert book is not None and book.ideas
        same = book.ideas[0]
        yield "2025-05-16T10"
        self.note(i, INES, f"{run.summary.verdict.label} on its own (net Sharpe {_net(run)}), "
                  f"but it is mostly the same bet as idea {same.idea_id}: correlation "
                  f"{same.correlation:.2f} over {same.days:,} common days. Added to the book "
                  f"at equal risk it would move the book's Sharpe ratio from "
                  f"{book.sharpe_before:.2f} to {book.sharpe_after:.2f}. Not promoting a "
                  "second copy of the trend.", kind="decision")
        yield "2025-05-16T11"
        self.cat.review(i, reviewer=INES, decision="decline",
                        checklist={**dict.fromkeys(PROMOTION_CHECKLIST, True),
                                   "holdout_seen": False},
                        comments=f"Mostly the same bet as idea {same.idea_id} (correlation "
                                 f"{same.correlation:.2f}); the faster lengths go into that "
                                 "idea's research instead.")


def _gross(run: IdeaRun) -> str:
    return f"{run.summary.statistics.gross.sharpe:.2f}"


def _net(run: IdeaRun) -> str:
    return f"{run.summary.statistics.net.sharpe:.2f}"


def _dsr(run: IdeaRun) -> str:
    return pct(run.summary.statistics.dsr)


def _trials(run: IdeaRun) -> int:
    return run.summary.statistics.n_trials


def _years(run: IdeaRun) -> str:
    return f"{run.summary.statistics.n_days / 252:.0f}"


def _chosen(run: IdeaRun) -> str:
    return ", ".join(f"{k} = {v:g}" for k, v in run.summary.chosen.params.items())


def _cost_share(run: IdeaRun) -> str:
    costs = run.summary.statistics.costs
    return pct(costs.cost_total / costs.gross_total) if costs.gross_total > 0 else "all"
