"""The standard normal of the standard library against scipy.stats.norm (the reference library)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hunchbook.core.stats.normal import normal_cdf, normal_ppf

scipy_stats = pytest.importorskip("scipy.stats")


def test_cdf_equals_scipy_norm_cdf():
    # scipy.stats.norm.cdf as the reference, from the far left tail to the right
    for x in np.concatenate([np.linspace(-37.0, 8.0, 901), [-1e-9, 0.0, 1e-9]]):
        assert normal_cdf(float(x)) == pytest.approx(scipy_stats.norm.cdf(x), rel=1e-12, abs=0)
    assert normal_cdf(math.inf) == 1.0 and normal_cdf(-math.inf) == 0.0
    assert math.isnan(normal_cdf(math.nan))


def test_ppf_equals_scipy_norm_ppf():
    # scipy.stats.norm.ppf as the reference, including the quantiles the deflated Sharpe ratio
    # takes (1 - 1/N and 1 - 1/(N e) for N up to a million) and the tails
    probs = np.concatenate([np.linspace(1e-6, 1 - 1e-6, 1001), [1e-300, 1e-20, 0.5, 1 - 1e-12],
                            [1 - 1 / n for n in (2, 10, 1000, 10**6)],
                            [1 - 1 / (n * math.e) for n in (1, 2, 10, 10**6)]])
    for p in probs:
        assert normal_ppf(float(p)) == pytest.approx(scipy_stats.norm.ppf(p), rel=1e-12,
                                                     abs=1e-15)
    for p in (0.0, 1.0, -0.5, 1.5, math.nan):  # scipy's edges: -inf, inf, then NaN
        expected = scipy_stats.norm.ppf(p)
        got = normal_ppf(p)
        assert got == expected or (math.isnan(got) and math.isnan(expected))
