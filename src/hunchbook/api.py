"""The Python API shared by the command line and the desktop window (and usable in notebooks)."""

from __future__ import annotations

import os
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from typing import Any

import pandas as pd

from hunchbook.core.continuous import build_continuous
from hunchbook.core.engine import Backtest, EngineOutput
from hunchbook.core.errors import DataError, RuleError
from hunchbook.core.expr import parse_expression
from hunchbook.core.metrics import summarise
from hunchbook.core.panel import Panel, build_panel
from hunchbook.core.prices import MarketData
from hunchbook.core.prices import load_data as _load_data
from hunchbook.core.rules import read_rules
from hunchbook.core.rules.model import SERIES_NAMES, RuleSpec

#: Row label of the portfolio in metric tables.
PORTFOLIO = "portfolio"


def load_rules(path: str | os.PathLike[str]) -> RuleSpec:
    """Read and validate a rule file (raises :class:`RuleError` naming file, key and column)."""
    return read_rules(path)


def load_data(folder: str | os.PathLike[str], markets: list[str] | None = None) -> MarketData:
    """Read a data folder's market library and price files (all markets, or those named)."""
    return _load_data(folder, markets)


@dataclass(frozen=True)
class SetResult:
    """One parameter set's engine output and metrics (portfolio and per market)."""

    params: dict[str, float]
    output: EngineOutput
    metrics: dict[str, Any]

    @property
    def pnl(self) -> pd.DataFrame:
        """One row per (date, market): position, price change, gross P&L, cost, net P&L."""
        return self.output.pnl_table()

    @property
    def portfolio(self) -> pd.DataFrame:
        """Daily portfolio P&L indexed by date."""
        return self.output.portfolio()

    def metrics_table(self) -> pd.DataFrame:
        """Metrics as a table: one row per market and the portfolio, gross/net columns."""
        rows = {}
        for name, m in {**self.metrics["markets"], PORTFOLIO: self.metrics[PORTFOLIO]}.items():
            row = {f"{side}_{k}": v for side in ("gross", "net") for k, v in m[side].items()}
            row.update({k: v for k, v in m.items() if not isinstance(v, dict)})
            rows[name] = row
        return pd.DataFrame.from_dict(rows, orient="index")


class Study:
    """A rule file prepared against a data folder: continuous series built once, ready to run.

    Parameters
    ----------
    rules
        The parsed rule file.
    data
        The data folder's contents; must hold every market the rules name.
    """

    def __init__(self, rules: RuleSpec, data: MarketData) -> None:
        self.rules = rules
        missing = [m for m in rules.markets if m not in data.bars]
        if missing:
            raise DataError(f"no price data loaded for market(s) {', '.join(missing)}",
                            file=data.folder)
        self.position = parse_expression(rules.position, series_names=SERIES_NAMES,
                                         param_names=rules.parameter_names)
        self.constraint = (parse_expression(rules.constraint, series_names=(),
                                            param_names=rules.parameter_names)
                           if rules.constraint else None)
        series = []
        for market in rules.markets:
            bars = data.bars[market]
            lacking = self.position.series_used() - {"close"} - bars.columns
            if lacking:
                raise DataError(f"the rule reads {', '.join(sorted(lacking))} but this file has "
                                "no such column", file=bars.file)
            built = build_continuous(bars, rules.roll)
            series.append(built)
        specs = [_with_overrides(data.library[m], rules.costs) for m in rules.markets]
        self.panel: Panel = build_panel(series, specs)
        self.backtest = Backtest(self.panel, self.position, rules.sizing, delay=rules.delay,
                                 start=rules.start, end=rules.end)

    def parameter_sets(self, fixed: Mapping[str, float] | None = None) -> list[dict[str, float]]:
        """Declared parameter sets that satisfy the constraint, optionally filtered by values."""
        fixed = dict(fixed or {})
        for name, value in fixed.items():
            declared = next((p for p in self.rules.parameters if p.name == name), None)
            if declared is None:
                raise RuleError(f"unknown parameter '{name}' (declared: "
                                f"{', '.join(self.rules.parameter_names) or 'none'})",
                                key="parameters")
            if value not in declared.values():
                raise RuleError(f"{name}={value:g} is not one of the declared values "
                                f"({', '.join(f'{v:g}' for v in declared.values())})",
                                key=f"parameters.{name}")
        sets = [s for s in self._iter_allowed() if all(s[k] == v for k, v in fixed.items())]
        if not sets:
            raise RuleError("no declared parameter set satisfies the constraint"
                            + (" with the values asked for" if fixed else ""),
                            key="parameters.constraint")
        return sets

    def _iter_allowed(self) -> Iterator[dict[str, float]]:
        for params in self.rules.iter_grid():
            if self.constraint is None or self.constraint.evaluate({}, params) == 1.0:
                yield params

    def run_set(self, params: Mapping[str, float]) -> SetResult:
        """Run one parameter set and summarise it, gross and net, per market and portfolio."""
        output = self.backtest.run(params)
        markets = {m: summarise(output.market_frame(j)) for j, m in enumerate(self.panel.markets)}
        metrics = {PORTFOLIO: summarise(output.portfolio()), "markets": markets}
        return SetResult(params=dict(params), output=output, metrics=metrics)


def run(rules: RuleSpec | str | os.PathLike[str], data: MarketData | str | os.PathLike[str],
        params: Mapping[str, float] | None = None) -> SetResult:
    """Run one parameter set of a rule file over a data folder.

    ``params`` picks the set when the rule file declares several; it may be omitted when the
    declared space (after the constraint) holds exactly one set.
    """
    spec = rules if isinstance(rules, RuleSpec) else load_rules(rules)
    market_data = data if isinstance(data, MarketData) else load_data(data, list(spec.markets))
    study = Study(spec, market_data)
    sets = study.parameter_sets(params)
    if len(sets) > 1:
        raise RuleError(f"the rule file declares {len(sets)} parameter sets; pick one by giving "
                        f"every parameter a value ({', '.join(spec.parameter_names)})",
                        key="parameters")
    return study.run_set(sets[0])


def _with_overrides(spec: Any, costs: Mapping[str, Mapping[str, float]]) -> Any:
    merged = {**costs.get("*", {}), **costs.get(spec.symbol, {})}
    return spec.with_costs(merged) if merged else spec


__all__ = ["PORTFOLIO", "SetResult", "Study", "load_data", "load_rules", "run"]
