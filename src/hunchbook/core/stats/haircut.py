"""Sharpe ratio haircut for multiple testing (Harvey & Liu 2015).

A desk that tests M ideas and promotes the best will promote some by luck. Harvey & Liu turn
an idea's annualised Sharpe ratio into a p-value, adjust that p-value for the M tests, and
turn the adjusted p-value back into a *haircut* Sharpe ratio:

1. ``t = SR_a * sqrt(years)`` over ``N = 12 * years`` months of data;
2. ``p_S = 2 * (1 - F_t(|t|; N - 1))``, two-sided, Student t with ``N - 1`` degrees of freedom;
3. ``p_M`` by Bonferroni ``min(M * p_S, 1)``, Holm (1979) or Benjamini-Hochberg-Yekutieli
   (Benjamini & Yekutieli 2001), see :func:`adjust_p_values`;
4. ``HSR_a = F_t^-1(1 - p_M / 2; N - 1) / sqrt(years)``; haircut ``(SR_a - HSR_a) / SR_a``.

Holm and BHY need the other tests' p-values. When they are known (a desk knows every idea it
tested) they are used as they are and the idea is one of M tests. When only M is known, the
others are drawn from the model of Harvey, Liu & Zhu (2016) as the authors' code does: M other
tests besides the idea (so Holm and BHY see M + 1), two-sided normal p-values, the idea's
adjusted p-value taken in each of ``draws`` draws and the median used. Unknown p-values among
known ones are drawn the same way.

Harvey, C.R. & Liu, Y. (2015), "Backtesting", Journal of Portfolio Management 42(1), 13-28.
Harvey, C.R., Liu, Y. & Zhu, H. (2016), "... and the Cross-Section of Expected Returns",
Review of Financial Studies 29(1), 5-68. Holm, S. (1979), Scandinavian Journal of Statistics
6(2), 65-70. Benjamini, Y. & Yekutieli, D. (2001), Annals of Statistics 29(4), 1165-1188.
See docs/statistics.md, "Desk-wide multiple testing".
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from hunchbook.core.errors import HunchbookError
from hunchbook.core.plain import json_safe
from hunchbook.core.stats.inputs import as_count, as_number

#: The adjustments, in the order they are shown.
METHODS = ("bonferroni", "holm", "bhy")
#: Each adjustment's name as shown to people.
METHOD_NAMES = {"bonferroni": "Bonferroni", "holm": "Holm", "bhy": "BHY"}
#: Months in a year (the method counts monthly observations).
MONTHS_PER_YEAR = 12
#: Draws of the other tests when they are simulated (the authors' code uses 2,000).
DRAWS = 2000
#: Simulated p-values generated at a time (draws are split in chunks of about this many).
_CHUNK = 1 << 20


@dataclass(frozen=True)
class HlzModel:
    """The model of other strategies' t-statistics of Harvey, Liu & Zhu (2016) at an average
    correlation ``rho`` among strategies: a strategy has a true mean of zero with probability
    ``p_zero``, else an Exponential mean (``mean`` a month); monthly volatility ``vol`` over
    ``months`` months; the shocks to the strategies' sample means are equicorrelated (``rho``).
    The defaults are the authors' parameters at ``rho = 0.2`` (the default of their code, which
    fits 1,377 tests in all)."""

    rho: float = 0.2
    p_zero: float = 0.44589
    mean: float = 0.0055508
    vol: float = 0.15 / math.sqrt(12.0)
    months: int = 240

    def t_statistics(self, rng: np.random.Generator, draws: int, tests: int) -> np.ndarray:
        """``draws x tests`` absolute t-statistics: ``|mu + shock| / (vol / sqrt(months))``
        with ``shock / (vol / sqrt(months)) = sqrt(rho) z0 + sqrt(1 - rho) z_i``."""
        common = rng.standard_normal((draws, 1))
        own = rng.standard_normal((draws, tests))
        alive = rng.random((draws, tests)) > self.p_zero
        means = rng.exponential(self.mean, (draws, tests))
        se = self.vol / math.sqrt(self.months)
        shock = math.sqrt(self.rho) * common + math.sqrt(1.0 - self.rho) * own
        return np.abs(np.where(alive, means, 0.0) / se + shock)


#: The default model (the authors' default correlation, 0.2).
HLZ_MODEL = HlzModel()


@dataclass(frozen=True)
class Adjustment:
    """One adjustment of a Sharpe ratio's p-value: the adjusted p-value, the haircut Sharpe
    ratio it implies (annualised; NaN when the Sharpe ratio is not positive) and the haircut
    as a fraction of the Sharpe ratio."""

    method: str
    p_value: float
    sharpe: float
    haircut: float


@dataclass(frozen=True)
class Haircut:
    """An annualised Sharpe ratio haircut for ``tests`` tests.

    ``t_stat`` and ``p_value`` are the single test's; ``simulated`` counts the other tests
    drawn from the HLZ model (0 when every other p-value was known; with ``tests`` of them
    Holm and BHY saw ``tests + 1`` tests, as in the authors' code).
    """

    sharpe: float
    years: float
    t_stat: float
    p_value: float
    tests: int
    simulated: int
    bonferroni: Adjustment
    holm: Adjustment
    bhy: Adjustment

    @property
    def adjustments(self) -> tuple[Adjustment, Adjustment, Adjustment]:
        """The three adjustments in the order of :data:`METHODS`."""
        return self.bonferroni, self.holm, self.bhy

    def to_dict(self) -> dict[str, Any]:
        """JSON-safe dict (NaN becomes None)."""
        return json_safe({
            "sharpe": self.sharpe, "years": self.years, "t_stat": self.t_stat,
            "p_value": self.p_value, "tests": self.tests, "simulated": self.simulated,
            **{a.method: {"p_value": a.p_value, "sharpe": a.sharpe, "haircut": a.haircut}
               for a in self.adjustments}})


def _t() -> Any:
    """scipy's Student t, imported when first needed (scipy.stats is slow to import)."""
    from scipy.stats import t

    return t


def _months(years: float) -> float:
    years = as_number(years, "years")
    if not years * MONTHS_PER_YEAR > 1.0:
        raise HunchbookError(f"years: expected more than one month of data (N - 1 degrees of "
                             f"freedom), got {years!r} years")
    return years * MONTHS_PER_YEAR


def sharpe_p_value(sharpe: float, years: float) -> float:
    """Two-sided p-value of an annualised Sharpe ratio over ``years`` of data.

    ``t = SR_a * sqrt(years)``, ``p = 2 * (1 - F_t(|t|; N - 1))`` with ``N = 12 * years``
    months (not rounded). Harvey & Liu (2015), JPM 42(1). NaN for a NaN Sharpe ratio.
    """
    sharpe = as_number(sharpe, "sharpe")
    months = _months(years)
    if math.isnan(sharpe):
        return math.nan
    return float(2.0 * _t().sf(abs(sharpe) * math.sqrt(years), months - 1.0))


def haircut_sharpe(p_value: float, years: float) -> float:
    """The annualised Sharpe ratio whose two-sided p-value over ``years`` is ``p_value``:
    ``F_t^-1(1 - p/2; N - 1) / sqrt(years)`` (0 at p = 1). Harvey & Liu (2015)."""
    p_value = as_number(p_value, "p_value")
    months = _months(years)
    if not 0.0 <= p_value <= 1.0:
        raise HunchbookError(f"p_value: expected a probability, got {p_value!r}")
    return float(_t().isf(p_value / 2.0, months - 1.0) / math.sqrt(years))


def bhy_constant(tests: int) -> float:
    """``c(m) = sum_{j=1..m} 1/j``, the BHY factor for arbitrary dependence."""
    return float(np.sum(1.0 / np.arange(1, as_count(tests, "tests") + 1)))


def adjust_p_values(p_values: Any, method: str) -> np.ndarray:
    """Adjusted p-values along the last axis (each row is one family of tests).

    With ``p_(1) <= ... <= p_(m)``: ``bonferroni`` ``min(1, m p_(i))``; ``holm``
    ``min(1, max_{j<=i} (m - j + 1) p_(j))`` (Holm 1979); ``bhy``
    ``min(1, min_{k>=i} m c(m) p_(k) / k)`` with ``c(m) = sum 1/j`` (Benjamini & Yekutieli
    2001). The same values as statsmodels ``multipletests`` with 'bonferroni', 'holm' and
    'fdr_by'.
    """
    if method not in METHODS:
        raise HunchbookError(f"method: expected one of {', '.join(METHODS)}, got {method!r}")
    try:
        p = np.asarray(p_values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise HunchbookError(f"p-values: expected numbers ({exc})") from None
    if p.ndim == 0 or p.shape[-1] == 0:
        raise HunchbookError(f"p-values: expected at least one, got shape {p.shape}")
    if not np.all((p >= 0.0) & (p <= 1.0)):
        raise HunchbookError("p-values: expected probabilities between 0 and 1")
    order = np.argsort(p, axis=-1, kind="stable")
    adjusted = _adjust_ranked(np.take_along_axis(p, order, axis=-1), method)
    out = np.empty_like(p)
    np.put_along_axis(out, order, adjusted, axis=-1)
    return out


def _adjust_ranked(ranked: np.ndarray, method: str) -> np.ndarray:
    """Adjusted p-values of p-values sorted along the last axis (in that order)."""
    m = ranked.shape[-1]
    if method == "bonferroni":
        adjusted = m * ranked
    elif method == "holm":
        adjusted = np.maximum.accumulate((m - np.arange(m)) * ranked, axis=-1)
    else:
        scaled = m * bhy_constant(m) * ranked / np.arange(1, m + 1)
        adjusted = np.minimum.accumulate(scaled[..., ::-1], axis=-1)[..., ::-1]
    return np.minimum(adjusted, 1.0)


def sharpe_haircut(sharpe: float, years: float, tests: int, *, others: Any = None,
                   draws: int = DRAWS, seed: int = 0,
                   model: HlzModel = HLZ_MODEL) -> Haircut:
    """Haircut an annualised Sharpe ratio for ``tests`` tests by Bonferroni, Holm and BHY.

    Parameters
    ----------
    sharpe, years
        The strategy's annualised Sharpe ratio and the years of data behind it.
    tests
        M, the number of tests (Bonferroni multiplies by it).
    others
        ``None``: only M is known; the authors' procedure draws M other tests from ``model``
        (Holm and BHY over M + 1). Otherwise the other tests' p-values (at most M - 1): the
        strategy is one of M tests, NaN entries and the ones missing up to M - 1 are drawn
        from ``model``.
    draws, seed
        Draws of the simulated tests (the median adjusted p-value is used) and the seed of
        ``numpy.random.default_rng``; unused when nothing is simulated.
    """
    tests = as_count(tests, "tests")
    sharpe, years = as_number(sharpe, "sharpe"), as_number(years, "years")
    p_single = sharpe_p_value(sharpe, years)
    if math.isnan(p_single):
        raise HunchbookError(f"sharpe: expected a number, got {sharpe!r}")
    if others is None:
        known, simulated = np.empty(0), tests
    else:
        given = np.asarray(others, dtype=float).ravel()
        if given.size > tests - 1:
            raise HunchbookError(f"others: expected at most {tests - 1} other p-values for "
                                 f"{tests} tests, got {given.size}")
        known = given[np.isfinite(given)]
        simulated = tests - 1 - known.size
    if simulated:
        holm, bhy = _simulated(p_single, known, simulated, as_count(draws, "draws"),
                               np.random.default_rng(seed), model)
    else:
        family_p = np.concatenate([[p_single], known])
        holm = float(adjust_p_values(family_p, "holm")[0])
        bhy = float(adjust_p_values(family_p, "bhy")[0])
    p_values = {"bonferroni": min(tests * p_single, 1.0), "holm": holm, "bhy": bhy}
    adjustments = [_adjustment(method, p_values[method], sharpe, years) for method in METHODS]
    return Haircut(sharpe=sharpe, years=years, t_stat=sharpe * math.sqrt(years),
                   p_value=p_single, tests=tests, simulated=simulated,
                   bonferroni=adjustments[0], holm=adjustments[1], bhy=adjustments[2])


def _simulated(p_single: float, known: np.ndarray, simulated: int, draws: int,
               rng: np.random.Generator, model: HlzModel) -> tuple[float, float]:
    """Median Holm and BHY adjusted p-values of the strategy (column 0) over the draws."""
    from scipy.stats import norm

    width = 1 + known.size + simulated
    chunk = max(1, _CHUNK // width)
    holm, bhy = [], []
    for start in range(0, draws, chunk):
        rows = min(chunk, draws - start)
        others = np.concatenate([np.broadcast_to(known, (rows, known.size)),
                                 2.0 * norm.sf(model.t_statistics(rng, rows, simulated))], axis=1)
        ranked = np.sort(np.concatenate([np.full((rows, 1), p_single), others], axis=1), axis=1)
        # the strategy's place in each draw: ahead of the others that tie with it, as a stable
        # sort of [strategy, others] puts it (the same as adjust_p_values(...)[:, 0])
        place = np.count_nonzero(others < p_single, axis=1)[:, None]
        holm.append(np.take_along_axis(_adjust_ranked(ranked, "holm"), place, axis=1))
        bhy.append(np.take_along_axis(_adjust_ranked(ranked, "bhy"), place, axis=1))
    return float(np.median(np.concatenate(holm))), float(np.median(np.concatenate(bhy)))


def _adjustment(method: str, p_value: float, sharpe: float, years: float) -> Adjustment:
    if not sharpe > 0:
        return Adjustment(method, p_value, math.nan, math.nan)
    cut = haircut_sharpe(p_value, years)
    return Adjustment(method, p_value, cut, (sharpe - cut) / sharpe)


def expected_false_promotions(bhy_p_values: Any) -> float:
    """Expected number of false promotions among promoted ideas, from their BHY p-values.

    The largest BHY-adjusted p-value among the promoted ideas, q*, is the lowest false
    discovery rate at which BHY would promote all of them; BHY keeps the expected share of
    false discoveries at or below q* under any dependence (Benjamini & Yekutieli 2001,
    Theorem 1.3), so ``q* x promotions`` false promotions are expected. 0 without promotions.
    """
    p = np.asarray(bhy_p_values, dtype=float).ravel()
    if p.size == 0:
        return 0.0
    if not np.all((p >= 0.0) & (p <= 1.0)):
        raise HunchbookError("BHY p-values: expected probabilities between 0 and 1")
    return float(p.max() * p.size)
