"""The market library: contract specifications read from a TOML file, and the cost per contract."""

from __future__ import annotations

import math
import os
from collections.abc import Mapping
from dataclasses import dataclass, replace
from pathlib import Path

import tomlkit
from tomlkit.container import Container
from tomlkit.exceptions import ParseError, TOMLKitError
from tomlkit.items import Item, Table
from tomlkit.toml_document import TOMLDocument

from hunchbook.core.atomic import write_atomically
from hunchbook.core.errors import MarketSpecError

#: Name of the market library file inside a data folder.
LIBRARY_FILE = "markets.toml"
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


#: Keys of a market table in the order the writer puts them.
LIBRARY_KEY_ORDER = ("name", "sector", "multiplier", "tick_size", "currency", "commission",
                     "exchange_fee", "regulatory_fee", "slippage_ticks")
#: Whole floats below this size are written as integers (1000, not 1000.0).
_EXACT_INTEGER_LIMIT = 2**53


def dump_market_library(specs: Mapping[str, MarketSpec], *, original: str | None = None) -> str:
    """Render market specifications as market library TOML text.

    Parameters
    ----------
    specs
        Specifications keyed by symbol, in the order they are written.
    original
        The library text ``specs`` were loaded from. When given, that document is updated in
        place: only values that differ are rewritten and keys or tables are added or removed as
        needed, so the user's comments and layout survive.

    Returns
    -------
    str
        TOML text; :func:`parse_market_library` of it gives back ``specs``. Should the original's
        layout defeat an in-place update, the canonical text is returned instead.

    Raises
    ------
    MarketSpecError
        If a specification is invalid (naming market and key), a key differs from its
        specification's symbol, ``specs`` is empty, or ``original`` is not valid TOML.
    """
    wanted = {symbol: _library_values(symbol, spec) for symbol, spec in specs.items()}
    canonical = tomlkit.document()
    for symbol, values in wanted.items():
        table = tomlkit.table()
        for key, value in values.items():
            table[key] = _library_item(value)
        canonical[symbol] = table
    text = canonical.as_string()
    meaning = parse_market_library(text)
    if original is None:
        return text
    try:
        document = tomlkit.parse(original.removeprefix("\ufeff"))
    except (TOMLKitError, ValueError, RecursionError) as err:
        raise MarketSpecError(f"the original market library text is not valid TOML: {err}"
                              ) from None
    try:
        _update_library(document, wanted)
        edited = document.as_string()
        if parse_market_library(edited) == meaning:
            return edited
    except Exception:  # tomlkit cannot edit some layouts in place: use the canonical text
        pass
    return text


def write_market_library(specs: Mapping[str, MarketSpec], path: str | os.PathLike[str], *,
                         original: str | None = None) -> None:
    """Write market specifications to a library file atomically (temporary file, then rename).

    Parameters
    ----------
    specs
        Specifications keyed by symbol.
    path
        Destination file; an existing file keeps its permissions.
    original
        The library text to update in place, as for :func:`dump_market_library`.

    Raises
    ------
    MarketSpecError
        If a specification is invalid or the file cannot be written; the error names the file.
    """
    name = os.fspath(path)
    try:
        data = dump_market_library(specs, original=original).encode("utf-8")
    except MarketSpecError as err:
        raise replace(err, file=err.file or name) from None
    try:
        write_atomically(name, data)
    except OSError as err:
        raise MarketSpecError(f"cannot write market library: {err.strerror or err}",
                              file=name) from None


def _library_values(symbol: str, spec: MarketSpec) -> dict[str, str | float]:
    """One market's table content as plain values, in writing order (absent names left out)."""
    if symbol != spec.symbol:
        raise MarketSpecError(f"listed under '{symbol}' but its symbol is '{spec.symbol}'",
                              market=symbol)
    values = {key: getattr(spec, key) for key in LIBRARY_KEY_ORDER}
    return {key: value for key, value in values.items() if value is not None}


def _library_item(value: str | float) -> Item:
    """A tomlkit item for a plain value; whole floats become integers."""
    if isinstance(value, float) and value.is_integer() and abs(value) < _EXACT_INTEGER_LIMIT:
        return tomlkit.integer(int(value))
    return tomlkit.item(value)


def _update_library(document: TOMLDocument, wanted: dict[str, dict[str, str | float]]) -> None:
    """Make ``document`` hold ``wanted``, touching only what differs."""
    for symbol in [s for s in document if s not in wanted]:
        del document[symbol]
    for symbol, values in wanted.items():
        if symbol not in document:
            table = tomlkit.table()
            for key, value in values.items():
                table[key] = _library_item(value)
            document[symbol] = table
            continue
        table = document[symbol]
        for key in [k for k in table if k not in values]:
            del table[key]
        for key, value in values.items():
            if key not in table:
                _insert_in_order(table, key, _library_item(value))
            elif not _same_value(_plain(table[key]), value):
                table[key] = _library_item(value)


def _insert_in_order(table: Table, key: str, item: Item) -> None:
    """Add a key after the nearest key that precedes it in writing order (before trailing
    comments that belong to the next table)."""
    before = LIBRARY_KEY_ORDER[:LIBRARY_KEY_ORDER.index(key)]
    present = [k for k in before if k in table]
    body = table.value
    if present:
        body._insert_after(present[-1], key, item)
        return
    first = next((i for i, (k, _) in enumerate(body.body) if k is not None), None)
    if first is None:
        table[key] = item
    else:
        body._insert_at(first, key, item)


def _plain(value: object) -> object:
    return value.unwrap() if isinstance(value, Item | Container) else value


def _same_value(have: object, want: str | float) -> bool:
    """Whether a value in the file already means ``want`` (1000 == 1000.0)."""
    if isinstance(want, str):
        return isinstance(have, str) and have == want
    return isinstance(have, int | float) and not isinstance(have, bool) and have == want
