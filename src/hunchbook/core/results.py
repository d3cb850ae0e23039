"""The one shape of a run's results: typed, frozen records with a schema number.

A :class:`RunSummary` is built in one place (:func:`build_run_summary`) from a sweep's per-set
figures, the chosen set's full figures, the first-pass statistics and the verdict. The command
line writes its ``to_dict`` as JSON, the catalogue stores and returns it, and the presenter
(:mod:`hunchbook.core.presenter`) turns it into the rows that the command line, the window and
the HTML report show.

``to_dict`` gives plain JSON values (NaN and infinities become ``None``, tuples lists);
``from_dict`` reads them back, checking every field's type and naming the field at fault.
"""

from __future__ import annotations

import dataclasses
import math
import types
import typing
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cache
from typing import Any

from hunchbook.core.book import BookComparison
from hunchbook.core.capital_figures import CapitalFigures
from hunchbook.core.data_changes import DataChanges
from hunchbook.core.errors import RecordError
from hunchbook.core.plain import json_safe
from hunchbook.core.set_figures import SetFigures
from hunchbook.core.stats.first_pass import FirstPassStats
from hunchbook.core.verdict import Verdict

#: Version of the record's shape; raised whenever a field is removed or renamed, or a field is
#: added that a reader cannot do without. An optional field with a default (``book``,
#: ``market_fingerprints``, ``data_changes``, ``capital``) keeps it:
#: records without the field read with the default, and readers that do not know it skip it.
SCHEMA = 2
#: Earlier shapes still read: schema 1 had no ``holdout_boundary`` (read as ``None``).
READABLE_SCHEMAS = (1, SCHEMA)


@dataclass(frozen=True)
class PnlFigures:
    """Figures of one daily P&L series (gross or net), as
    :func:`hunchbook.core.metrics.pnl_stats` defines them; NaN when undefined."""

    total: float
    ann_mean: float
    ann_vol: float
    sharpe: float
    t_stat: float
    max_drawdown: float


@dataclass(frozen=True)
class Performance:
    """The chosen set's portfolio figures over its whole history (see
    :func:`hunchbook.core.metrics.summarise`); ``cost_per_year`` maps a year to its cost."""

    days: int
    first_date: str | None
    last_date: str | None
    years: float
    gross: PnlFigures
    net: PnlFigures
    trades: float
    trades_per_year: float
    contracts_traded: float
    contracts_per_year: float
    cost_total: float
    cost_per_year: dict[str, float]
    cost_share_of_gross: float
    break_even_cost: float


@dataclass(frozen=True)
class MarketFigures:
    """One market's part of the chosen set: P&L, Sharpe ratios, cost and trading."""

    market: str
    gross_total: float
    net_total: float
    gross_sharpe: float
    net_sharpe: float
    cost_total: float
    contracts_traded: float
    contracts_per_year: float
    break_even_cost: float


@dataclass(frozen=True)
class SetSummary:
    """One parameter set of a sweep: its portfolio figures over its own history."""

    params: dict[str, float]
    gross_sharpe: float
    net_sharpe: float
    gross_total: float
    net_total: float
    net_max_drawdown: float
    trades_per_year: float
    contracts_per_year: float
    cost_total: float
    break_even_cost: float


@dataclass(frozen=True)
class ChosenSet:
    """The set the statistics judge, in full: portfolio figures and one row per market."""

    params: dict[str, float]
    performance: Performance
    markets: tuple[MarketFigures, ...]


@dataclass(frozen=True)
class RunSummary:
    """A whole quick run: what ran, every set's figures, the chosen set, statistics, verdict.

    ``sets`` are in grid order; ``statistics.chosen`` is the chosen set's position in them.
    ``holdout_boundary`` is the holdout boundary (``YYYY-MM-DD``) the data were cut at: the
    run saw only the dates before it (``None``: the whole history). ``book`` is the chosen set
    against the promoted ideas (:mod:`hunchbook.core.book`; ``None``: not compared, as for a
    run outside the catalogue or one recorded before the comparison existed).
    ``market_fingerprints`` holds one digest per market of the rows read
    (:func:`hunchbook.core.prices.market_fingerprints`; ``None``: not recorded, as for a run
    recorded before they existed) and ``data_changes`` which markets changed since the idea's
    last run (:mod:`hunchbook.core.data_changes`; ``None``: nothing changed, or a first run).
    ``capital`` holds the chosen set's figures against the capital it was measured on (the
    capital itself, returns and drawdowns in % of it, the drawdown's length, the year-by-year
    table: :mod:`hunchbook.core.capital_figures`; ``None``: recorded before they existed).
    """

    name: str
    markets: tuple[str, ...]
    currency: str
    data_folder: str
    sets: tuple[SetSummary, ...]
    chosen: ChosenSet
    statistics: FirstPassStats
    verdict: Verdict
    holdout_boundary: str | None = None
    book: BookComparison | None = None
    market_fingerprints: dict[str, str] | None = None
    data_changes: DataChanges | None = None
    capital: CapitalFigures | None = None
    schema: int = SCHEMA

    @property
    def parameter_sets(self) -> list[dict[str, float]]:
        """The parameter sets run, in grid order."""
        return [dict(s.params) for s in self.sets]

    def ranked(self) -> list[int]:
        """Set positions from the best net Sharpe ratio down (undefined ones last)."""
        def key(k: int) -> float:
            value = self.sets[k].net_sharpe
            return value if math.isfinite(value) else -math.inf

        return sorted(range(len(self.sets)), key=key, reverse=True)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON values: NaN and infinities become None, tuples become lists."""
        return json_safe(dataclasses.asdict(self))

    @classmethod
    def from_dict(cls, data: Any) -> RunSummary:
        """Read a record written by :meth:`to_dict`, checking every field.

        Raises
        ------
        RecordError
            A field is missing or of the wrong kind, or the schema is not this version's.
        """
        if not isinstance(data, Mapping):
            raise RecordError("expected a table of run results", field="run")
        schema = data.get("schema")
        if schema not in READABLE_SCHEMAS:
            raise RecordError(f"expected results of schema {SCHEMA}, found {schema!r} (written "
                              "by another version of Hunchbook)", field="schema")
        return dataclasses.replace(_read(cls, data, ""), schema=SCHEMA)


def build_run_summary(*, name: str, markets: Sequence[str], currency: str, data_folder: str,
                      parameter_sets: Sequence[Mapping[str, float]],
                      set_figures: SetFigures, chosen_metrics: Mapping[str, Any],
                      statistics: FirstPassStats, verdict: Verdict,
                      holdout_boundary: str | None = None,
                      capital: CapitalFigures | None = None) -> RunSummary:
    """The run record of a sweep: the one place where the engine's figures become a record.

    ``set_figures`` holds every set's figures over its own history (in set order);
    ``chosen_metrics`` the chosen set's full metrics (``portfolio``
    as :func:`hunchbook.core.metrics.summarise` gives them, ``markets`` per market);
    ``holdout_boundary`` the date the data were cut at, if any; ``capital`` the chosen set's
    figures against its capital (:func:`hunchbook.core.capital_figures.capital_figures`).
    """
    if len(set_figures) != len(parameter_sets):
        raise ValueError(f"{len(set_figures)} sets' figures for {len(parameter_sets)} sets")
    sets = tuple(SetSummary(params={k: float(v) for k, v in p.items()}, **set_figures.row(k))
                 for k, p in enumerate(parameter_sets))
    chosen = ChosenSet(
        params=dict(parameter_sets[statistics.chosen]),
        performance=_read(Performance, json_safe(chosen_metrics["portfolio"]), "portfolio"),
        markets=tuple(_market_figures(market, m)
                      for market, m in chosen_metrics.get("markets", {}).items()))
    return RunSummary(name=name, markets=tuple(markets), currency=currency,
                      data_folder=data_folder, sets=sets, chosen=chosen, statistics=statistics,
                      verdict=verdict, holdout_boundary=holdout_boundary, capital=capital)


def _market_figures(market: str, m: Mapping[str, Any]) -> MarketFigures:
    return MarketFigures(
        market=market, gross_total=m["gross"]["total"], net_total=m["net"]["total"],
        gross_sharpe=m["gross"]["sharpe"], net_sharpe=m["net"]["sharpe"],
        cost_total=m["cost_total"], contracts_traded=m["contracts_traded"],
        contracts_per_year=m["contracts_per_year"], break_even_cost=m["break_even_cost"])


def read_record(kind: Any, value: Any, field: str = "") -> Any:
    """``value`` (plain JSON values) read as the record class ``kind``, checking every field.

    Raises
    ------
    RecordError
        Naming the field (under ``field``) that is missing or of the wrong kind.
    """
    return _read(kind, value, field)


@cache
def _hints(cls: type) -> dict[str, Any]:
    return typing.get_type_hints(cls)


def _read(kind: Any, value: Any, field: str) -> Any:
    """``value`` read as ``kind`` (a record class, or a plain type hint), or a RecordError."""
    origin = typing.get_origin(kind)
    args = typing.get_args(kind)
    if dataclasses.is_dataclass(kind):
        if not isinstance(value, Mapping):
            raise RecordError("expected a table", field=field or "run")
        out = {}
        for f in dataclasses.fields(kind):
            name = f"{field}.{f.name}" if field else f.name
            if f.name not in value:
                if f.default is not dataclasses.MISSING:
                    continue
                raise RecordError("missing", field=name)
            out[f.name] = _read(_hints(kind)[f.name], value[f.name], name)
        return kind(**out)
    if origin in (typing.Union, types.UnionType):
        if value is None and type(None) in args:
            return None
        options = [a for a in args if a is not type(None)]
        if len(options) == 1:
            return _read(options[0], value, field)
        if any(_is(value, a) for a in options):
            return value
        raise RecordError(f"expected one of {', '.join(_name(a) for a in options)}, "
                          f"got {_shown(value)}", field=field)
    if origin is tuple:
        if not isinstance(value, list | tuple):
            raise RecordError(f"expected a list, got {_shown(value)}", field=field)
        return tuple(_read(args[0], v, f"{field}[{i}]") for i, v in enumerate(value))
    if origin is dict:
        if not isinstance(value, Mapping):
            raise RecordError(f"expected a table, got {_shown(value)}", field=field)
        return {str(k): _read(args[1], v, f"{field}.{k}") for k, v in value.items()}
    if kind is float:
        if value is None:
            return math.nan
        if not _is(value, float):
            raise RecordError(f"expected a number, got {_shown(value)}", field=field)
        return float(value)
    if not _is(value, kind):
        raise RecordError(f"expected {_name(kind)}, got {_shown(value)}", field=field)
    return value


def _is(value: Any, kind: Any) -> bool:
    if kind is float:
        return isinstance(value, int | float) and not isinstance(value, bool)
    if kind is int:
        return isinstance(value, int) and not isinstance(value, bool)
    return isinstance(value, kind)


def _name(kind: Any) -> str:
    return {float: "a number", int: "a whole number", str: "text", bool: "true or false"}.get(
        kind, getattr(kind, "__name__", str(kind)))


def _shown(value: Any) -> str:
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


__all__ = ["READABLE_SCHEMAS", "SCHEMA", "ChosenSet", "MarketFigures", "Performance",
           "PnlFigures", "RunSummary", "SetSummary", "build_run_summary", "read_record"]
