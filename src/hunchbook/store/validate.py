"""Checks applied to every value written to a catalogue, whether typed by a person, passed by
code or read from someone else's bundle: types, sizes, vocabularies and name patterns."""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterable, Mapping
from typing import Any

from hunchbook.store.errors import CatalogueError

#: Longest title and one-line hypothesis (characters).
MAX_TITLE = 200
MAX_HYPOTHESIS = 1_000
#: Longest free text: rationale, journal entry, review comments, citation (characters).
MAX_TEXT = 200_000
#: Longest rule file kept as a revision (characters).
MAX_RULE_TEXT = 1_000_000
#: Longest person name, link, data fingerprint or engine version.
MAX_NAME = 200
#: Most markets or tags on one idea.
MAX_ITEMS = 200
#: Most parameter sets in one run.
MAX_SETS = 1_000_000
#: Largest JSON document stored for a run's summary, statistics or verdict (characters).
MAX_JSON = 50_000_000

_MARKET_RE = re.compile(r"^[A-Za-z0-9_.\-]{1,40}$")
_TAG_RE = re.compile(r"^[^\s,\"\\\x00-\x1f\x7f]{1,40}$")
_CONTROL_RE = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


def text(value: Any, field: str, *, limit: int = MAX_TEXT, required: bool = True,
         one_line: bool = False, strip: bool = True) -> str:
    """A string within ``limit`` characters, without control characters (tabs and newlines
    allowed unless ``one_line``); surrounding whitespace is removed unless ``strip`` is false
    (rule files are kept byte for byte)."""
    if not isinstance(value, str):
        raise CatalogueError(f"expected text, found {_describe(value)}", field=field)
    if len(value) > limit:
        raise CatalogueError(f"text of {len(value):,} characters is longer than the limit of "
                             f"{limit:,}", field=field)
    if strip:
        value = value.strip()
    if required and not value.strip():
        raise CatalogueError("must not be empty", field=field)
    if _CONTROL_RE.search(value) or (one_line and ("\n" in value or "\r" in value)):
        raise CatalogueError("contains control characters" + (" or line breaks" if one_line
                                                               else ""), field=field)
    return value


def optional_text(value: Any, field: str, *, limit: int = MAX_TEXT,
                  one_line: bool = False) -> str | None:
    """Like :func:`text` but ``None`` (or blank) means absent."""
    if value is None:
        return None
    return text(value, field, limit=limit, required=False, one_line=one_line) or None


def name(value: Any, field: str) -> str:
    """A person's name or similar short label: one line, not empty."""
    return text(value, field, limit=MAX_NAME, one_line=True)


def choice(value: Any, field: str, options: Iterable[str]) -> str:
    """One of ``options``."""
    options = tuple(options)
    if not isinstance(value, str) or value not in options:
        raise CatalogueError(f"expected one of {', '.join(options)}, found {_describe(value)}",
                             field=field)
    return value


def markets(values: Any, field: str = "markets") -> tuple[str, ...]:
    """Market names (letters, digits, ``_ . -``), no repeats, order kept."""
    return _names(values, field, _MARKET_RE, "a market name made of letters, digits, '_', '.' "
                                             "or '-'")


def tags(values: Any, field: str = "tags") -> tuple[str, ...]:
    """Tags: short words without spaces or commas, no repeats, order kept."""
    return _names(values, field, _TAG_RE, "a tag of up to 40 characters without spaces, "
                                          "commas, quotes or backslashes")


def _names(values: Any, field: str, pattern: re.Pattern[str], expected: str) -> tuple[str, ...]:
    if isinstance(values, str) or not isinstance(values, Iterable):
        raise CatalogueError(f"expected a list, found {_describe(values)}", field=field)
    out: list[str] = []
    for i, value in enumerate(values):
        if i >= MAX_ITEMS:
            raise CatalogueError(f"more than {MAX_ITEMS} items", field=field)
        if not isinstance(value, str) or not pattern.match(value):
            raise CatalogueError(f"item {i + 1}: expected {expected}, found {_describe(value)}",
                                 field=field)
        if value in out:
            raise CatalogueError(f"'{value}' is listed twice", field=field)
        out.append(value)
    return tuple(out)


def integer(value: Any, field: str, *, minimum: int = 1) -> int:
    """An int (not a bool) of at least ``minimum``."""
    if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
        raise CatalogueError(f"expected a whole number >= {minimum}, found {_describe(value)}",
                             field=field)
    return value


def param_set(value: Any, field: str) -> dict[str, float]:
    """One parameter set: parameter name -> finite number."""
    if not isinstance(value, Mapping):
        raise CatalogueError(f"expected a table of parameter values, found {_describe(value)}",
                             field=field)
    out: dict[str, float] = {}
    for key, number in value.items():
        if not isinstance(key, str) or not re.match(r"^[A-Za-z_][A-Za-z0-9_]{0,63}$", key):
            raise CatalogueError(f"bad parameter name {_describe(key)}", field=field)
        out[key] = finite(number, f"{field}.{key}")
    return out


def finite(value: Any, field: str) -> float:
    """A finite real number (numpy scalars accepted)."""
    try:
        if isinstance(value, bool | str | bytes):
            raise TypeError
        number = float(value)
    except (TypeError, ValueError):
        raise CatalogueError(f"expected a number, found {_describe(value)}",
                             field=field) from None
    if not math.isfinite(number):
        raise CatalogueError(f"expected a finite number, found {number}", field=field)
    return number


def optional_number(value: Any, field: str) -> float | None:
    """A finite number, or ``None`` for missing / NaN (a Sharpe ratio of a flat series)."""
    if value is None:
        return None
    try:
        if isinstance(value, bool | str | bytes):
            raise TypeError
        number = float(value)
    except (TypeError, ValueError):
        raise CatalogueError(f"expected a number or nothing, found {_describe(value)}",
                             field=field) from None
    return number if math.isfinite(number) else None


def plain_data(value: Any, field: str, depth: int = 0) -> Any:
    """A JSON-ready copy of ``value``: dicts with text keys, lists, text, numbers, booleans and
    ``None``. numpy scalars become Python numbers; NaN and infinities become ``None``."""
    if depth > 32:
        raise CatalogueError("nested more than 32 levels deep", field=field)
    if value is None or isinstance(value, bool | str):
        return value
    if isinstance(value, int):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if hasattr(value, "item") and hasattr(value, "dtype") and getattr(value, "ndim", 1) == 0:
        return plain_data(value.item(), field, depth + 1)
    if isinstance(value, Mapping):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise CatalogueError(f"keys must be text, found {_describe(key)}", field=field)
            out[key] = plain_data(item, f"{field}.{key}", depth + 1)
        return out
    if isinstance(value, list | tuple):
        return [plain_data(item, f"{field}[{i}]", depth + 1) for i, item in enumerate(value)]
    raise CatalogueError(f"cannot store {_describe(value)}; use numbers, text, lists and tables",
                         field=field)


def to_json(value: Any, field: str) -> str:
    """Validate with :func:`plain_data` and encode as compact JSON within :data:`MAX_JSON`."""
    encoded = json.dumps(plain_data(value, field), separators=(",", ":"), allow_nan=False)
    if len(encoded) > MAX_JSON:
        raise CatalogueError(f"{len(encoded):,} characters of JSON is over the limit of "
                             f"{MAX_JSON:,}", field=field)
    return encoded


def _describe(value: Any) -> str:
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f"text {shown!r}"
    if value is None:
        return "nothing"
    return f"{type(value).__name__} {str(value)[:40]}"
