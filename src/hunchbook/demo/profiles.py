"""How each invented demo market behaves: price level, volatility, carry, contract cycle,
expiry rule and liquidity. Contract sizes, ticks and fees live in ``markets.toml``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

#: Expiry rules. ``before_month``: the ``expiry_param``-th business day counting back from the
#: last business day before the delivery month (3 = third-to-last business day of the previous
#: month). ``on_or_before_day``: the last business day on or before day ``expiry_param`` of the
#: delivery month. ``third_friday``: the third Friday of the delivery month, or the business day
#: before it when that Friday is a holiday.
ExpiryRule = Literal["before_month", "on_or_before_day", "third_friday"]


@dataclass(frozen=True)
class MarketProfile:
    """Behaviour of one invented market.

    Attributes
    ----------
    symbol, sector
        As in ``markets.toml``.
    base_price
        Price level the spot price is anchored to at the start (in the market's price unit).
    annual_vol
        Typical annualised volatility of the spot log-price.
    drift
        Annual drift of the long-run anchor of the log-price.
    carry
        Typical size of the annualised carry (futures = spot x exp(carry x years to expiry)).
    carry_swaps
        True when carry switches between contango (> 0) and backwardation (< 0); otherwise it
        stays positive (mild contango).
    months
        Delivery months of the contract cycle.
    listed_months
        A contract starts trading this many months before its delivery month.
    expiry_rule, expiry_param
        See :data:`ExpiryRule`.
    roll_days
        Business days before expiry by which half of a contract's trading has moved on.
    decay_days
        How fast trading thins out along the curve beyond the front contract (business days).
    base_volume, base_open_interest
        Daily volume and open interest of the front contract at full activity.
    """

    symbol: str
    sector: str
    base_price: float
    annual_vol: float
    drift: float
    carry: float
    carry_swaps: bool
    months: tuple[int, ...]
    listed_months: int
    expiry_rule: ExpiryRule
    expiry_param: int
    roll_days: int
    decay_days: float
    base_volume: float
    base_open_interest: float


_MONTHLY = tuple(range(1, 13))
_QUARTERLY = (3, 6, 9, 12)

#: Every demo market's profile, in library order.
PROFILES: tuple[MarketProfile, ...] = (
    MarketProfile("CRUDE", "energy", 70.0, 0.35, 0.0, 0.15, True, _MONTHLY, 9,
                  "before_month", 3, 7, 10.0, 250_000, 320_000),
    MarketProfile("NATGAS", "energy", 3.5, 0.50, 0.0, 0.25, True, _MONTHLY, 9,
                  "before_month", 3, 6, 10.0, 120_000, 260_000),
    MarketProfile("GOLD", "metals", 1300.0, 0.15, 0.03, 0.03, False, (2, 4, 6, 8, 10, 12), 12,
                  "on_or_before_day", 26, 10, 20.0, 180_000, 300_000),
    MarketProfile("COPPER", "metals", 3.2, 0.22, 0.0, 0.04, True, _QUARTERLY, 12,
                  "on_or_before_day", 15, 10, 30.0, 60_000, 150_000),
    MarketProfile("CORN", "grains", 4.5, 0.25, 0.0, 0.12, True, (3, 5, 7, 9, 12), 12,
                  "on_or_before_day", 14, 9, 12.0, 200_000, 650_000),
    MarketProfile("SOYBEAN", "grains", 11.0, 0.22, 0.0, 0.08, True, (1, 3, 5, 7, 8, 9, 11), 12,
                  "on_or_before_day", 14, 9, 12.0, 120_000, 350_000),
    MarketProfile("TNOTE10", "rates", 122.0, 0.06, 0.0, 0.01, True, _QUARTERLY, 9,
                  "on_or_before_day", 20, 8, 30.0, 1_000_000, 2_500_000),
    MarketProfile("EQIDX", "equity index", 2500.0, 0.18, 0.06, 0.01, False, _QUARTERLY, 12,
                  "third_friday", 0, 6, 30.0, 1_500_000, 2_400_000),
)

#: Names of the eight invented demo markets, in library order.
DEMO_MARKETS: tuple[str, ...] = tuple(p.symbol for p in PROFILES)

#: Invented correlations of the daily spot shocks, in :data:`DEMO_MARKETS` order.
SHOCK_CORRELATION: tuple[tuple[float, ...], ...] = (
    # CRUDE NATGAS GOLD COPPER CORN  SOY  TNOTE EQIDX
    (1.00, 0.30, 0.15, 0.25, 0.15, 0.15, -0.10, 0.20),   # CRUDE
    (0.30, 1.00, 0.05, 0.10, 0.05, 0.05, 0.00, 0.05),    # NATGAS
    (0.15, 0.05, 1.00, 0.30, 0.05, 0.05, 0.15, 0.00),    # GOLD
    (0.25, 0.10, 0.30, 1.00, 0.10, 0.10, -0.15, 0.30),   # COPPER
    (0.15, 0.05, 0.05, 0.10, 1.00, 0.60, 0.00, 0.05),    # CORN
    (0.15, 0.05, 0.05, 0.10, 0.60, 1.00, 0.00, 0.05),    # SOYBEAN
    (-0.10, 0.00, 0.15, -0.15, 0.00, 0.00, 1.00, -0.30),  # TNOTE10
    (0.20, 0.05, 0.00, 0.30, 0.05, 0.05, -0.30, 1.00),   # EQIDX
)
