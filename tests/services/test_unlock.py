"""Quick runs before the boundary and the one unlocking of an idea's held-out years, end to end
on invented demo data: the default boundary, the figures recomputed with pandas and scipy
from an independent whole-history run, the journal, and every refusal."""

from __future__ import annotations

import math
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from hunchbook.api import Study
from hunchbook.catalogue import CHECKLIST, Catalogue
from hunchbook.core.errors import DataError, HunchbookError
from hunchbook.core.holdout import holdout_seen_note
from hunchbook.core.runners import InProcess
from hunchbook.core.sweep import SweepCancelled
from hunchbook.demo import write_demo_data
from hunchbook.services import holdout_plan, run_idea, unlock_holdout
from hunchbook.store.errors import CatalogueError
from tests.gui.run_records import ONE_PARAMETER_RULES

#: 2015-01-02 to 2019-12-31 spans 1,824 days (hand arithmetic: to 2019-01-02 are
#: 365 + 366 + 365 + 365 = 1,461 days, then 363 more); ceil(0.8 x 1824) = 1,460 days after the
#: start is 2019-01-01, a holiday of the demo calendars, so the first trading date on or after
#: it, 2019-01-02, is the default boundary.
BOUNDARY = "2019-01-02"


@pytest.fixture(scope="module")
def data(tmp_path_factory) -> Path:
    return write_demo_data(tmp_path_factory.mktemp("demo") / "data", start="2015-01-02",
                           end="2019-12-31")


@pytest.fixture
def cat(tmp_path: Path) -> Catalogue:
    catalogue = Catalogue(tmp_path / "desk.sqlite")
    yield catalogue
    catalogue.close()


def _idea(cat: Catalogue, text: str = ONE_PARAMETER_RULES) -> int:
    idea = cat.add_idea(title="Channel midpoint", hypothesis="Channels break.",
                        submitted_by="Nia", stage="submitted")
    cat.save_rules(idea, text, by="Nia")
    cat.review(idea, reviewer="Ines", checklist=dict.fromkeys(CHECKLIST, True),
               decision="accept", comments="Go.")
    return idea


def _run(cat: Catalogue, idea: int, data: Path, text: str = ONE_PARAMETER_RULES, by="Nia"):
    return run_idea(cat, idea, text, data, by=by, runner=InProcess(), spa_reps=50)


def test_the_first_run_sets_the_default_boundary_and_runs_before_it(cat, data) -> None:
    idea = _idea(cat)
    outcome = _run(cat, idea, data, by="Nia Okafor")
    setting = cat.holdout_boundary()
    assert setting is not None and setting.boundary.isoformat() == BOUNDARY
    assert setting.set_by == "Nia Okafor"
    entry = next(e for e in cat.journal(kind="decision") if e.idea_id is None)
    assert entry.text.startswith(f"Holdout boundary set to {BOUNDARY}: last 20 % of the "
                                 f"common history of {data} (2015-01-02 to 2019-12-31")
    assert entry.by == "Nia Okafor"
    stored = cat.run(outcome.run_id)
    assert stored.result.holdout_boundary == BOUNDARY == outcome.summary.holdout_boundary
    assert stored.daily_pnl.index.max() < pd.Timestamp(BOUNDARY)
    # held-out dates: the distinct dates from the boundary on in the rules' markets' files,
    # counted with pandas
    dates = pd.concat([pd.read_csv(data / f"{m}.csv", usecols=["date"])["date"]
                       for m in ("CRUDE", "GOLD")])
    assert outcome.held_out_days == dates[dates >= BOUNDARY].nunique()
    # a second run keeps the boundary and writes no new setting
    _run(cat, idea, data)
    assert len(cat.holdout_boundaries()) == 1


def test_unlocking_runs_the_chosen_set_once_on_the_held_out_years(cat, data) -> None:
    idea = _idea(cat)
    outcome = _run(cat, idea, data)
    run = cat.run(outcome.run_id)
    plan = holdout_plan(cat, idea, data)
    assert (plan.run_id, plan.revision_number, plan.chosen_params) == (
        run.id, run.revision_number, run.chosen_params)
    assert (plan.first_held.isoformat(), plan.held_out_days) == (BOUNDARY,
                                                                outcome.held_out_days)
    view = unlock_holdout(cat, idea, data, by="Ines Marwood")
    # the reference: the revision's chosen set run over the whole history by the API, the
    # held-out part selected with pandas, its figures computed with numpy and scipy
    whole = Study.from_text(cat.revision(run.revision_id).text, data).run_set(
        run.chosen_params).portfolio
    held = whole[whole.index >= BOUNDARY]
    net = held["net_pnl"].to_numpy()
    sr = net.mean() / net.std(ddof=1)
    f = view.figures
    assert (f.boundary, f.first_date, f.days) == (BOUNDARY, BOUNDARY, len(held))
    assert f.net_sharpe == pytest.approx(sr * math.sqrt(252), rel=1e-10)
    g3, g4 = stats.skew(net), stats.kurtosis(net, fisher=False)
    psr = stats.norm.cdf(sr * math.sqrt(len(net) - 1)
                         / math.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr**2))
    assert f.psr == pytest.approx(psr, rel=1e-9)  # Bailey & Lopez de Prado (2012)
    sr_in = run.result.statistics.net.sharpe / math.sqrt(252)
    z = (sr - sr_in) / math.sqrt((1 + sr_in**2 / 2) / len(net))  # Lo (2002) standard error
    assert f.p_value == pytest.approx(stats.norm.cdf(z), rel=1e-9)
    assert f.in_sample_net_sharpe == run.result.statistics.net.sharpe
    assert (f.in_sample_days, f.in_sample_sets) == (run.result.statistics.n_days,
                                                    len(run.result.sets))
    np.testing.assert_allclose(view.daily_pnl["net_pnl"].to_numpy(), net)
    # the journal says who saw it, when, which revision and which set
    entry = cat.journal(idea)[-1]
    assert (entry.kind, entry.by, entry.at) == ("run", "Ines Marwood", view.seen_at)
    chosen = ", ".join(f"{k}={v:g}" for k, v in run.chosen_params.items())
    assert f"Holdout unlocked by Ines Marwood: rule revision {run.revision_number}, chosen " \
           f"set {chosen} (of run {run.id})" in entry.text
    # once per idea
    with pytest.raises(CatalogueError, match=f"already unlocked by Ines Marwood on "
                                             f"{view.seen_at[:10]}"):
        unlock_holdout(cat, idea, data, by="Theo")
    # every later run carries the warning as its last verdict reason
    again = _run(cat, idea, data, text=ONE_PARAMETER_RULES.replace("[20, 40, 80, 120]",
                                                                   "[20, 40]"))
    assert again.summary.verdict.reasons[-1] == holdout_seen_note(view.seen_at, "Ines Marwood")
    assert cat.run(again.run_id).result.verdict.reasons[-1].startswith("Holdout already seen")
    assert cat.check() == []


def test_refusals_record_nothing(cat, data, tmp_path) -> None:
    idea = _idea(cat)
    cat.set_holdout_boundary(BOUNDARY, by="Ines", reason="as the default")
    with pytest.raises(CatalogueError, match="has no run yet"):
        unlock_holdout(cat, idea, data, by="Ines")
    _run(cat, idea, data)
    # other data before the boundary: not the run's
    changed = tmp_path / "changed"
    shutil.copytree(data, changed)
    crude = pd.read_csv(changed / "CRUDE.csv", dtype=str)
    crude.loc[0, "close"] = "1.00"
    crude.to_csv(changed / "CRUDE.csv", index=False)
    with pytest.raises(CatalogueError, match="the data before the boundary in .* are not "
                                             "those run 1 was made on"):
        unlock_holdout(cat, idea, changed, by="Ines")
    # cancelled before recording
    with pytest.raises(SweepCancelled, match="nothing was recorded"):
        unlock_holdout(cat, idea, data, by="Ines", cancel=lambda: True)
    assert cat.holdout_views() == []
    # a data folder that ends before the boundary holds nothing to unlock
    cat.set_holdout_boundary("2020-06-01", by="Ines", reason="later")
    _run(cat, idea, data)
    with pytest.raises(DataError, match="no date on or after the holdout boundary 2020-06-01"):
        holdout_plan(cat, idea, data)
    with pytest.raises(HunchbookError, match="0 day\\(s\\) on or after the holdout boundary"):
        unlock_holdout(cat, idea, data, by="Ines")
    assert cat.holdout_views() == []
    assert not any("Holdout unlocked" in e.text for e in cat.journal(idea))
