"""Errors raised for bad user input; each renders as one clear line naming where the problem is."""

from __future__ import annotations

from dataclasses import dataclass, replace


class HunchbookError(Exception):
    """Base class of every error caused by user input (shown to users without a traceback)."""


@dataclass(eq=False)
class RuleError(HunchbookError):
    """A problem in a rule file or in one of its expressions.

    ``file`` is the rule file, ``key`` the TOML key (for example ``"signal.position"``) and
    ``column`` the 1-based column of the offending token inside that key's expression.
    """

    problem: str
    file: str | None = None
    key: str | None = None
    column: int | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def located(self, *, file: str | None = None, key: str | None = None) -> RuleError:
        """Return a copy with the file and key filled in where they were still unknown."""
        return replace(self, file=self.file or file, key=self.key or key)

    def __str__(self) -> str:
        where = [p for p in (self.file, self.key and f"key '{self.key}'") if p]
        if self.column is not None:
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
