"""The held-out years of an idea: the chosen set's figures after the holdout boundary, beside
the in-sample ones, and a test of whether the two agree.

Consistency test
----------------
Under iid normal daily P&L a per-period Sharpe ratio estimated over ``T`` days has the standard
error ``sqrt((1 + SR**2 / 2) / T)`` (Lo 2002). Taking the in-sample per-period Sharpe ratio
``SR_in`` as the true one, the held-out estimate over ``T_out`` days is about normal around
it, so ``z = (SR_out - SR_in) / sqrt((1 + SR_in**2 / 2) / T_out)`` and the one-sided p-value
``p = Z(z)`` (``Z`` the standard normal CDF) is the chance of a held-out Sharpe ratio this far
below the in-sample one. A small ``p`` (below :data:`ALPHA`) says the held-out years fall short
more than chance would explain. Two cautions, shown with the figures: the in-sample Sharpe
ratio is the best of the sets tried, so selection inflates it and some shortfall is expected;
and the test treats it as known, leaving out its own estimation error, so it leans towards
finding a shortfall.

Lo, A. W. (2002), "The Statistics of Sharpe Ratios", Financial Analysts Journal 58(4), 36-52.
The held-out PSR(0) is Bailey & López de Prado (2012) (:mod:`hunchbook.core.stats.psr`).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from dataclasses import dataclass
from typing import Any

import pandas as pd

from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError, RecordError
from hunchbook.core.metrics import max_drawdown
from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.core.plain import json_safe
from hunchbook.core.results import read_record
from hunchbook.core.stats.sharpe import moments, sharpe_ratio, sharpe_se_iid
from hunchbook.core.verdict import Check, warning

#: Largest p-value at which the held-out years are said to fall short of the in-sample ones.
ALPHA = 0.05


@dataclass(frozen=True)
class HoldoutFigures:
    """The chosen set on the held-out dates (from ``boundary`` on) beside its in-sample record.

    Sharpe ratios are annualised (x sqrt of :data:`~hunchbook.core.periods.DAYS_PER_YEAR`);
    ``in_sample_*`` come from the run's statistics (the days all its sets share);
    ``kurtosis`` is raw (normal = 3); ``psr`` is the held-out PSR(0); ``z`` and ``p_value``
    are the consistency test of the module docstring. NaN where undefined.
    """

    boundary: str
    first_date: str
    last_date: str
    days: int
    net_sharpe: float
    gross_sharpe: float
    net_total: float
    gross_total: float
    net_max_drawdown: float
    skew: float
    kurtosis: float
    psr: float
    in_sample_net_sharpe: float
    in_sample_days: int
    in_sample_sets: int
    z: float
    p_value: float
    alpha: float = ALPHA

    @property
    def falls_short(self) -> bool:
        """Whether the held-out Sharpe ratio falls short of the in-sample one more than chance
        would explain (``p_value`` below ``alpha``)."""
        return self.p_value < self.alpha

    def finding(self) -> str:
        """The test's result in plain words, with the selection caution."""
        p = "n/a" if math.isnan(self.p_value) else f"{self.p_value:.3f}"
        head = (f"The held-out years (net Sharpe {_ratio(self.net_sharpe)} a year) fall short "
                f"of the in-sample Sharpe ratio ({_ratio(self.in_sample_net_sharpe)}) more than "
                f"chance would explain (p = {p})."
                if self.falls_short else
                f"The held-out years (net Sharpe {_ratio(self.net_sharpe)} a year) are "
                f"consistent with the in-sample Sharpe ratio "
                f"({_ratio(self.in_sample_net_sharpe)}; p = {p}).")
        caution = (f" The in-sample figure is the best of {self.in_sample_sets} sets, inflated "
                   "by that selection, so some shortfall is expected."
                   if self.in_sample_sets > 1 else "")
        return head + caution

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON values (NaN and infinities become None)."""
        return json_safe(dataclasses.asdict(self))

    @classmethod
    def from_dict(cls, data: Any) -> HoldoutFigures:
        """Read a record written by :meth:`to_dict`, checking every field.

        Raises
        ------
        RecordError
            A field is missing or of the wrong kind.
        """
        figures: HoldoutFigures = read_record(cls, data, "holdout")
        try:
            dt.date.fromisoformat(figures.boundary)
        except ValueError:
            raise RecordError(f"expected a date YYYY-MM-DD, got {figures.boundary!r}",
                              field="holdout.boundary") from None
        return figures


def consistency_z(sr_out: float, sr_in: float, n_out: int) -> float:
    """``(SR_out - SR_in) / SE``: the held-out per-period Sharpe ratio against the in-sample
    one, in standard errors of a Sharpe estimate over ``n_out`` days at ``SR_in`` (Lo 2002,
    iid normal)."""
    return (sr_out - sr_in) / sharpe_se_iid(sr_in, n_out)


def held_out(daily: pd.DataFrame, boundary: dt.date) -> pd.DataFrame:
    """The rows of a daily table (date index) dated on or after the holdout boundary."""
    return daily[daily.index >= pd.Timestamp(boundary)]


def holdout_figures(daily: pd.DataFrame, *, boundary: dt.date, in_sample_sharpe: float,
                    in_sample_days: int, in_sample_sets: int,
                    periods: int = DAYS_PER_YEAR, alpha: float = ALPHA) -> HoldoutFigures:
    """The chosen set's figures on the held-out dates and the consistency test.

    Parameters
    ----------
    daily
        The chosen set's daily portfolio P&L over the whole history (date index; columns
        ``gross_pnl`` and ``net_pnl``); the rows dated on or after ``boundary`` are used.
    boundary
        The holdout boundary (the first held-out date).
    in_sample_sharpe, in_sample_days, in_sample_sets
        The run's annualised net Sharpe ratio, the days it was measured over and the number
        of parameter sets it was chosen from.

    Raises
    ------
    HunchbookError
        When fewer than two days lie on or after the boundary.
    """
    held = held_out(daily, boundary)
    if len(held) < 2:
        raise HunchbookError(f"the data hold {len(held)} day(s) on or after the holdout "
                             f"boundary {boundary.isoformat()}; at least 2 are needed")
    net = held["net_pnl"].to_numpy(dtype=float)
    gross = held["gross_pnl"].to_numpy(dtype=float)
    sr_out = sharpe_ratio(net, periods=1)
    sr_in = in_sample_sharpe / math.sqrt(periods)
    skew, kurt = moments(net)
    from hunchbook.core.stats.normal import normal_cdf
    from hunchbook.core.stats.psr import probabilistic_sharpe

    psr = (probabilistic_sharpe(sr_out, len(net), skew, kurt)
           if math.isfinite(sr_out) and math.isfinite(skew) else math.nan)
    z = (consistency_z(sr_out, sr_in, len(net))
         if math.isfinite(sr_out) and math.isfinite(sr_in) else math.nan)
    p_value = normal_cdf(z) if math.isfinite(z) else math.nan
    return HoldoutFigures(
        boundary=boundary.isoformat(), first_date=held.index[0].date().isoformat(),
        last_date=held.index[-1].date().isoformat(), days=len(net),
        net_sharpe=sharpe_ratio(net, periods), gross_sharpe=sharpe_ratio(gross, periods),
        net_total=float(net.sum()), gross_total=float(gross.sum()),
        net_max_drawdown=max_drawdown(net),
        skew=skew, kurtosis=kurt, psr=psr, in_sample_net_sharpe=in_sample_sharpe,
        in_sample_days=in_sample_days, in_sample_sets=in_sample_sets, z=z, p_value=p_value,
        alpha=alpha)


def holdout_seen_warning(at: str, by: str) -> Check:
    """The warning every verdict of an idea carries once its holdout was unlocked."""
    return warning("holdout", "Holdout", "seen", holdout_seen_note(at, by))


def holdout_seen_note(at: str, by: str) -> str:
    """The verdict reason every run of an idea carries once its holdout was unlocked
    (``at``: when, ISO 8601; ``by``: who)."""
    return (f"Holdout already seen: the held-out years were unlocked for this idea on "
            f"{formats.date(at)} by {by}, so they no longer test these rules out of sample.")


def _ratio(value: float) -> str:
    return "n/a" if math.isnan(value) else f"{value:.2f}"
