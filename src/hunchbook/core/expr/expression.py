"""The parsed expression object handed to the rest of Hunchbook."""

from __future__ import annotations

from collections.abc import Collection, Mapping
from dataclasses import dataclass, field

import numpy as np

from hunchbook.core.errors import RuleError
from hunchbook.core.expr.cross_section import DateGrid
from hunchbook.core.expr.evaluate import bind, evaluate_bound, lookback
from hunchbook.core.expr.functions import FUNCTION_SPECS
from hunchbook.core.expr.nodes import DATA_NODES, Call, EventRef, Node, ParamRef, SeriesRef
from hunchbook.core.expr.parser import parse_tree


@dataclass(frozen=True)
class Expression:
    """A checked expression, ready to evaluate. Immutable and hashable.

    Build one with :func:`parse_expression`.
    """

    text: str
    root: Node = field(repr=False)
    _data: tuple[SeriesRef | EventRef, ...] = field(init=False, repr=False, compare=False)
    _series: frozenset[str] = field(init=False, repr=False, compare=False)
    _params: frozenset[str] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        nodes = list(self.root.walk())
        first: dict[str, SeriesRef | EventRef] = {}
        for node in sorted((n for n in nodes if isinstance(n, DATA_NODES)),
                           key=lambda n: n.column):
            first.setdefault(node.key, node)
        object.__setattr__(self, "_data", tuple(first.values()))
        object.__setattr__(self, "_series", frozenset(node.key for node in self._data))
        object.__setattr__(self, "_params", frozenset(
            node.name for node in nodes if isinstance(node, ParamRef)))

    def series_used(self) -> frozenset[str]:
        """Keys of the series the expression reads, as :meth:`evaluate` looks them up:
        ``close``, another market's ``close["GOLD"]``, an event's ``event("report")``."""
        return self._series

    def data_used(self) -> tuple[SeriesRef | EventRef, ...]:
        """The series and events the expression reads: one node per key, at its first
        (leftmost) use in the text, in the order of those columns."""
        return self._data

    def compares_markets(self) -> bool:
        """Whether a market's value depends on other markets' values the same day (a function
        across markets, such as ``cs_rank``): then the markets cannot be computed apart."""
        return any(isinstance(node, Call) and FUNCTION_SPECS[node.function].cross_sectional
                   for node in self.root.walk())

    def params_used(self) -> frozenset[str]:
        """Names of the parameters the expression reads."""
        return self._params

    def max_lookback(self, params: Mapping[str, float]) -> int:
        """Bars of history needed before the expression can have a value.

        On data without gaps, the first defined value is at bar index ``max_lookback(params)``;
        nested windows add up (``mean(lag(close, 5), 20)`` needs 5 + 19 = 24 bars). For
        ``bars_since``, undefined until its condition is first true, it is the first bar that
        can have a value.

        Raises
        ------
        RuleError
            For a missing parameter or a window out of range, with its column.
        """
        return lookback(bind(self.root, params))

    def evaluate(self, series: Mapping[str, np.ndarray], params: Mapping[str, float],
                 cache: dict | None = None, *,
                 date_index: np.ndarray | DateGrid | None = None) -> np.ndarray | float:
        """Compute the expression at the close of every bar.

        Parameters
        ----------
        series
            Arrays of shape (bars, markets) (or (bars,)) by the keys of :meth:`series_used`, all
            of one shape; each column is one market's bars, oldest first. Infinite values count
            as missing (NaN).
        params
            Parameter values by name.
        cache
            Optional store of shared sub-results (results of the series functions ``mean``,
            ``ewm``, ``lag``, ``hold``, ``cs_rank``, ...), keyed by the call after parameter
            substitution, so that ``mean(close, fast)`` with ``fast = 20`` and
            ``mean(close, 20)`` are computed once. Share one cache only between evaluations
            over the same series and ``date_index``; its arrays are read-only.
        date_index
            Optional integer array of the series' shape: each cell's position on an axis of
            dates shared by the markets, -1 where a cell is no bar (padding), as
            :attr:`hunchbook.core.panel.Panel.date_index`. The cross-sectional functions
            (``cs_rank``, ...) compare markets on the same date through it; without it, row
            ``r`` of every column is taken as the same date. A
            :class:`~hunchbook.core.expr.cross_section.DateGrid` built from it may be given
            instead, to reuse its placement between evaluations.

        Returns
        -------
        numpy.ndarray or float
            An array of the series' shape when the expression reads a series, else a float
            (a constraint such as ``fast < slow`` gives 1.0 or 0.0). Missing values are NaN;
            a value is NaN until all of its windows are full.

        Raises
        ------
        RuleError
            For a missing series or parameter, or a window out of range (with its column).
        ValueError
            When the series arrays are not all of one 1-D or 2-D shape, or ``date_index`` is
            not of their shape.
        """
        bound = bind(self.root, params)
        arrays, shape = _prepare_series(series, self._series)
        given = date_index.shape if isinstance(date_index, DateGrid) else np.shape(date_index)
        if date_index is not None and shape and given != shape:
            raise ValueError(f"date_index has shape {given}; the series have shape {shape}")
        result = evaluate_bound(bound, arrays, shape, cache, date_index)
        if not self._data:
            return float(result)
        if not isinstance(result, np.ndarray):
            return np.full(shape, result)
        return result if result.flags.writeable else result.copy()


def _prepare_series(series: Mapping[str, np.ndarray],
                    names: frozenset[str]) -> tuple[dict[str, np.ndarray], tuple[int, ...]]:
    """Read-only float arrays of the named series with infinities as NaN, and their shape."""
    arrays: dict[str, np.ndarray] = {}
    shape: tuple[int, ...] = ()
    for name in sorted(names):
        if name not in series:
            raise RuleError(f"no data given for series '{name}'")
        array = np.asarray(series[name], dtype=np.float64)
        if array.ndim not in (1, 2) or (arrays and array.shape != shape):
            raise ValueError(f"series '{name}' has shape {array.shape}; expected one 1-D or "
                             f"2-D shape {shape or ''} for all series".replace(" ()", ""))
        if np.isinf(array).any():  # NaN (missing, padding) is fine as it is
            array = np.where(np.isinf(array), np.nan, array)
        array = array.view()
        array.flags.writeable = False
        arrays[name] = array
        shape = array.shape
    return arrays, shape


def parse_expression(text: str, *, series_names: Collection[str],
                     param_names: Collection[str],
                     market_names: Collection[str] = ()) -> Expression:
    """Parse and check an expression.

    Parameters
    ----------
    text
        The expression, e.g. ``"sign(mean(close, fast) - mean(close, slow))"``.
    series_names
        Names the expression may use for price series (``close``, ``volume``, ...).
    param_names
        Names the expression may use for parameters.
    market_names
        Markets whose series the expression may read by name, as in ``close["GOLD"]``.

    Raises
    ------
    RuleError
        For anything outside the language, unknown names, wrong argument counts, windows built
        from series, constant windows or exponents out of range, or text over the size limits;
        with the 1-based column of the offending token where there is one.
    """
    return Expression(text, parse_tree(text, series_names, param_names, market_names))
