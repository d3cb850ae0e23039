"""Whether a run lies within its idea's pre-registration: the markets it trades and every
parameter set it ran.

Definition
----------
A run lies **within** a pre-registration (its markets and ``[parameters]`` table) when

1. every market the run *trades* is a pre-registered market (a subset; markets its signal only
   reads, ``close["GOLD"]``, are not counted), and
2. every parameter set the run ran is a set of the pre-registered space: the same parameter
   names, each value one of the values that parameter declared (a list, or a range's values
   ``start, start + step, ... stop``), compared after rounding to 10 decimals, and the
   pre-registered constraint, if any, true for the set.

Narrowing (fewer markets, fewer values, a constraint added) stays within. Anything else lies
outside: another market, a new value (even one between declared values: ``n = 30`` is not in
``20 to 120 step 20``), a new or dropped parameter, a set the constraint excluded.

A run outside the pre-registration frozen at the first run gets a verdict warning
(:func:`outside_warning`); the catalogue refuses it unless an amendment with a person's
reason allowed it beforehand (see :mod:`hunchbook.catalogue`, ``amend_preregistration``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from hunchbook.core import formats
from hunchbook.core.rules.model import ParamRange, RuleSpec
from hunchbook.core.verdict import Check, warning

#: Key of the verdict check a run outside the pre-registration carries.
CHECK_KEY = "preregistration"
#: Reserved key of the ``[parameters]`` table holding the constraint.
CONSTRAINT = "constraint"
#: Values listed in a finding before "and N more".
SHOWN_VALUES = 6


@dataclass(frozen=True)
class Scope:
    """Where a run lies against one pre-registration version.

    ``extra_markets`` are traded markets that were not pre-registered; ``outside`` one phrase
    per finding about the parameters; ``outside_sets`` how many of the run's ``sets`` lie
    outside the pre-registered space.
    """

    version: int
    extra_markets: tuple[str, ...] = ()
    outside: tuple[str, ...] = ()
    outside_sets: int = 0
    sets: int = 0

    @property
    def within(self) -> bool:
        """Whether the run lies within the pre-registration."""
        return not self.extra_markets and not self.outside_sets and not self.outside

    def summary(self) -> str:
        """What lies outside, in one phrase (empty when within): ``markets X, Y were not
        pre-registered; parameter n=10, 30 outside the declared values (20 to 120 step 20)``."""
        parts = []
        if len(self.extra_markets) == 1:
            parts.append(f"market {self.extra_markets[0]} was not pre-registered")
        elif self.extra_markets:
            parts.append(f"markets {', '.join(self.extra_markets)} were not pre-registered")
        return "; ".join([*parts, *self.outside])

    def figure(self) -> str:
        """A short figure for the verdict's check: how much lies outside."""
        parts = []
        if self.extra_markets:
            n = len(self.extra_markets)
            parts.append(f"{n} market{'s' if n != 1 else ''}")
        if self.outside_sets:
            parts.append(f"{self.outside_sets:,} of {self.sets:,} sets")
        return "outside: " + (", ".join(parts) or "parameters")

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON values (read back by :meth:`from_dict`)."""
        return {"version": self.version, "extra_markets": list(self.extra_markets),
                "outside": list(self.outside), "outside_sets": self.outside_sets,
                "sets": self.sets}

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> Scope:
        """The scope written by :meth:`to_dict`."""
        return cls(version=int(data["version"]),
                   extra_markets=tuple(str(m) for m in data["extra_markets"]),
                   outside=tuple(str(o) for o in data["outside"]),
                   outside_sets=int(data["outside_sets"]), sets=int(data["sets"]))


@dataclass(frozen=True)
class Amendment:
    """A pre-registration version written after the first run that changed the markets or the
    parameter space: who, when (ISO 8601) and the reason they gave."""

    version: int
    by: str
    at: str
    reason: str


def declared_values(space: Mapping[str, Any]) -> dict[str, tuple[float, ...]]:
    """Each parameter's declared values, from a ``[parameters]`` table as plain values (a
    list of numbers, or a range ``{start, stop, step}``; the constraint left out)."""
    values: dict[str, tuple[float, ...]] = {}
    for name, declared in space.items():
        if name == CONSTRAINT:
            continue
        if isinstance(declared, Mapping):
            values[name] = ParamRange(float(declared["start"]), float(declared["stop"]),
                                      float(declared["step"])).values()
        else:
            values[name] = tuple(float(v) for v in declared)
    return values


def declared_sets(rules: RuleSpec) -> list[dict[str, float]]:
    """Every parameter set a rule file declares that its constraint allows (what a quick run
    of it runs), without reading any data.

    Raises
    ------
    RuleError
        The constraint does not parse.
    """
    if not rules.constraint:
        return list(rules.iter_grid())
    from hunchbook.core.expr import parse_expression

    constraint = parse_expression(rules.constraint, series_names=(),
                                  param_names=rules.parameter_names)
    return [params for params in rules.iter_grid() if constraint.evaluate({}, params) == 1.0]


def describe_space(space: Mapping[str, Any]) -> str:
    """A parameter space in words: ``fast 8, 16, 32; slow 64, 128; constraint fast < slow``
    (a range as ``n 20 to 120 step 20``)."""
    if not space:
        return "no parameters"
    parts = [f"{name} {_declared(declared)}" for name, declared in space.items()
             if name != CONSTRAINT]
    if space.get(CONSTRAINT):
        parts.append(f"constraint {space[CONSTRAINT]}")
    return "; ".join(parts)


def run_scope(*, markets: Sequence[str], parameter_sets: Sequence[Mapping[str, float]],
              registered_markets: Sequence[str], registered_space: Mapping[str, Any],
              version: int) -> Scope:
    """Where a run trading ``markets`` with ``parameter_sets`` lies against the pre-registered
    markets and ``[parameters]`` table (plain values) of pre-registration ``version``
    (definition in the module docstring).

    Raises
    ------
    RuleError
        The pre-registered constraint does not parse.
    """
    registered = set(registered_markets)
    extra = tuple(m for m in dict.fromkeys(markets) if m not in registered)
    declared = {name: {_key(v) for v in values}
                for name, values in declared_values(registered_space).items()}
    constraint = _constraint(registered_space, tuple(declared))
    new_names: dict[str, None] = {}
    missing: dict[str, None] = {}
    stray: dict[str, dict[float, None]] = {name: {} for name in declared}
    excluded = 0
    outside_sets = 0
    for params in parameter_sets:
        names_ok = set(params) == set(declared)
        values_ok = True
        for name, value in params.items():
            if name not in declared:
                new_names[name] = None
            elif _key(value) not in declared[name]:
                stray[name][float(value)] = None
                values_ok = False
        for name in declared:
            if name not in params:
                missing[name] = None
        if not names_ok or not values_ok:
            outside_sets += 1
        elif constraint is not None and constraint.evaluate({}, dict(params)) != 1.0:
            excluded += 1
            outside_sets += 1
    outside = [f"parameter {name} was not pre-registered" for name in new_names]
    outside += [f"parameter {name} was pre-registered but not run" for name in missing]
    outside += [f"parameter {name}={_values(list(values))} outside the declared values "
                f"({_declared(registered_space[name])})"
                for name, values in stray.items() if values]
    if excluded:
        outside.append(f"{excluded:,} set{'s' if excluded != 1 else ''} excluded by the "
                       f"pre-registered constraint {registered_space[CONSTRAINT]}")
    return Scope(version=version, extra_markets=extra, outside=tuple(outside),
                 outside_sets=outside_sets, sets=len(parameter_sets))


def outside_warning(scope: Scope, amendments: Sequence[Amendment] = ()) -> Check:
    """The verdict warning of a run outside the pre-registration: what lies outside and the
    amendments (with their reasons) that allowed the run."""
    finding = f"Outside the pre-registration: {scope.summary()}."
    if amendments:
        finding += " Allowed by " + "; ".join(
            f"amendment {a.version} ({a.by}, {formats.date(a.at)}: "
            f"\u201c{a.reason.rstrip('.')}\u201d)"
            for a in amendments) + "."
    return warning(CHECK_KEY, "Pre-registration", scope.figure(), finding)


def _constraint(space: Mapping[str, Any], names: tuple[str, ...]) -> Any:
    text = space.get(CONSTRAINT)
    if not text:
        return None
    from hunchbook.core.expr import parse_expression  # the expression language: numpy

    return parse_expression(str(text), series_names=(), param_names=names)


def _key(value: float) -> float:
    return round(float(value), 10)


def _values(values: list[float]) -> str:
    shown = ", ".join(f"{v:g}" for v in sorted(values)[:SHOWN_VALUES])
    more = len(values) - SHOWN_VALUES
    return shown + (f" and {more} more" if more > 0 else "")


def _declared(declared: Any) -> str:
    if isinstance(declared, Mapping):
        return (f"{float(declared['start']):g} to {float(declared['stop']):g} step "
                f"{float(declared['step']):g}")
    return ", ".join(f"{float(v):g}" for v in declared)
