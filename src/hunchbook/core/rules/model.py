"""The rule specification: a plain, immutable description of one trading idea's rules."""

from __future__ import annotations

import datetime as dt
import itertools
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field

from hunchbook.core.rules.roll import DAYS_BEFORE_EXPIRY, DEFAULT_ADJUST, DEFAULT_ROLL_RULE

#: Contract-specification keys a rule file may override under ``[costs]``.
COST_KEYS = ("commission", "exchange_fee", "regulatory_fee", "slippage_ticks")
#: Every series a position expression may read, with a one-line description (the study checks
#: availability per market; docs/rule-files.md defines each precisely).
SERIES_HELP: dict[str, str] = {
    "close": "close, back-adjusted as set in [roll]",
    "open": "open, back-adjusted like close",
    "high": "high, back-adjusted like close",
    "low": "low, back-adjusted like close",
    "volume": "the held contract's volume",
    "open_interest": "the held contract's open interest",
    "curve_volume": "volume summed over every contract listed that date",
    "curve_open_interest": "open interest summed over every contract listed that date",
    "price": "the held contract's own close, not adjusted",
    "next_price": "close of the next contract listed that date (after the held one)",
    "expiry_days": "calendar days from the date to the held contract's expiry",
    "next_expiry_days": "calendar days from the date to the next contract's expiry",
    "carry": "annualised carry (price - next_price) / (next_price * years between expiries)",
    "month": "month of the date, 1-12",
    "day": "day of the month, 1-31",
    "weekday": "day of the week, 0 = Monday ... 6 = Sunday",
    "day_of_year": "day of the year, 1-366",
    "days_into_month": "the market's trading days in the month so far, 1 on its first",
    "days_to_month_end": "the market's trading days left in the month after this one, 0 on "
                         "its last",
}
#: Series a position expression may read; ``close["GOLD"]`` reads another market's.
SERIES_NAMES = tuple(SERIES_HELP)


@dataclass(frozen=True)
class ParamRange:
    """An arithmetic range of parameter values, ``stop`` inclusive."""

    start: float
    stop: float
    step: float

    def values(self) -> tuple[float, ...]:
        """The values start, start + step, ... up to and including stop (within rounding)."""
        count = int((self.stop - self.start) / self.step + 1e-9) + 1
        return tuple(_tidy(self.start + i * self.step) for i in range(count))


@dataclass(frozen=True)
class Parameter:
    """One named parameter: either an explicit list of values or a range."""

    name: str
    choices: tuple[float, ...] | ParamRange

    def values(self) -> tuple[float, ...]:
        """All values of this parameter, in declared order."""
        if isinstance(self.choices, ParamRange):
            return self.choices.values()
        return tuple(self.choices)


@dataclass(frozen=True)
class RollSpec:
    """How contracts are spliced into one continuous series per market.

    ``rule`` names a roll rule and ``adjust`` a back-adjustment method of
    :mod:`hunchbook.core.rules.roll`; the other fields are the rules' settings (each used only
    by the rules that list it), with the defaults given there.
    """

    rule: str = DEFAULT_ROLL_RULE.name
    days_before_expiry: int = DAYS_BEFORE_EXPIRY.default
    adjust: str = DEFAULT_ADJUST.name


@dataclass(frozen=True)
class SizingSpec:
    """Fixed (possibly fractional) contracts, or a volatility target.

    With ``target_vol`` set, each market's contract count at the close of t is
    ``capital * target_vol / (multiplier * sigma_t)``, where ``sigma_t`` is the annualised
    (x sqrt(252)) standard deviation of the adjusted price changes over the last ``vol_window``
    bars up to and including t. ``capital`` (in the markets' currency) is also the amount the
    run's returns and drawdowns are measured against (:mod:`hunchbook.core.capital_figures`);
    with fixed contracts it is optional and serves only that.
    """

    contracts: float | None = 1.0
    target_vol: float | None = None
    capital: float | None = None
    vol_window: int = 25


@dataclass(frozen=True)
class RuleSpec:
    """A parsed rule file. ``parameters`` keeps declared order; ``costs`` holds overrides.

    ``costs`` maps ``"*"`` (all markets) or a market name to ``{cost key: value}``. ``reads``
    are markets whose series the position reads (``close["GOLD"]``) without trading them.
    """

    name: str
    markets: tuple[str, ...]
    position: str
    parameters: tuple[Parameter, ...] = ()
    constraint: str | None = None
    delay: int = 0
    roll: RollSpec = field(default_factory=RollSpec)
    sizing: SizingSpec = field(default_factory=SizingSpec)
    costs: Mapping[str, Mapping[str, float]] = field(default_factory=dict)
    start: dt.date | None = None
    end: dt.date | None = None
    description: str | None = None
    reads: tuple[str, ...] = ()

    @property
    def parameter_names(self) -> tuple[str, ...]:
        """Parameter names in declared order."""
        return tuple(p.name for p in self.parameters)

    def grid_size(self) -> int:
        """Number of parameter sets before the constraint is applied."""
        size = 1
        for p in self.parameters:
            size *= len(p.values())
        return size

    def iter_grid(self) -> Iterator[dict[str, float]]:
        """Every combination of parameter values (constraint not applied); first one slowest."""
        names = self.parameter_names
        for combo in itertools.product(*(p.values() for p in self.parameters)):
            yield dict(zip(names, combo, strict=True))


def _tidy(x: float) -> float:
    """Round away binary noise from range arithmetic (0.1 + 0.2 -> 0.3); integers stay exact."""
    r = round(x, 10)
    return float(int(r)) if r == int(r) else r
