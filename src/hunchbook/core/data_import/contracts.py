"""Contracts named in file names: the futures month codes, the file-name pattern, expiry rules.

The month codes F G H J K M N Q U V X Z for January to December are common practice (no
source). Business days here are Monday to Friday; exchange holidays are not known.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from hunchbook.core.errors import DataError

#: Futures delivery-month codes, January to December (common practice, no source).
MONTH_CODES = dict(zip("FGHJKMNQUVXZ", range(1, 13), strict=True))
#: The file-name pattern used when none is given: ``CORNZ2019.csv``, ``CLF25.csv``.
DEFAULT_PATTERN = "{market}{month}{year}"
_FIELDS = {"market": r"(?P<market>[A-Za-z0-9_]+?)",
           "month": r"(?P<month>[FGHJKMNQUVXZfghjkmnquvxz])",
           "year": r"(?P<year>\d{4}|\d{2})"}


@dataclass(frozen=True)
class ContractName:
    """A contract read from a name: market, delivery year and month."""

    market: str
    year: int
    month: int

    @property
    def code(self) -> str:
        """The contract code written to the data folder, e.g. ``CORNZ2019``."""
        letter = "FGHJKMNQUVXZ"[self.month - 1]
        return f"{self.market}{letter}{self.year}"


def pattern_regex(pattern: str) -> re.Pattern[str]:
    """The regular expression of a file-name pattern made of ``{market}``, ``{month}`` (the
    month code letter), ``{year}`` (two or four digits) and literal text.

    Raises
    ------
    DataError
        When a field is unknown or one of the three is missing.
    """
    parts, at = [], 0
    for found in re.finditer(r"\{([^}]*)\}", pattern):
        name = found.group(1)
        if name not in _FIELDS:
            raise DataError(f"file-name pattern {pattern!r}: unknown field {{{name}}} "
                            "(expected {market}, {month} and {year})")
        parts += [re.escape(pattern[at:found.start()]), _FIELDS[name]]
        at = found.end()
    parts.append(re.escape(pattern[at:]))
    regex = "".join(parts)
    missing = [f for f in _FIELDS if f"(?P<{f}>" not in regex]
    if missing:
        raise DataError(f"file-name pattern {pattern!r} lacks "
                        f"{', '.join('{' + m + '}' for m in missing)}")
    return re.compile(regex)


def parse_contract_name(stem: str, regex: re.Pattern[str]) -> ContractName | None:
    """The contract a file stem (or contract code) names, or ``None`` when it does not match."""
    found = regex.fullmatch(stem)
    if found is None:
        return None
    year = int(found["year"])
    if len(found["year"]) == 2:
        year += 2000 if year < 70 else 1900  # two-digit years: 1970-2069
    return ContractName(found["market"], year, MONTH_CODES[found["month"].upper()])


def _busday(day: dt.date, offset: int) -> dt.date:
    moved = np.busday_offset(np.datetime64(day, "D"), offset, roll="backward" if offset <= 0
                             else "forward")
    return dt.date.fromisoformat(str(moved))


def _before_first(year: int, month: int, n: int) -> dt.date:
    return _busday(dt.date(year, month, 1) - dt.timedelta(days=1), -(n - 1))


def _before_day(year: int, month: int, day: int, n: int) -> dt.date:
    # the n-th business day strictly before the given calendar day
    return _busday(dt.date(year, month, day) - dt.timedelta(days=1), -(n - 1))


def _third_friday(year: int, month: int) -> dt.date:
    first = dt.date(year, month, 1)
    return first + dt.timedelta(days=(4 - first.weekday()) % 7 + 14)


def _last_business_day(year: int, month: int) -> dt.date:
    nxt = dt.date(year + month // 12, month % 12 + 1, 1)
    return _busday(nxt - dt.timedelta(days=1), 0)


@dataclass(frozen=True)
class ExpiryRule:
    """One way to date a contract's expiry from its delivery year and month."""

    name: str
    args: tuple[str, ...]
    text: str
    compute: Callable[..., dt.date]


#: Every expiry rule: name -> rule. Written as ``name`` or ``name:arg:arg``.
EXPIRY_RULES = {rule.name: rule for rule in (
    ExpiryRule("before-first", ("N",), "the N-th business day before the first day of the "
               "delivery month", _before_first),
    ExpiryRule("before-day", ("DAY", "N"), "the N-th business day before calendar day DAY of "
               "the delivery month", _before_day),
    ExpiryRule("third-friday", (), "the third Friday of the delivery month", _third_friday),
    ExpiryRule("last-business-day", (), "the last business day of the delivery month",
               _last_business_day),
)}


def expiry_from_rule(rule: str, year: int, month: int) -> dt.date:
    """The expiry that ``rule`` (e.g. ``"before-day:15:1"``) gives a contract of that delivery
    year and month.

    Raises
    ------
    DataError
        When the rule is unknown or its arguments are not whole numbers.
    """
    name, *args = rule.strip().split(":")
    known = ", ".join(f"{r.name}{''.join(':' + a for a in r.args)}"
                      for r in EXPIRY_RULES.values())
    found = EXPIRY_RULES.get(name)
    if found is None or len(args) != len(found.args) or not all(a.isdigit() for a in args):
        raise DataError(f"expiry rule {rule!r} not understood (expected one of: {known})")
    values = [int(a) for a in args]
    if name == "before-day" and not 1 <= values[0] <= 28:
        raise DataError(f"expiry rule {rule!r}: DAY must be 1 to 28")
    if values and values[-1] < 1:
        raise DataError(f"expiry rule {rule!r}: N must be at least 1")
    return found.compute(year, month, *values)
