"""Invented price paths: a regime-switching spot price per market, a switching carry, and the
futures curve built from them (futures = spot x exp(carry x years to expiry) x small noise).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from hunchbook.core.periods import DAYS_PER_YEAR
from hunchbook.demo.effects import REVERSAL_DAYS, PlantedTerms
from hunchbook.demo.profiles import SHOCK_CORRELATION, MarketProfile

#: Daily pull of the log-price towards its long-run anchor.
ANCHOR_PULL = 0.001
#: Mean length of a price regime (trend or mean reversion), in trading days.
MEAN_REGIME_DAYS = 200
#: Drift of a trending regime, in annual volatilities a year (times the regime's size).
REGIME_DRIFT = 0.8
#: Mean length of a carry regime (contango or backwardation), in trading days.
MEAN_CARRY_DAYS = 250


@dataclass(frozen=True)
class Regimes:
    """Random regimes covering a run of days, one value per day (constant within a regime).

    ``start`` marks each regime's first day, ``trend`` whether it trends (otherwise it mean-
    reverts), ``size`` its strength in [0.5, 1.5] and ``coin`` a uniform [0, 1) draw that
    decides its direction.
    """

    start: np.ndarray
    trend: np.ndarray
    size: np.ndarray
    coin: np.ndarray


def random_regimes(rng: np.random.Generator, n_days: int, mean_days: int) -> Regimes:
    """Regimes of 20 days plus a geometric number of days (mean ``mean_days``) each."""
    start = np.zeros(n_days, dtype=bool)
    trend = np.empty(n_days, dtype=bool)
    size = np.empty(n_days)
    coin = np.empty(n_days)
    t = 0
    while t < n_days:
        length = 20 + int(rng.geometric(1.0 / mean_days))
        start[t] = True
        trend[t:t + length] = rng.random() < 0.5
        size[t:t + length] = rng.uniform(0.5, 1.5)
        coin[t:t + length] = rng.random()
        t += length
    return Regimes(start, trend, size, coin)


def correlated_shocks(rng: np.random.Generator, n_days: int) -> np.ndarray:
    """Standard normal daily shocks, one column per demo market, with the invented correlations."""
    chol = np.linalg.cholesky(np.array(SHOCK_CORRELATION))
    return rng.standard_normal((n_days, len(chol))) @ chol.T


def spot_path(profile: MarketProfile, shocks: np.ndarray, rng: np.random.Generator,
              planted: PlantedTerms | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Daily log spot price and daily volatility of one market over the weekday grid.

    The path alternates between trending regimes (a steady drift of 0.4 to 1.2 annual
    volatilities a year) and mean-reverting regimes (a pull of 0.2 to 1 % a day towards the
    level where the regime began). A trend is more likely to head back towards the long-run
    anchor the further the price has strayed from it, stalls two annual volatilities past the
    anchor, and a weak daily pull draws the price back, so eighteen years stay in a plausible
    range. Volatility wanders around ``annual_vol`` as a
    slow log-AR(1) process. The market's planted effects (:mod:`hunchbook.demo.effects`) are
    added to each day's change.

    Parameters
    ----------
    profile
        The market's behaviour.
    shocks
        Standard normal shocks, one per weekday.
    rng
        The market's own random generator.
    planted
        The market's planted effects over the same days (none when ``None``).

    Returns
    -------
    tuple of numpy.ndarray
        Log price and daily volatility, one value per weekday.
    """
    n = len(shocks)
    sigma = profile.annual_vol / np.sqrt(DAYS_PER_YEAR)
    vol_noise = rng.standard_normal(n)
    regimes = random_regimes(rng, n, MEAN_REGIME_DAYS)
    anchor = np.log(profile.base_price) + profile.drift * np.arange(n) / DAYS_PER_YEAR
    log_price = np.empty(n)
    daily_vol = np.empty(n)
    x = anchor[0]
    level = x
    drift = 0.0
    h = 0.0
    history = np.full(REVERSAL_DAYS + 1, x)  # the last closes, oldest first
    event_sign, event_left = 0.0, 0
    for t in range(n):
        if regimes.start[t]:
            level = x
            stray = (x - anchor[t]) / profile.annual_vol
            direction = 1.0 if regimes.coin[t] < 1.0 / (1.0 + np.exp(3.0 * stray)) else -1.0
            drift = direction * REGIME_DRIFT * regimes.size[t] * profile.annual_vol / DAYS_PER_YEAR
        h = 0.985 * h + 0.04 * vol_noise[t]
        daily_vol[t] = sigma * np.exp(h)
        if regimes.trend[t]:
            # A trend stalls once it has carried the price two annual volatilities past the anchor.
            stretched = np.sign(drift) * (x - anchor[t]) > 2.0 * profile.annual_vol
            step = 0.0 if stretched else drift
        else:
            step = (0.002 + 0.008 * (regimes.size[t] - 0.5)) * (level - x)
        if planted is not None:
            step += planted.push[t] * daily_vol[t] - planted.reversal * (x - history[0])
            if event_left:
                step += planted.event * daily_vol[t] * event_sign
                event_left -= 1
        before = x
        x += step + ANCHOR_PULL * (anchor[t] - x) + daily_vol[t] * shocks[t]
        if planted is not None and planted.event_day[t]:
            event_sign, event_left = float(np.sign(x - before)), 2
        history = np.roll(history, -1)
        history[-1] = x
        log_price[t] = x
    if planted is not None:  # the trend rides on top, beyond the reach of the regimes' pulls
        log_price += planted.level
    return log_price, daily_vol


def carry_path(profile: MarketProfile, n_days: int, rng: np.random.Generator) -> np.ndarray:
    """Daily annualised carry of one market over the weekday grid.

    Carry drifts smoothly towards a regime target of 0.5 to 1.5 times ``profile.carry``; for
    markets whose carry swaps, each regime's target is contango or backwardation at random.
    """
    regimes = random_regimes(rng, n_days, MEAN_CARRY_DAYS)
    target = profile.carry * regimes.size
    if profile.carry_swaps:
        target = np.where(regimes.coin < 0.5, target, -target)
    noise = rng.standard_normal(n_days) * profile.carry * 0.02
    carry = np.empty(n_days)
    c = target[0]
    for t in range(n_days):
        c += 0.02 * (target[t] - c) + noise[t]
        carry[t] = c
    return carry


def futures_log_prices(log_spot: np.ndarray, carry: np.ndarray, daily_vol: np.ndarray,
                       years_to_expiry: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Log futures prices on a (dates x contracts) grid.

    ``log F = log spot + carry x years to expiry + basis``, where the basis is a small
    persistent AR(1) noise per contract (about a tenth of a day's volatility).
    """
    n, m = years_to_expiry.shape
    innovations = rng.standard_normal((n, m)) * (0.03 * daily_vol)[:, None]
    basis = np.empty((n, m))
    basis[0] = innovations[0] * 3.0
    for t in range(1, n):
        basis[t] = 0.95 * basis[t - 1] + innovations[t]
    return log_spot[:, None] + carry[:, None] * years_to_expiry + basis
