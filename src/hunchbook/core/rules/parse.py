"""Read rule files (TOML) and validate them into a :class:`RuleSpec`.

Every problem is reported as a :class:`RuleError` naming the file and the offending key, with
its kind and the span of the rule text it is about.
"""

from __future__ import annotations

import datetime as dt
import keyword
import math
import os
import re
from collections.abc import Collection
from typing import Any

from tomlkit.exceptions import ParseError

from hunchbook.core.errors import RuleError, TextSpan
from hunchbook.core.rules import roll
from hunchbook.core.rules.model import (
    COST_KEYS,
    SERIES_NAMES,
    Parameter,
    ParamRange,
    RollSpec,
    RuleSpec,
    SizingSpec,
)
from hunchbook.core.rules.places import TomlPositionError, parse_with_places
from hunchbook.core.rules.roll import ADJUST_KEY, SWITCH_KEY, RollRule
from hunchbook.core.rules.spans import error_span, point_span

#: Largest rule file accepted, in bytes (1 MB).
MAX_FILE_BYTES = 1024 * 1024
#: Most values one parameter may take.
MAX_VALUES_PER_PARAMETER = 10_000
#: Most parameter sets the whole grid may hold (before the constraint is applied).
MAX_GRID_SIZE = 1_000_000
#: Largest value accepted for the integer settings (delay, days_before_expiry, vol_window).
MAX_INTEGER_SETTING = 100_000

TOP_KEYS = ("name", "description", "markets", "reads", "start", "end",
            "parameters", "signal", "roll", "sizing", "costs")
SIGNAL_KEYS = ("position", "delay")
SIZING_KEYS = ("contracts", "target_vol", "capital", "vol_window")
RANGE_KEYS = ("start", "stop", "step")
#: Reserved key under ``[parameters]`` holding the optional constraint expression.
CONSTRAINT_KEY = "constraint"
#: Reserved words of the expression syntax (``and``, ``if``, ``True``, ...): not parameter names.
EXPRESSION_WORDS = tuple(keyword.kwlist)

_MARKET_RE = re.compile(r"[A-Za-z0-9_.\-]+\Z")
_IDENTIFIER_RE = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
_DATE_RE = re.compile(r"\d{4}-\d{2}-\d{2}\Z")
_DEFAULT_VOL_WINDOW = SizingSpec().vol_window


def read_rules(path: str | os.PathLike[str]) -> RuleSpec:
    """Read and validate a rule file.

    Parameters
    ----------
    path
        The rule file (UTF-8 TOML, at most 1 MB).

    Returns
    -------
    RuleSpec
        The validated specification.

    Raises
    ------
    RuleError
        If the file is missing, unreadable, too big, not UTF-8 or not a valid rule file; the error
        names the file.
    """
    return parse_rules(read_rule_text(path), file=os.fspath(path))


def read_rule_text(path: str | os.PathLike[str]) -> str:
    """The text of a rule file (UTF-8, at most 1 MB), not yet parsed.

    Raises
    ------
    RuleError
        If the file is missing, unreadable, too big or not UTF-8; the error names the file.
    """
    name = os.fspath(path)
    try:
        with open(name, "rb") as handle:
            data = handle.read(MAX_FILE_BYTES + 1)
    except FileNotFoundError:
        raise RuleError("rule file not found", file=name, kind="file") from None
    except IsADirectoryError:
        raise RuleError("expected a rule file, found a folder", file=name, kind="file") from None
    except OSError as err:
        raise RuleError(f"cannot read rule file: {err.strerror or err}", file=name,
                        kind="file") from None
    if len(data) > MAX_FILE_BYTES:
        raise RuleError(f"rule file is larger than the limit of {MAX_FILE_BYTES} bytes (1 MB)",
                        file=name, kind="file")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as err:
        line = data[:err.start].count(b"\n") + 1
        raise RuleError(f"rule file is not UTF-8 text (bad byte at line {line})",
                        file=name, kind="file") from None


def parse_rules(text: str, *, file: str | None = None) -> RuleSpec:
    """Parse and validate the text of a rule file.

    Parameters
    ----------
    text
        TOML text of the rule file.
    file
        Name of the file the text came from, used in error messages.

    Returns
    -------
    RuleSpec
        The validated specification.

    Raises
    ------
    RuleError
        For any problem: TOML syntax, unknown keys, wrong types, values out of range or invalid
        expressions. Its ``kind`` says which, and ``span`` where in the text (line and column,
        both from 1, not counting a byte-order mark) it is.
    """
    try:
        body = _checked_text(text)
        try:
            data, places = parse_with_places(body)
        except TomlPositionError as err:
            raise _syntax_error(body, err) from None
        try:
            return _spec_from_data(data)
        except RuleError as err:
            raise err.at(error_span(body, places, err)) from None
    except RuleError as err:
        raise err.located(file=file) from None


def locate_error(text: str, error: RuleError) -> RuleError:
    """``error``, found after parsing (when the rules meet the data, such as an unknown event
    name), pointing at its place in the rule ``text`` it came from (kind, key and column set).

    The error is returned unchanged when it already has a span or the text cannot be read.
    """
    if error.span is not None or error.key is None:
        return error
    try:
        body = _checked_text(text)
        _, places = parse_with_places(body)
    except (RuleError, TomlPositionError):
        return error
    return error.at(error_span(body, places, error))


def _checked_text(text: str) -> str:
    """Check size and encoding; return the text without a byte-order mark."""
    try:
        size = len(text.encode("utf-8"))
    except UnicodeEncodeError:
        raise RuleError("the text contains characters that cannot be stored as UTF-8",
                        kind="file") from None
    if size > MAX_FILE_BYTES:
        raise RuleError(f"rule file is {size} bytes; the limit is {MAX_FILE_BYTES} bytes (1 MB)",
                        kind="file")
    return text.removeprefix("\ufeff")


def _syntax_error(text: str, err: TomlPositionError) -> RuleError:
    """The error for text tomlkit cannot read, pointing where it stopped."""
    cause = err.error
    reason = str(cause)
    span: TextSpan | None = None
    if err.index is not None:
        span = point_span(text, err.index)
    if isinstance(cause, ParseError):
        reason = reason.rsplit(" at line ", 1)[0]
        if span is None:  # built outside tomlkit's source: its own position, columns from 0
            span = TextSpan(cause.line, cause.col + 1, cause.line, cause.col + 1)
    unclosed = None if err.index is None else _unclosed_quote(text, err.index)
    if unclosed is not None:
        reason = (f"the string opened with {unclosed[1]} at column {unclosed[0]} is not closed "
                  f"before the end of the line: add the closing {unclosed[1]} (or use triple "
                  "quotes for text over several lines)")
    return RuleError(f"TOML syntax error: {reason}", kind="toml-syntax", span=span)


def _unclosed_quote(text: str, index: int) -> tuple[int, str] | None:
    """Where a one-line string left open runs into the end of its line: the column (from 1)
    and the quote that opened it, when reading stopped at a line end inside a string."""
    if index < len(text) and text[index] not in "\r\n":
        return None
    start = text.rfind("\n", 0, index) + 1
    line, quote, opened = text[start:index], None, 0
    skip = False
    for column, char in enumerate(line, 1):
        if skip:
            skip = False
        elif quote is None and char == "#":
            return None
        elif quote is None and char in "\"'":
            quote, opened = char, column
        elif char == quote:
            quote = None
        elif char == "\\" and quote == '"':
            skip = True
    return None if quote is None else (opened, quote)


class _Table:
    """A TOML table with its dotted path, offering typed, validated look-ups."""

    def __init__(self, data: dict[str, Any], path: str = "") -> None:
        self.data = data
        self.path = path

    def key(self, name: str) -> str:
        return f"{self.path}.{name}" if self.path else name

    def check_keys(self, allowed: Collection[str]) -> None:
        for name in self.data:
            if name not in allowed:
                raise RuleError(f"unknown key '{name}'; allowed keys: {', '.join(allowed)}",
                                key=self.key(name), kind="unknown-key")

    def require(self, name: str) -> None:
        if name not in self.data:
            raise RuleError("this key is required but missing", key=self.key(name),
                            kind="missing-key")

    def required_string(self, name: str) -> str:
        self.require(name)
        value = self.data[name]
        if not isinstance(value, str):
            raise self.wrong_type(name, "a string")
        return value

    def required_table(self, name: str) -> _Table:
        self.require(name)
        value = self.data[name]
        if not isinstance(value, dict):
            raise self.wrong_type(name, "a table")
        return _Table(value, self.key(name))

    def wrong_type(self, name: str, expected: str) -> RuleError:
        return RuleError(f"expected {expected}, found {_describe(self.data[name])}",
                         key=self.key(name), kind="bad-value")

    def string(self, name: str) -> str | None:
        value = self.data.get(name)
        if value is not None and not isinstance(value, str):
            raise self.wrong_type(name, "a string")
        return value

    def choice(self, name: str, options: tuple[str, ...], default: str | None) -> str | None:
        value = self.string(name)
        if value is None:
            return default
        if value not in options:
            raise RuleError(f"expected one of {_quoted(options)}, found '{value}'",
                            key=self.key(name), kind="bad-value")
        return value

    def integer(self, name: str, default: int, minimum: int) -> int:
        value = self.data.get(name, default)
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.wrong_type(name, f"an integer >= {minimum}")
        if not minimum <= value <= MAX_INTEGER_SETTING:
            raise RuleError(f"expected an integer from {minimum} to {MAX_INTEGER_SETTING}, "
                            f"found {value}", key=self.key(name), kind="bad-value")
        return value

    def number(self, name: str, *, positive: bool) -> float:
        value = _number(self.data[name], self.key(name))
        if value < 0 or (positive and value == 0):
            condition = "> 0" if positive else ">= 0"
            raise RuleError(f"expected a number {condition}, found {_show(value)}",
                            key=self.key(name), kind="bad-value")
        return float(value)

    def table(self, name: str) -> _Table | None:
        value = self.data.get(name)
        if value is None:
            return None
        if not isinstance(value, dict):
            raise self.wrong_type(name, "a table")
        return _Table(value, self.key(name))

    def date(self, name: str) -> dt.date | None:
        value = self.data.get(name)
        if value is None:
            return None
        if isinstance(value, dt.date) and not isinstance(value, dt.datetime):
            return value
        if isinstance(value, str) and _DATE_RE.match(value):
            try:
                return dt.date.fromisoformat(value)
            except ValueError:
                raise RuleError(f"'{value}' is not a calendar date", key=self.key(name),
                                kind="bad-value") from None
        raise self.wrong_type(name, "a date (2012-01-01 or \"2012-01-01\")")


def _spec_from_data(data: dict[str, Any]) -> RuleSpec:
    """Validate the parsed TOML document and build the specification."""
    top = _Table(data)
    top.check_keys(TOP_KEYS)
    name = top.required_string("name")
    if not name.strip():
        raise RuleError("the name must not be empty", key="name", kind="bad-value")
    markets = _markets(top, "markets")
    reads = _markets(top, "reads") if "reads" in top.data else ()
    for market in reads:
        if market in markets:
            raise RuleError(f"market '{market}' is traded (listed in markets); reads lists only "
                            "markets read but not traded", key="reads", kind="bad-value")
    start, end = top.date("start"), top.date("end")
    if start is not None and end is not None and end < start:
        raise RuleError(f"end ({end}) is before start ({start})", key="end", kind="bad-value")
    parameters, constraint = _parameters(top.table("parameters"))
    position, delay = _signal(top.required_table("signal"), parameters, markets + reads)
    return RuleSpec(
        name=name,
        description=top.string("description"),
        markets=markets,
        reads=reads,
        start=start,
        end=end,
        parameters=parameters,
        constraint=constraint,
        position=position,
        delay=delay,
        roll=_roll(top.table("roll")),
        sizing=_sizing(top.table("sizing")),
        costs=_costs(top.table("costs"), markets),
    )


def _markets(top: _Table, key: str) -> tuple[str, ...]:
    """The market names listed under ``key`` (``markets``: required, at least one)."""
    top.require(key)
    value = top.data[key]
    if not isinstance(value, list):
        raise top.wrong_type(key, "an array of market names")
    if not value and key == "markets":
        raise RuleError("list at least one market", key=key, kind="bad-value")
    seen: set[str] = set()
    for i, market in enumerate(value, start=1):
        if not isinstance(market, str) or not _MARKET_RE.match(market):
            raise RuleError(f"item {i}: expected a market name made of letters, digits, '_', '.' "
                            f"or '-', found {_describe(market)}", key=key, kind="bad-value")
        if market in seen:
            raise RuleError(f"market '{market}' is listed twice", key=key, kind="bad-value")
        seen.add(market)
    return tuple(value)


def _parameters(table: _Table | None) -> tuple[tuple[Parameter, ...], str | None]:
    if table is None:
        return (), None
    reserved = _function_names()
    parameters = []
    for name, value in table.data.items():
        if name == CONSTRAINT_KEY:
            continue
        key = table.key(name)
        _check_parameter_name(name, key, reserved)
        if isinstance(value, list):
            parameters.append(Parameter(name, _value_list(value, key)))
        elif isinstance(value, dict):
            parameters.append(Parameter(name, _value_range(_Table(value, key))))
        else:
            raise table.wrong_type(name, "an array of numbers or a range {start, stop, step}")
    size = 1
    for parameter in parameters:
        size *= len(parameter.values())
    if size > MAX_GRID_SIZE:
        raise RuleError(f"the parameter grid has {size:,} sets; the limit is {MAX_GRID_SIZE:,}",
                        key=table.path, kind="bad-value")
    names = tuple(p.name for p in parameters)
    constraint = table.string(CONSTRAINT_KEY)
    if constraint is not None:
        _check_expression(constraint, table.key(CONSTRAINT_KEY), series_names=(),
                          param_names=names)
    return tuple(parameters), constraint


def _check_parameter_name(name: str, key: str, reserved: Collection[str]) -> None:
    if not _IDENTIFIER_RE.match(name):
        raise RuleError(f"parameter name '{name}' must be made of letters, digits and '_' and "
                        "must not start with a digit", key=key, kind="bad-name")
    if name in SERIES_NAMES:
        raise RuleError(f"'{name}' is a price series name; choose another parameter name",
                        key=key, kind="bad-name")
    if name in reserved:
        raise RuleError(f"'{name}' is a function name; choose another parameter name", key=key,
                        kind="bad-name")
    if name in EXPRESSION_WORDS:
        raise RuleError(f"'{name}' is a reserved word of the expression language; choose "
                        "another parameter name", key=key, kind="bad-name")


def _value_list(values: list[Any], key: str) -> tuple[float, ...]:
    if not values:
        raise RuleError("list at least one value", key=key, kind="bad-value")
    out: list[float] = []
    for i, value in enumerate(values, start=1):
        number = float(_number(value, key, f"item {i}: "))
        if number in out:
            raise RuleError(f"value {_show(number)} is listed twice", key=key, kind="bad-value")
        out.append(number)
    return tuple(out)


def _value_range(table: _Table) -> ParamRange:
    table.check_keys(RANGE_KEYS)
    for name in RANGE_KEYS:
        table.require(name)
    start, stop, step = (float(_number(table.data[n], table.key(n))) for n in RANGE_KEYS)
    if step <= 0:
        raise RuleError(f"step must be > 0, found {_show(step)}", key=table.key("step"),
                        kind="bad-value")
    if stop < start:
        raise RuleError(f"stop ({_show(stop)}) must be >= start ({_show(start)})",
                        key=table.key("stop"), kind="bad-value")
    too_many = RuleError(f"the range has more than {MAX_VALUES_PER_PARAMETER:,} values",
                         key=table.path, kind="bad-value")
    if not (stop - start) / step <= 2 * MAX_VALUES_PER_PARAMETER:  # also catches overflow to inf
        raise too_many
    result = ParamRange(start, stop, step)
    values = result.values()
    if len(values) > MAX_VALUES_PER_PARAMETER:
        raise too_many
    if len(set(values)) != len(values):
        raise RuleError("the step is too small: values repeat after rounding to 10 decimals",
                        key=table.key("step"), kind="bad-value")
    return result


def _signal(table: _Table, parameters: tuple[Parameter, ...],
            markets: tuple[str, ...]) -> tuple[str, int]:
    table.check_keys(SIGNAL_KEYS)
    position = table.required_string("position")
    _check_expression(position, table.key("position"), series_names=SERIES_NAMES,
                      param_names=tuple(p.name for p in parameters), market_names=markets)
    return position, table.integer("delay", 0, 0)


def _roll(table: _Table | None) -> RollSpec:
    if table is None:
        return RollSpec()
    table.check_keys(roll.roll_keys())
    rule = _chosen_roll_rule(table)
    settings = {s.key: table.integer(s.key, s.default, s.minimum) for s in rule.settings}
    adjust = table.choice(ADJUST_KEY, roll.adjust_method_names(), roll.DEFAULT_ADJUST.name)
    return RollSpec(rule=rule.name, adjust=adjust, **settings)


def _chosen_roll_rule(table: _Table) -> RollRule:
    """The roll rule a ``[roll]`` table chooses by its settings or its switch (the default rule
    when it names none)."""
    choosers = [(s.key, rule) for rule in roll.ROLL_RULE_TABLE for s in rule.settings
                if s.key in table.data]
    switch = table.choice(SWITCH_KEY, roll.switch_rule_names(), None)
    if switch is not None and (switched := roll.roll_rule(switch)) is not None:
        choosers.append((SWITCH_KEY, switched))
    if not choosers:
        return roll.DEFAULT_ROLL_RULE
    first_key, rule = choosers[0]
    for key, other in choosers[1:]:
        if other is not rule:
            raise RuleError(f"give either '{first_key}' or '{key}', not both", key=table.path,
                            kind="bad-value")
    return rule


def _sizing(table: _Table | None) -> SizingSpec:
    if table is None:
        return SizingSpec()
    table.check_keys(SIZING_KEYS)
    has_target = [k for k in ("target_vol", "capital", "vol_window") if k in table.data]
    if "contracts" in table.data:
        target = [k for k in has_target if k != "capital"]  # a capital measures the figures
        if target:
            raise RuleError("choose one sizing: 'contracts', or 'target_vol' with 'capital' "
                            f"(and optional 'vol_window'), not both; found {_quoted(target)} "
                            "next to 'contracts'", key=table.path, kind="bad-value")
        return SizingSpec(contracts=table.number("contracts", positive=True),
                          capital=table.number("capital", positive=True)
                          if "capital" in table.data else None)
    if not has_target:
        raise RuleError("give 'contracts', or 'target_vol' with 'capital'", key=table.path,
                        kind="missing-key")
    for name in ("target_vol", "capital"):
        if name not in table.data:
            raise RuleError("volatility-target sizing needs both 'target_vol' and 'capital'",
                            key=table.key(name), kind="missing-key")
    return SizingSpec(
        contracts=None,
        target_vol=table.number("target_vol", positive=True),
        capital=table.number("capital", positive=True),
        vol_window=table.integer("vol_window", _DEFAULT_VOL_WINDOW, 2),
    )


def _costs(table: _Table | None, markets: tuple[str, ...]) -> dict[str, dict[str, float]]:
    if table is None:
        return {}
    common: dict[str, float] = {}
    costs: dict[str, dict[str, float]] = {}
    for name, value in table.data.items():
        if isinstance(value, dict) and name in markets:
            market = _Table(value, table.key(name))
            market.check_keys(COST_KEYS)
            overrides = {k: market.number(k, positive=False) for k in value}
            if overrides:
                costs[name] = overrides
        elif name in COST_KEYS:
            common[name] = table.number(name, positive=False)
        elif isinstance(value, dict):
            raise RuleError(f"market '{name}' is not listed in markets ({', '.join(markets)})",
                            key=table.key(name), kind="unknown-key")
        else:
            raise RuleError(f"unknown key '{name}'; allowed keys: {', '.join(COST_KEYS)}, "
                            "or a table [costs.MARKET] per market", key=table.key(name),
                            kind="unknown-key")
    return {"*": common, **costs} if common else costs


def _check_expression(text: str, key: str, *, series_names: tuple[str, ...],
                      param_names: tuple[str, ...], market_names: tuple[str, ...] = ()) -> None:
    from hunchbook.core.expr import parse_expression

    try:
        parse_expression(text, series_names=series_names, param_names=param_names,
                         market_names=market_names)
    except RuleError as err:
        raise err.located(key=key, kind="expression") from None


def _function_names() -> frozenset[str]:
    from hunchbook.core.expr import FUNCTIONS

    return frozenset(FUNCTIONS)


def _number(value: Any, key: str, where: str = "") -> int | float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise RuleError(f"{where}expected a number, found {_describe(value)}", key=key,
                        kind="bad-value")
    if not math.isfinite(value):
        raise RuleError(f"{where}expected a finite number, found {value}", key=key,
                        kind="bad-value")
    return value


def _describe(value: Any) -> str:
    """Type and (shortened) value of a TOML value, for error messages."""
    if isinstance(value, bool):
        return f"boolean {str(value).lower()}"
    if isinstance(value, int | float):
        return f"number {_show(value)}"
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f"string {shown!r}"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, dt.datetime):
        return f"date-time {value.isoformat()}"
    if isinstance(value, dt.date):
        return f"date {value.isoformat()}"
    if isinstance(value, dt.time):
        return f"time {value.isoformat()}"
    return type(value).__name__


def _show(number: float) -> str:
    """A number as a user would write it: 20 rather than 20.0."""
    if isinstance(number, float) and number.is_integer() and abs(number) < 2**53:
        return str(int(number))
    return str(number)


def _quoted(names: Collection[str]) -> str:
    return ", ".join(f"'{n}'" for n in names)
