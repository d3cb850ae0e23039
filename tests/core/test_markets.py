"""Market library: cost per contract and validation messages."""

from __future__ import annotations

import pytest

from hunchbook.core.errors import MarketSpecError
from hunchbook.core.markets import parse_market_library

CRUDE = """
[CRUDE]
name = "Invented light crude (test)"
sector = "energy"
multiplier = 1000
tick_size = 0.01
currency = "USD"
commission = 0.85
exchange_fee = 1.45
regulatory_fee = 0.02
slippage_ticks = 1
"""


def test_crude_tick_value_and_cost():
    spec = parse_market_library(CRUDE)["CRUDE"]
    # Crude oil: 1,000 barrels x tick $0.01 = $10 per tick per contract (common practice,
    # no source); commission $0.25-1.00, exchange fee $1-2, regulatory fee a few cents
    # (common practice, no source).
    assert spec.tick_value == pytest.approx(10.0)
    assert 0.25 <= spec.commission <= 1.00 and 1 <= spec.exchange_fee <= 2
    assert spec.regulatory_fee < 0.10
    # cost per contract per side = fees + slippage ticks x tick size x multiplier
    assert spec.cost_per_contract == pytest.approx(0.85 + 1.45 + 0.02 + 1 * 10.0)


@pytest.mark.parametrize(
    ("multiplier", "tick", "ticks", "tick_value"),
    [
        # tick value = tick size x multiplier (common practice, no source; contract sizes
        # from memory of published exchange specifications, as noted in shared reference s.6)
        (10_000, 0.001, 1, 10.0),       # natural gas 10,000 MMBtu
        (100, 0.10, 1, 10.0),           # gold 100 troy oz
        (5_000, 0.0025, 1, 12.50),      # corn 5,000 bu, quarter cent
        (1_000, 1 / 64, 1, 15.625),     # 10-year note, half of 1/32 of a point
        (50, 0.25, 2, 25.0),            # equity index $50 x index, two ticks
    ],
)
def test_slippage_in_ticks(multiplier, tick, ticks, tick_value):
    text = CRUDE.replace("1000", str(multiplier)).replace("0.01", repr(tick))
    text = text.replace("slippage_ticks = 1", f"slippage_ticks = {ticks}")
    spec = parse_market_library(text)["CRUDE"]
    assert spec.slippage_ticks * spec.tick_value == pytest.approx(tick_value)


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (("multiplier = 1000", "multiplier = 0"), "market 'CRUDE', key 'multiplier'"),
        (("tick_size = 0.01", "tick_size = -0.01"), "market 'CRUDE', key 'tick_size'"),
        (("commission = 0.85", "commision = 0.85"), "key 'commision': unknown key"),
        (("exchange_fee = 1.45\n", ""), "key 'exchange_fee': missing required key"),
        (("currency = \"USD\"", "currency = 3"), "key 'currency': expected a non-empty text"),
        (("slippage_ticks = 1", "slippage_ticks = \"one\""), "key 'slippage_ticks'"),
        (("commission = 0.85", "commission = -1"), "key 'commission'"),
        (("multiplier = 1000", "multiplier = true"), "key 'multiplier'"),
        (("[CRUDE]", "CRUDE = 3\n[X]"), "market 'CRUDE': expected a table"),
        (("[CRUDE]", "[CRUDE"), "TOML syntax error at line 2"),
    ],
)
def test_bad_library_names_market_and_key(change, message):
    with pytest.raises(MarketSpecError) as info:
        parse_market_library(CRUDE.replace(*change), file="markets.toml")
    assert str(info.value).startswith("markets.toml")
    assert message in str(info.value)


def test_cost_overrides():
    spec = parse_market_library(CRUDE)["CRUDE"].with_costs({"slippage_ticks": 2,
                                                            "commission": 1})
    assert spec.cost_per_contract == pytest.approx(1 + 1.45 + 0.02 + 20.0)
