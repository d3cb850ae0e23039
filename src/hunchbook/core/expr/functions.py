"""The built-in functions an expression may call, with their signatures and implementations."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from hunchbook.core.expr import cross_section, holding, rolling
from hunchbook.core.expr.cross_section import DateGrid
from hunchbook.core.expr.limits import MAX_WINDOW
from hunchbook.core.expr.nodes import Call, Node, Num, SeriesRef

#: A computed value: a float, or an array of shape (bars, markets) (or (bars,)).
Value = float | np.ndarray


@dataclass(frozen=True)
class FunctionSpec:
    """One built-in function.

    Window functions take a window ``n`` (a whole number of bars or a count, at least
    ``window_min``) as argument number ``window_index``, built from numbers and parameters only.
    Their value is first defined ``n + lookback_offset`` bars after the first argument is
    (``lookback_offset`` None: the window adds no bars).

    Series functions (window functions, holding rules marked ``path_dependent`` and functions
    across markets marked ``cross_sectional``) read their first argument, which must depend on
    a series, as a whole array; their calls are never folded into a number and their results
    are cached. A cross-sectional function's ``compute`` takes a
    :class:`~hunchbook.core.expr.cross_section.DateGrid` first. ``implied`` builds, from the
    call's arguments and column, what the function reads besides them (``stop``: ``close`` and
    ``std(diff(close, 1), n)``, so the standard deviation is cached and shared); the parser
    appends those nodes to the call's arguments.
    """

    name: str
    args: tuple[str, ...]
    summary: str
    #: None for a function of a name in quotes (``event("report")``), which reads data given
    #: by the caller: the parser turns its call into a :class:`~.nodes.EventRef`.
    compute: Callable[..., Value] | None
    window_min: int | None = None
    window_label: str = "window"
    lookback_offset: int | None = -1
    window_index: int = 1
    path_dependent: bool = False
    cross_sectional: bool = False
    implied: Callable[[tuple[Node, ...], int], tuple[Node, ...]] | None = None

    @property
    def signature(self) -> str:
        """How a call looks, e.g. ``mean(x, n)``."""
        return f"{self.name}({', '.join(self.args)})"

    @property
    def is_window(self) -> bool:
        """True for functions with a window (or count) argument, argument ``window_index``."""
        return self.window_min is not None

    @property
    def is_series_function(self) -> bool:
        """True for functions that read their first argument as a whole series."""
        return self.is_window or self.path_dependent or self.cross_sectional

    def lookback(self, below: tuple[int, ...], window: int) -> int:
        """Bars before the first value, from each argument's lookback and the window."""
        deepest = max(below, default=0)
        if self.lookback_offset is None:
            return deepest
        return max(deepest, below[0] + window + self.lookback_offset)

    def window_problem(self, value: float) -> str | None:
        """What is wrong with ``value`` as this function's window (None when it is fine)."""
        lowest = self.window_min if self.window_min is not None else 0
        whole = math.isfinite(value) and abs(value - round(value)) <= 1e-9 * max(1.0, abs(value))
        if whole and lowest <= round(value) <= MAX_WINDOW:
            return None
        shown = str(int(round(value))) if whole else f"{value:g}"
        return (f"{self.window_label} of {self.name}() must be a whole number of bars between "
                f"{lowest} and {MAX_WINDOW}, got {shown}")


def _zscore(x: np.ndarray, n: int) -> np.ndarray:
    mean, std = rolling.rolling_mean_std(x, n)
    return (x - mean) / std


def _clip(x: Value, low: Value, high: Value) -> Value:
    return np.minimum(np.maximum(x, low), high)


def _across(kernel: Callable[..., np.ndarray]) -> Callable[..., np.ndarray]:
    """A cross-sectional function from a kernel over (dates, markets) grids."""
    def compute(grid: DateGrid, x: np.ndarray, *args: int) -> np.ndarray:
        return grid.gather(kernel(grid.scatter(x), *args))
    return compute


def _stop_reads(args: tuple[Node, ...], column: int) -> tuple[Node, ...]:
    """What ``stop(x, k, n)`` reads besides its arguments: the close and the standard
    deviation of its daily changes over ``n`` bars."""
    close = SeriesRef("close", column)
    return close, Call("std", (Call("diff", (close, Num(1.0, column)), column), args[2]), column)


_SPECS = (
    FunctionSpec("mean", ("x", "n"), "simple moving average of x over the last n bars",
                 rolling.rolling_mean, window_min=1),
    FunctionSpec("sum", ("x", "n"), "sum of x over the last n bars",
                 rolling.rolling_sum, window_min=1),
    FunctionSpec("ewm", ("x", "n"),
                 "exponential moving average of x with span n (weight 2/(n+1) on the newest "
                 "bar), defined once x has n values", rolling.ewm_mean, window_min=1),
    FunctionSpec("std", ("x", "n"),
                 "sample standard deviation (divisor n-1) of x over the last n bars, n >= 2",
                 lambda x, n: rolling.rolling_mean_std(x, n)[1], window_min=2),
    FunctionSpec("max", ("x", "n"), "highest value of x over the last n bars",
                 rolling.rolling_max, window_min=1),
    FunctionSpec("min", ("x", "n"), "lowest value of x over the last n bars",
                 rolling.rolling_min, window_min=1),
    FunctionSpec("zscore", ("x", "n"), "(x - mean(x, n)) / std(x, n), n >= 2",
                 _zscore, window_min=2),
    FunctionSpec("lag", ("x", "k"), "value of x k bars ago", rolling.shift,
                 window_min=0, window_label="lag", lookback_offset=0),
    FunctionSpec("diff", ("x", "k"), "x minus its value k bars ago",
                 lambda x, k: x - rolling.shift(x, k),
                 window_min=0, window_label="lag", lookback_offset=0),
    FunctionSpec("sign", ("x",), "+1 where x > 0, -1 where x < 0, 0 where x = 0", np.sign),
    FunctionSpec("abs", ("x",), "absolute value of x", np.abs),
    FunctionSpec("log", ("x",), "natural logarithm of x (undefined for x <= 0)", np.log),
    FunctionSpec("sqrt", ("x",), "square root of x (undefined for x < 0)", np.sqrt),
    FunctionSpec("clip", ("x", "lo", "hi"), "x limited to the range lo..hi", _clip),
    FunctionSpec("maximum", ("a", "b"), "the larger of a and b, bar by bar", np.maximum),
    FunctionSpec("minimum", ("a", "b"), "the smaller of a and b, bar by bar", np.minimum),
    FunctionSpec("cs_rank", ("x",),
                 "rank of x across the markets at each date, ties averaged, scaled to -1 "
                 "(lowest) .. +1 (highest)", _across(cross_section.rank), cross_sectional=True),
    FunctionSpec("cs_demean", ("x",), "x minus its mean across the markets at each date",
                 _across(cross_section.demean), cross_sectional=True),
    FunctionSpec("cs_zscore", ("x",),
                 "(x - mean) / sample std of x across the markets at each date",
                 _across(cross_section.zscore), cross_sectional=True),
    FunctionSpec("cs_top", ("x", "k"),
                 "1 for the k markets with the highest x at each date (ties at the boundary "
                 "all in), else 0", _across(cross_section.top), window_min=1,
                 window_label="count", lookback_offset=None, cross_sectional=True),
    FunctionSpec("cs_bottom", ("x", "k"),
                 "1 for the k markets with the lowest x at each date (ties at the boundary "
                 "all in), else 0", _across(cross_section.bottom), window_min=1,
                 window_label="count", lookback_offset=None, cross_sectional=True),
    FunctionSpec("hold", ("x", "n"),
                 "a non-zero x kept for n bars (the entry bar included), then 0 unless a new "
                 "entry", holding.hold, window_min=1, lookback_offset=None, path_dependent=True),
    FunctionSpec("latch", ("entry", "exit"),
                 "entry's non-zero value kept until a bar where exit is true, then 0",
                 holding.latch, path_dependent=True),
    FunctionSpec("bars_since", ("c",),
                 "bars since c was last true (0 on that bar; undefined before)",
                 holding.bars_since, path_dependent=True),
    FunctionSpec("stop", ("x", "k", "n"),
                 "x, but 0 once close has moved against the trade's entry close by more than "
                 "k x std of daily changes over n bars at entry, until x changes sign",
                 lambda x, k, n, close, sigma: holding.stop(x, k, close, sigma), window_min=2,
                 window_index=2, lookback_offset=None, path_dependent=True,
                 implied=_stop_reads),
    FunctionSpec("event", ('"name"',),
                 "1 on the dates the data folder's events.csv lists the event (for this market "
                 "or all markets), else 0", None),
)

#: Every built-in function by name.
FUNCTION_SPECS: dict[str, FunctionSpec] = {spec.name: spec for spec in _SPECS}

#: Name -> "signature: description" of every built-in function, for documentation and help.
FUNCTIONS: dict[str, str] = {spec.name: f"{spec.signature}: {spec.summary}" for spec in _SPECS}
