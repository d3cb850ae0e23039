"""Errors raised for bad user input; each renders as one clear line naming where the problem is."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal

#: What a :class:`RuleError` is about; the parser sets it, and with it where ``span`` points:
#: ``file`` the file or text as a whole (missing, unreadable, too large, not UTF-8), no span;
#: ``toml-syntax`` the text is not TOML, span at the character where reading stopped;
#: ``unknown-key`` a key the format does not have, span on the key;
#: ``bad-name`` a name the user chose (a parameter) that is not allowed, span on the key;
#: ``missing-key`` a required key is absent, span on the table it belongs in;
#: ``bad-value`` a value of the wrong type or out of range, span on the value (or table header);
#: ``expression`` an expression that cannot be read, span on the offending token in the string.
RuleErrorKind = Literal["file", "toml-syntax", "unknown-key", "bad-name", "missing-key",
                        "bad-value", "expression"]
RULE_ERROR_KINDS: tuple[RuleErrorKind, ...] = (
    "file", "toml-syntax", "unknown-key", "bad-name", "missing-key", "bad-value", "expression")


class HunchbookError(Exception):
    """Base class of every error caused by user input (shown to users without a traceback)."""


@dataclass(frozen=True)
class TextSpan:
    """A stretch of a rule text, as an editor counts it.

    ``line`` and ``column`` (both from 1) name the first character; ``end_line`` and
    ``end_column`` the position just after the last one, so an empty span (end equal to start)
    is a point, such as a missing value at the end of a line. Lines are separated by ``\\n``;
    columns count characters (code points) from the start of the line, without a leading
    byte-order mark.
    """

    line: int
    column: int
    end_line: int
    end_column: int


@dataclass(eq=False)
class RuleError(HunchbookError):
    """A problem in a rule file or in one of its expressions.

    ``file`` is the rule file, ``key`` the TOML key (for example ``"signal.position"``),
    ``column`` the 1-based column of the offending token inside that key's expression, ``kind``
    what the problem is about and ``span`` where it sits in the rule text (both set by the
    rule-file parser; ``None`` where the error did not come from a rule text).
    """

    problem: str
    file: str | None = None
    key: str | None = None
    column: int | None = None
    kind: RuleErrorKind | None = None
    span: TextSpan | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def located(self, *, file: str | None = None, key: str | None = None,
                kind: RuleErrorKind | None = None) -> RuleError:
        """Return a copy with the file, key and kind filled in where they were still unknown."""
        return replace(self, file=self.file or file, key=self.key or key, kind=self.kind or kind)

    def at(self, span: TextSpan | None) -> RuleError:
        """Return a copy pointing at ``span`` of the rule text (``None``: at no place)."""
        return replace(self, span=span)

    def __str__(self) -> str:
        where = [p for p in (self.file, self.key and f"key '{self.key}'") if p]
        if self.span is not None:
            where.append(f"line {self.span.line}, column {self.span.column}")
        elif self.column is not None:
            where.append(f"column {self.column}")
        return f"{', '.join(where)}: {self.problem}" if where else self.problem


@dataclass(eq=False)
class DataError(HunchbookError):
    """A problem in a price data file or data folder; ``line`` is the 1-based line in the file."""

    problem: str
    file: str | None = None
    line: int | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def __str__(self) -> str:
        where = self.file or ""
        if self.line is not None:
            where += f", line {self.line}" if where else f"line {self.line}"
        return f"{where}: {self.problem}" if where else self.problem


@dataclass(eq=False)
class MarketSpecError(HunchbookError):
    """A problem in a market library (contract specifications) file."""

    problem: str
    file: str | None = None
    market: str | None = None
    key: str | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def __str__(self) -> str:
        where = [p for p in (self.file, self.market and f"market '{self.market}'",
                             self.key and f"key '{self.key}'") if p]
        return f"{', '.join(where)}: {self.problem}" if where else self.problem


@dataclass(eq=False)
class RecordError(HunchbookError):
    """A stored or exchanged run record that does not have the expected shape; ``field`` is
    the dotted path of the field at fault (for example ``"statistics.net.sharpe"``)."""

    problem: str
    field: str | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def __str__(self) -> str:
        return f"field '{self.field}': {self.problem}" if self.field else self.problem
