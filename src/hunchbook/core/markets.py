"""The market library: contract specifications read from a TOML file, and the cost per contract."""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, replace
from pathlib import Path

import tomlkit
from tomlkit.exceptions import ParseError

from hunchbook.core.errors import MarketSpecError

#: Keys every market table must have, with the kind of value expected.
REQUIRED_KEYS = {
    "multiplier": "a positive number",
    "tick_size": "a positive number",
    "currency": "a currency code such as \"USD\"",
    "commission": "a number >= 0 (per contract per side)",
    "exchange_fee": "a number >= 0 (per contract per side)",
    "regulatory_fee": "a number >= 0 (per contract per side)",
    "slippage_ticks": "a number of ticks >= 0 (per contract per side)",
}
#: Keys a market table may have besides the required ones.
OPTIONAL_KEYS = {"name": "a display name", "sector": "a sector name"}
#: Largest market library file read, in bytes.
MAX_FILE_BYTES = 1_000_000


@dataclass(frozen=True)
class MarketSpec:
    """One market's contract specification; fees are per contract per side."""

    symbol: str
    multiplier: float
    tick_size: float
    currency: str
    commission: float
    exchange_fee: float
    regulatory_fee: float
    slippage_ticks: float
    name: str | None = None
    sector: str | None = None

    @property
    def tick_value(self) -> float:
        """Currency value of one tick for one contract (tick size x multiplier)."""
        return self.tick_size * self.multiplier

    @property
    def cost_per_contract(self) -> float:
        """Cost of trading one contract one side: fees plus slippage in ticks x tick value."""
        fees = self.commission + self.exchange_fee + self.regulatory_fee
        return fees + self.slippage_ticks * self.tick_value

    def with_costs(self, overrides: Mapping[str, float]) -> MarketSpec:
        """A copy with some cost fields replaced (keys as in a rule file's ``[costs]``)."""
        return replace(self, **{k: float(v) for k, v in overrides.items()})


def read_market_library(path: str | os.PathLike[str]) -> dict[str, MarketSpec]:
    """Read a market library file: one TOML table per market.

    Raises
    ------
    MarketSpecError
        Naming the file, market and key, for unknown or missing keys, wrong types,
        non-positive multiplier or tick size, or negative fees.
    """
    file = str(path)
    p = Path(path)
    if not p.is_file():
        raise MarketSpecError("market library file not found", file=file)
    if p.stat().st_size > MAX_FILE_BYTES:
        raise MarketSpecError(f"file is larger than {MAX_FILE_BYTES} bytes", file=file)
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise MarketSpecError("file is not UTF-8 text", file=file) from None
    return parse_market_library(text, file=file)


def parse_market_library(text: str, *, file: str | None = None) -> dict[str, MarketSpec]:
    """Parse market library TOML text; see :func:`read_market_library`."""
    try:
        doc = tomlkit.parse(text).unwrap()
    except ParseError as exc:
        raise MarketSpecError(f"TOML syntax error at line {exc.line}, column {exc.col}",
                              file=file) from None
    markets: dict[str, MarketSpec] = {}
    for symbol, table in doc.items():
        if not isinstance(table, dict):
            raise MarketSpecError("expected a table of contract specifications",
                                  file=file, market=symbol)
        markets[symbol] = _market_from_table(symbol, table, file)
    if not markets:
        raise MarketSpecError("no markets defined (expected one [MARKET] table per market)",
                              file=file)
    return markets


def _market_from_table(symbol: str, table: dict, file: str | None) -> MarketSpec:
    def fail(key: str, problem: str) -> MarketSpecError:
        return MarketSpecError(problem, file=file, market=symbol, key=key)

    allowed = {**REQUIRED_KEYS, **OPTIONAL_KEYS}
    for key in table:
        if key not in allowed:
            raise fail(key, f"unknown key (expected one of: {', '.join(allowed)})")
    for key, expected in REQUIRED_KEYS.items():
        if key not in table:
            raise fail(key, f"missing required key (expected {expected})")
    values: dict[str, object] = {}
    for key in ("currency", "name", "sector"):
        if key in table:
            value = table[key]
            if not isinstance(value, str) or not value.strip():
                raise fail(key, f"expected a non-empty text value, got {value!r}")
            values[key] = value.strip()
    for key in ("multiplier", "tick_size", "commission", "exchange_fee", "regulatory_fee",
                "slippage_ticks"):
        value = table[key]
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise fail(key, f"expected {REQUIRED_KEYS[key]}, got {value!r}")
        number = float(value)
        if not math.isfinite(number):
            raise fail(key, f"expected a finite number, got {value!r}")
        positive = key in ("multiplier", "tick_size")
        if (positive and number <= 0) or number < 0:
            raise fail(key, f"expected {REQUIRED_KEYS[key]}, got {value!r}")
        values[key] = number
    return MarketSpec(symbol=symbol, **values)  # type: ignore[arg-type]
