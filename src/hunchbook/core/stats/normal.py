"""The standard normal distribution from the standard library, so that judging a run loads no
scipy: the cdf from ``math.erfc``, the quantile from ``statistics.NormalDist`` (Wichura's
AS 241 algorithm; the ``statistics`` module, which pulls in ``decimal``, is imported at the
first call)."""

from __future__ import annotations

import math


def normal_cdf(x: float) -> float:
    """``P(Z <= x)`` for a standard normal ``Z`` (NaN gives NaN).

    ``erfc(-x / sqrt 2) / 2`` keeps its relative accuracy far into the left tail, where
    ``NormalDist().cdf`` (``(1 + erf(x / sqrt 2)) / 2``) loses it.
    """
    return 0.5 * math.erfc(-x / math.sqrt(2.0))


def normal_ppf(p: float) -> float:
    """The ``p``-quantile of the standard normal: ``-inf`` at 0, ``inf`` at 1, NaN outside
    [0, 1] or for NaN (as ``scipy.stats.norm.ppf``)."""
    from statistics import NormalDist

    if not 0.0 < p < 1.0:
        return -math.inf if p == 0.0 else math.inf if p == 1.0 else math.nan
    return NormalDist().inv_cdf(p)
