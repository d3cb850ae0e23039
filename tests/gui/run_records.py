"""Real recorded runs for the results-view and report tests (short invented demo data)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from hunchbook import services
from hunchbook.catalogue import Catalogue
from hunchbook.core.runners import InProcess
from hunchbook.demo import write_demo_data
from hunchbook.store.records import Idea, RunRecord

#: Idea title with markup in it: the view and the report must show it as text.
HOSTILE_TITLE = 'Crossover <script>alert("x")</script> & more'

#: Two parameters (3 x 4 grid); the comment has characters HTML must escape.
TWO_PARAMETER_RULES = """\
# Fast over slow moving average; fast < slow & both in bars
name = "Two-window crossover"
markets = ["CRUDE", "GOLD", "CORN"]

[parameters]
fast = [10, 20, 40]
slow = [60, 120, 180, 240]

[signal]
position = "sign(mean(close, fast) - mean(close, slow))"

[roll]
days_before_expiry = 5
adjust = "difference"

[sizing]
target_vol = 0.05
capital = 1_000_000
"""

#: One parameter, four values.
ONE_PARAMETER_RULES = """\
name = "Channel midpoint"
markets = ["CRUDE", "GOLD"]

[parameters]
n = [20, 40, 80, 120]

[signal]
position = "sign(close - (max(high, n) + min(low, n)) / 2)"

[roll]
days_before_expiry = 5
adjust = "difference"

[sizing]
target_vol = 0.05
capital = 1_000_000
"""


@dataclass(frozen=True)
class RecordedRuns:
    """The catalogue, the idea and its two recorded runs (read back from the store); ``one``
    lies outside the pre-registration frozen at the first run (allowed by an amendment)."""

    path: Path
    data: Path
    idea: Idea
    two: RunRecord
    one: RunRecord


def record_runs(folder: Path) -> RecordedRuns:
    """Write demo data, accept an idea and record a two- and a one-parameter run on it."""
    data = write_demo_data(folder / "data", start="2015-01-02", end="2019-12-31")
    path = folder / "catalogue.sqlite"
    with Catalogue(path) as cat:
        idea_id = cat.add_idea(title=HOSTILE_TITLE, hypothesis="Trends persist.",
                               rationale="Slow diffusion of information.",
                               rationale_kind="behavioural", submitted_by="Theo Brackwater",
                               markets=("CRUDE", "GOLD", "CORN"), stage="submitted")
        cat.save_rules(idea_id, TWO_PARAMETER_RULES, by="Theo Brackwater")
        cat.review(idea_id, reviewer="Ines Marwood", decision="accept", comments="Go.",
                   checklist={"rationale_not_data_mined": True, "markets_named": True,
                              "parameter_space_declared": True,
                              "series_and_costs_stated": True})
        two = services.run_idea(cat, idea_id, TWO_PARAMETER_RULES, data, by="Ines Marwood",
                                runner=InProcess(), spa_reps=100)
        # another parameter space: amended first with a reason, so the run is recorded with
        # the pre-registration warning
        cat.amend_preregistration(idea_id, by="Ines Marwood", rule_text=ONE_PARAMETER_RULES,
                                  reason="A one-parameter channel rule is simpler to judge")
        one = services.run_idea(cat, idea_id, ONE_PARAMETER_RULES, data, by="Ines Marwood",
                                runner=InProcess(), spa_reps=100)
        return RecordedRuns(path=path, data=Path(data), idea=cat.idea(idea_id),
                            two=cat.run(two.run_id), one=cat.run(one.run_id))
