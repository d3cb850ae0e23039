"""Invented volume and open interest: the front contract trades most, and trading moves to the
next contract a few business days before the front expires, so a volume or open-interest
switch roll happens before expiry.
"""

from __future__ import annotations

import numpy as np

from hunchbook.demo.profiles import MarketProfile


def activity(days_to_expiry: np.ndarray, gap_days: np.ndarray, roll_days: float,
             width: float, decay_days: float) -> np.ndarray:
    """Share of full activity of each contract (between 0 and 1).

    A contract is at full activity while it is the front contract; before that its activity
    falls off exponentially (``decay_days``) with its distance beyond the front, and near
    expiry it fades along a logistic curve centred ``roll_days`` business days before expiry.

    Parameters
    ----------
    days_to_expiry
        Business days from each date to each contract's expiry.
    gap_days
        Business days between each contract's expiry and the previous contract's expiry
        (broadcast against ``days_to_expiry``).
    roll_days, width, decay_days
        Centre and width of the fade-out, and the fall-off length along the curve.
    """
    x = days_to_expiry - roll_days
    fade = 1.0 / (1.0 + np.exp(-x / width))
    return fade * np.exp(-np.maximum(x - gap_days, 0.0) / decay_days)


def volume_and_open_interest(profile: MarketProfile, days_to_expiry: np.ndarray,
                             gap_days: np.ndarray, vol_ratio: np.ndarray,
                             rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Daily volume and open interest of the listed contract rows.

    Parameters
    ----------
    profile
        The market's behaviour (base volume and open interest, roll timing).
    days_to_expiry, gap_days
        Per row: business days to the contract's expiry, and its gap to the previous expiry.
    vol_ratio
        Per row: the day's volatility relative to the market's typical volatility (busier
        markets trade more).
    rng
        The market's random generator.

    Returns
    -------
    tuple of numpy.ndarray
        Integer volume and open interest per row. A contract's open interest fades two days
        later than its volume and more smoothly, as holders close out after traders have
        moved on; it also builds up more evenly along the curve.
    """
    n = len(days_to_expiry)
    trade = activity(days_to_expiry, gap_days, profile.roll_days, 2.0, profile.decay_days)
    hold = activity(days_to_expiry, gap_days, profile.roll_days - 2, 3.0,
                    1.5 * profile.decay_days)
    volume = profile.base_volume * trade * vol_ratio * rng.lognormal(0.0, 0.2, n)
    open_interest = profile.base_open_interest * hold * rng.lognormal(0.0, 0.03, n)
    return np.rint(volume).astype(np.int64), np.rint(open_interest).astype(np.int64)
