"""The built-in functions an expression may call, with their signatures and implementations."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from hunchbook.core.expr import rolling
from hunchbook.core.expr.limits import MAX_WINDOW

#: A computed value: a float, or an array of shape (bars, markets) (or (bars,)).
Value = float | np.ndarray


@dataclass(frozen=True)
class FunctionSpec:
    """One built-in function.

    Window functions take ``(x, n)``: ``x`` must depend on a series and ``n`` (a window or lag
    in bars, at least ``window_min``) must be built from numbers and parameters only. Their value
    is first defined ``n + lookback_offset`` bars after ``x`` is.
    """

    name: str
    args: tuple[str, ...]
    summary: str
    #: None for a function of a name in quotes (``event("report")``), which reads data given
    #: by the caller: the parser turns its call into a :class:`~.nodes.EventRef`.
    compute: Callable[..., Value] | None
    window_min: int | None = None
    window_label: str = "window"
    lookback_offset: int = -1

    @property
    def signature(self) -> str:
        """How a call looks, e.g. ``mean(x, n)``."""
        return f"{self.name}({', '.join(self.args)})"

    @property
    def is_window(self) -> bool:
        """True for functions over a window of past bars, whose second argument is that window."""
        return self.window_min is not None

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
    FunctionSpec("event", ('"name"',),
                 "1 on the dates the data folder's events.csv lists the event (for this market "
                 "or all markets), else 0", None),
)

#: Every built-in function by name.
FUNCTION_SPECS: dict[str, FunctionSpec] = {spec.name: spec for spec in _SPECS}

#: Name -> "signature: description" of every built-in function, for documentation and help.
FUNCTIONS: dict[str, str] = {spec.name: f"{spec.signature}: {spec.summary}" for spec in _SPECS}
