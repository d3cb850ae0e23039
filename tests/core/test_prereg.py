"""Whether a run lies within its pre-registration: markets a subset, every parameter set one of
the pre-registered space's (definition in :mod:`hunchbook.core.prereg`; common practice, no
source: a pre-registered grid is the list of sets one may try, so "within" is membership)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from hunchbook.core.prereg import (
    CHECK_KEY,
    Amendment,
    Scope,
    declared_sets,
    declared_values,
    describe_space,
    outside_warning,
    run_scope,
)
from hunchbook.core.rules import parse_rules

SPACE = {"n": {"start": 20.0, "stop": 120.0, "step": 20.0}}
TWO = {"fast": [8.0, 16.0, 32.0], "slow": [64.0, 128.0], "constraint": "fast * 4 < slow"}


def _scope(markets=("CRUDE",), sets=({"n": 40.0},), registered=("CRUDE", "GOLD"),
           space=SPACE) -> Scope:
    return run_scope(markets=markets, parameter_sets=list(sets), registered_markets=registered,
                     registered_space=space, version=1)


def test_a_subset_of_markets_and_of_the_grid_lies_within() -> None:
    scope = _scope(markets=("GOLD",), sets=[{"n": 20.0}, {"n": 120.0}])
    assert scope.within and scope.summary() == "" and scope.sets == 2


def test_markets_not_pre_registered_are_named() -> None:
    scope = _scope(markets=("CRUDE", "CORN", "NATGAS"))
    assert not scope.within and scope.extra_markets == ("CORN", "NATGAS")
    assert scope.summary() == "markets CORN, NATGAS were not pre-registered"
    assert _scope(markets=("CORN",)).summary() == "market CORN was not pre-registered"


def test_a_value_between_declared_values_lies_outside() -> None:
    """A range declares its values (20, 40, ... 120), not an interval: 30 was never
    pre-registered."""
    scope = _scope(sets=[{"n": 30.0}, {"n": 40.0}, {"n": 140.0}])
    assert not scope.within and scope.outside_sets == 2 and scope.sets == 3
    assert scope.summary() == ("parameter n=30, 140 outside the declared values (20 to 120 "
                               "step 20)")
    assert scope.figure() == "outside: 2 of 3 sets"


def test_many_values_are_shown_in_part() -> None:
    values = [float(v) for v in range(1, 20)]
    scope = _scope(sets=[{"n": v} for v in values])
    assert "n=1, 2, 3, 4, 5, 6 and 13 more outside" in scope.summary()


def test_new_and_dropped_parameters_lie_outside() -> None:
    scope = _scope(sets=[{"n": 40.0, "k": 2.0}])
    assert scope.outside == ("parameter k was not pre-registered",)
    dropped = run_scope(markets=("CRUDE",), parameter_sets=[{"fast": 8.0}],
                        registered_markets=("CRUDE",), registered_space=TWO, version=1)
    assert "parameter slow was pre-registered but not run" in dropped.outside
    assert not dropped.within


def test_sets_the_pre_registered_constraint_excludes_lie_outside() -> None:
    within = [{"fast": 8.0, "slow": 64.0}, {"fast": 16.0, "slow": 128.0}]
    excluded = [{"fast": 16.0, "slow": 64.0}, {"fast": 32.0, "slow": 64.0}]
    scope = run_scope(markets=("CRUDE",), parameter_sets=within + excluded,
                      registered_markets=("CRUDE",), registered_space=TWO, version=2)
    assert scope.outside == ("2 sets excluded by the pre-registered constraint fast * 4 < "
                             "slow",)
    assert scope.outside_sets == 2 and scope.version == 2


def test_range_values_match_after_rounding() -> None:
    """0.1 + 0.2 is not 0.3 in binary floating point (IEEE 754); the range's values and the
    run's are compared after rounding to 10 decimals. numpy.arange is the reference for the
    range's values."""
    space = {"x": {"start": 0.1, "stop": 0.5, "step": 0.1}}
    np.testing.assert_allclose(declared_values(space)["x"], np.arange(0.1, 0.55, 0.1))
    scope = run_scope(markets=(), parameter_sets=[{"x": 0.1 + 0.2}, {"x": 0.5}],
                      registered_markets=(), registered_space=space, version=1)
    assert scope.within


def test_declared_sets_are_the_grid_the_constraint_allows() -> None:
    """The sets of a rule file: itertools.product over the declared values, filtered by the
    constraint written as a Python comparison (the reference)."""
    rules = parse_rules('name = "t"\nmarkets = ["CRUDE"]\n[parameters]\nfast = [8, 16, 32]\n'
                        'slow = [64, 128]\nconstraint = "fast * 4 < slow"\n[signal]\n'
                        'position = "sign(close - mean(close, fast))"\n')
    expected = [{"fast": f, "slow": s} for f, s in itertools.product([8.0, 16.0, 32.0],
                                                                    [64.0, 128.0])
                if f * 4 < s]
    assert declared_sets(rules) == expected
    space = {"fast": [8.0, 16.0, 32.0], "slow": [64.0, 128.0], "constraint": "fast * 4 < slow"}
    assert run_scope(markets=("CRUDE",), parameter_sets=declared_sets(rules),
                     registered_markets=("CRUDE",), registered_space=space, version=1).within


def test_the_warning_names_what_lies_outside_and_the_amendment() -> None:
    scope = _scope(markets=("CRUDE", "CORN"), sets=[{"n": 10.0}])
    check = outside_warning(scope, [Amendment(2, "Nia", "2025-01-24T16:00:00.000000Z",
                                              "Every length shows whether it is luck.")])
    assert (check.key, check.status, check.name) == (CHECK_KEY, "warn", "Pre-registration")
    assert check.finding == (
        "Outside the pre-registration: market CORN was not pre-registered; parameter n=10 "
        "outside the declared values (20 to 120 step 20). Allowed by amendment 2 (Nia, "
        "2025-01-24: \u201cEvery length shows whether it is luck\u201d).")
    assert check.figure == "outside: 1 market, 1 of 1 sets"


def test_a_scope_reads_back_from_plain_values() -> None:
    scope = _scope(markets=("CORN",), sets=[{"n": 30.0}])
    assert Scope.from_dict(scope.to_dict()) == scope


@pytest.mark.parametrize(("space", "text"), [
    ({}, "no parameters"),
    (SPACE, "n 20 to 120 step 20"),
    (TWO, "fast 8, 16, 32; slow 64, 128; constraint fast * 4 < slow"),
])
def test_spaces_read_as_words(space, text) -> None:
    assert describe_space(space) == text
