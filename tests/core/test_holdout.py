"""The held-out figures and the consistency test against outside references (Lo 2002 values of
the shared reference, numpy, pandas and scipy), and the "holdout already seen" reason."""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from hunchbook.core.errors import HunchbookError, RecordError
from hunchbook.core.holdout import (
    ALPHA,
    HoldoutFigures,
    consistency_z,
    held_out,
    holdout_figures,
    holdout_seen_note,
    holdout_seen_warning,
)
from hunchbook.core.stats import first_pass_statistics
from hunchbook.core.verdict import decide

BOUNDARY = dt.date(2021, 1, 4)


def _daily(seed: int, *, before: int = 300, after: int = 260, drift_after: float = 20.0,
           ) -> pd.DataFrame:
    """Random daily P&L on business days, ``before`` days before BOUNDARY and ``after`` from
    it on (test input only)."""
    rng = np.random.default_rng(seed)
    dates = pd.bdate_range(end=BOUNDARY - dt.timedelta(days=1), periods=before).append(
        pd.bdate_range(start=BOUNDARY, periods=after))
    gross = np.concatenate([rng.normal(50.0, 1_000.0, before),
                            rng.normal(drift_after, 1_000.0, after)])
    cost = rng.uniform(5.0, 15.0, before + after)
    return pd.DataFrame({"gross_pnl": gross, "cost": cost, "net_pnl": gross - cost},
                        index=pd.DatetimeIndex(dates, name="date"))


def test_consistency_z_uses_lo_2002_standard_error():
    # Lo (2002), FAJ 58(4): SE of a per-period Sharpe ratio = sqrt((1 + SR^2/2) / T);
    # shared reference s.3 [recomputed]: SR 0.5, T 60 -> 0.136931; SR 1.0, T 252 -> 0.077152
    assert consistency_z(0.3, 0.5, 60) == pytest.approx((0.3 - 0.5) / 0.136931, rel=1e-5)
    assert consistency_z(1.2, 1.0, 252) == pytest.approx((1.2 - 1.0) / 0.077152, rel=1e-5)


def test_figures_match_numpy_pandas_and_scipy():
    daily = _daily(3)
    sr_in_annual, n_in, n_sets = 1.4, 750, 12
    f = holdout_figures(daily, boundary=BOUNDARY, in_sample_sharpe=sr_in_annual,
                        in_sample_days=n_in, in_sample_sets=n_sets)
    held = daily[daily.index >= "2021-01-04"]  # reference: pandas date selection
    net, gross = held["net_pnl"].to_numpy(), held["gross_pnl"].to_numpy()
    assert (f.first_date, f.last_date, f.days) == (
        "2021-01-04", held.index[-1].strftime("%Y-%m-%d"), 260)
    # annualised Sharpe ratio: mean / sample sd x sqrt(252) (common practice, no source)
    assert f.net_sharpe == pytest.approx(net.mean() / net.std(ddof=1) * math.sqrt(252), rel=1e-12)
    assert f.gross_sharpe == pytest.approx(gross.mean() / gross.std(ddof=1) * math.sqrt(252),
                                           rel=1e-12)
    assert f.net_total == pytest.approx(net.sum(), rel=1e-12)
    # max drawdown from pandas' running maximum of the cumulative sum (start counts as 0)
    equity = pd.Series(np.concatenate(([0.0], net.cumsum())))
    assert f.net_max_drawdown == pytest.approx((equity.cummax() - equity).max(), rel=1e-12)
    # skew and raw kurtosis: scipy.stats (population moments, bias=True)
    assert f.skew == pytest.approx(stats.skew(net), rel=1e-10)
    assert f.kurtosis == pytest.approx(stats.kurtosis(net, fisher=False), rel=1e-10)
    # PSR(0): Bailey & Lopez de Prado (2012), written out with scipy's normal CDF
    sr = net.mean() / net.std(ddof=1)
    g3, g4 = stats.skew(net), stats.kurtosis(net, fisher=False)
    psr = stats.norm.cdf(sr * math.sqrt(len(net) - 1)
                         / math.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr**2))
    assert f.psr == pytest.approx(psr, rel=1e-10)
    # consistency: z = (SR_out - SR_in) / sqrt((1 + SR_in^2 / 2) / T_out) (Lo 2002), one-sided
    # lower p-value from scipy's normal CDF
    sr_in = sr_in_annual / math.sqrt(252)
    z = (sr - sr_in) / math.sqrt((1 + sr_in**2 / 2) / len(net))
    assert f.z == pytest.approx(z, rel=1e-10)
    assert f.p_value == pytest.approx(stats.norm.cdf(z), rel=1e-10)
    assert (f.in_sample_net_sharpe, f.in_sample_days, f.in_sample_sets, f.alpha) == (
        sr_in_annual, n_in, n_sets, ALPHA)


def test_rows_before_the_boundary_change_nothing():
    daily = _daily(4)
    changed = daily.copy()
    early = changed.index < "2021-01-04"
    changed.loc[early, ["gross_pnl", "net_pnl"]] *= -7.0
    kwargs = dict(boundary=BOUNDARY, in_sample_sharpe=0.8, in_sample_days=300, in_sample_sets=3)
    assert holdout_figures(daily, **kwargs) == holdout_figures(changed, **kwargs)
    assert held_out(daily, BOUNDARY).index[0] == pd.Timestamp("2021-01-04")


def test_the_finding_in_words():
    """A held-out year that loses steadily after an in-sample Sharpe ratio of 2 falls short;
    one drawn like the in-sample years does not (the p-value is Z(z), Lo 2002)."""
    kwargs = dict(boundary=BOUNDARY, in_sample_sharpe=2.0, in_sample_days=700, in_sample_sets=8)
    short = holdout_figures(_daily(5, drift_after=-150.0), **kwargs)
    assert short.falls_short and short.p_value < 0.05
    assert short.finding().startswith("The held-out years (net Sharpe ")
    assert "fall short of the in-sample Sharpe ratio (2.00) more than chance would explain " \
           f"(p = {short.p_value:.3f})" in short.finding()
    assert "best of 8 sets, inflated by that selection" in short.finding()
    alike = holdout_figures(_daily(6, drift_after=140.0), **kwargs)
    assert not alike.falls_short
    assert "are consistent with the in-sample Sharpe ratio (2.00; p = " in alike.finding()
    one_set = holdout_figures(_daily(6), **{**kwargs, "in_sample_sets": 1})
    assert "inflated" not in one_set.finding()


def test_too_few_held_out_days_are_refused():
    with pytest.raises(HunchbookError, match="1 day\\(s\\) on or after the holdout boundary "
                                             "2021-01-04; at least 2 are needed"):
        holdout_figures(_daily(7, after=1), boundary=BOUNDARY, in_sample_sharpe=1.0,
                        in_sample_days=300, in_sample_sets=1)


def test_record_round_trip_and_checks():
    f = holdout_figures(_daily(8), boundary=BOUNDARY, in_sample_sharpe=1.0, in_sample_days=300,
                        in_sample_sets=2)
    assert HoldoutFigures.from_dict(f.to_dict()) == f
    undefined = dataclasses.replace(f, psr=math.nan)
    data = undefined.to_dict()
    assert data["psr"] is None
    assert math.isnan(HoldoutFigures.from_dict(data).psr)
    with pytest.raises(RecordError, match="field 'holdout.boundary': expected a date"):
        HoldoutFigures.from_dict({**f.to_dict(), "boundary": "soon"})
    with pytest.raises(RecordError, match="field 'holdout.days': expected a whole number"):
        HoldoutFigures.from_dict({**f.to_dict(), "days": "many"})


def test_holdout_seen_is_the_last_reason_of_the_verdict():
    """decide() with the note gives the same verdict with the note appended last."""
    rng = np.random.default_rng(9)
    gross = rng.normal(80.0, 1_000.0, (600, 3))
    cost = np.full((600, 3), 10.0)
    statistics = first_pass_statistics(gross, cost, spa_reps=0)
    note = holdout_seen_note("2026-03-04T09:15:00.000000Z", "Ines Marwood")
    assert note == ("Holdout already seen: the held-out years were unlocked for this idea on "
                    "2026-03-04 by Ines Marwood, so they no longer test these rules out of "
                    "sample.")
    seen_warning = holdout_seen_warning("2026-03-04T09:15:00.000000Z", "Ines Marwood")
    plain, seen = decide(statistics), decide(statistics, warnings=(seen_warning,))
    assert seen.reasons == (*plain.reasons, note)
    assert (seen.outcome, seen.action, seen.numbers) == (plain.outcome, plain.action,
                                                         plain.numbers)
