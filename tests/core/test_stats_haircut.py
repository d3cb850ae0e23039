"""Sharpe ratio haircut for multiple testing (Harvey & Liu 2015) against published and
recomputed values and statsmodels.

Sources of the check values: shared reference (methods.md) s.12 -- Harvey, C.R. & Liu, Y.
(2015), "Backtesting", Journal of Portfolio Management 42(1), 13-28; the other tests modelled
by Harvey, Liu & Zhu (2016), Review of Financial Studies 29(1), 5-68; Holm (1979); Benjamini &
Yekutieli (2001). The six p-values are [paper, as transcribed by a third party]; their
adjusted values and the concrete case (SR 1.0, 120 months) are [recomputed] there with scipy
and statsmodels 0.15.0 ``multipletests``; the HLZ columns [recomputed] there with 2,000 draws
and seeds 0-4. Adjusted p-values are also compared with statsmodels here directly.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.multitest import multipletests

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats.haircut import (
    HlzModel,
    adjust_p_values,
    bhy_constant,
    expected_false_promotions,
    haircut_sharpe,
    sharpe_haircut,
    sharpe_p_value,
)

#: statsmodels' name of each adjustment.
STATSMODELS = {"bonferroni": "bonferroni", "holm": "holm", "bhy": "fdr_by"}

SIX = [0.005, 0.009, 0.0128, 0.0135, 0.045, 0.06]


# -- adjusted p-values ------------------------------------------------------------------------
@pytest.mark.parametrize(("method", "expected", "rejected"), [
    # methods.md s.12 [recomputed]; the transcription says only the first survives Bonferroni
    ("bonferroni", [0.03, 0.054, 0.0768, 0.081, 0.27, 0.36], 1),
    ("holm", [0.03, 0.045, 0.0512, 0.0512, 0.09, 0.09], 2),
    ("bhy", [0.049612, 0.049612, 0.049612, 0.049612, 0.1323, 0.147], 4),
])
def test_six_published_p_values(method, expected, rejected):
    adjusted = adjust_p_values(SIX, method)
    np.testing.assert_allclose(adjusted, expected, atol=5e-7)
    assert int(np.sum(adjusted <= 0.05)) == rejected


def test_bhy_constant_of_six_and_ten():
    # methods.md s.12: c(6) = 2.45, c(10) = 2.928968 [recomputed]
    assert bhy_constant(6) == pytest.approx(2.45)
    assert bhy_constant(10) == pytest.approx(2.928968, abs=1e-6)


@pytest.mark.parametrize("method", ["bonferroni", "holm", "bhy"])
def test_adjustments_match_statsmodels(method):
    # reference library: statsmodels multipletests, one family per row (ties included)
    rng = np.random.default_rng(7)
    families = rng.uniform(0, 0.2, (40, 25)) ** 2
    families[:, 3] = families[:, 4]  # a tie in every family
    families[0] = 0.01
    ours = adjust_p_values(families, method)
    for row, got in zip(families, ours, strict=True):
        np.testing.assert_allclose(got, multipletests(row, method=STATSMODELS[method])[1],
                                   rtol=1e-12, atol=1e-15)


def test_adjustment_refuses_bad_input():
    with pytest.raises(HunchbookError, match="method"):
        adjust_p_values(SIX, "sidak")
    with pytest.raises(HunchbookError, match="probabilities"):
        adjust_p_values([0.2, 1.5], "holm")
    with pytest.raises(HunchbookError, match="at least one"):
        adjust_p_values([], "holm")


# -- the single test and the haircut Sharpe ratio --------------------------------------------
def test_concrete_case_single_p_value_is_student_t():
    # methods.md s.12: SR_a 1.0 over 10 years (N = 120 months): t = 3.162278,
    # p_S = 0.001986474; the normal would give 0.001565402 (a pitfall the source names)
    p = sharpe_p_value(1.0, 10.0)
    assert p == pytest.approx(0.001986474, abs=5e-10)
    assert abs(p - 0.001565402) > 1e-4
    assert sharpe_haircut(1.0, 10.0, 1).t_stat == pytest.approx(3.162278, abs=1e-6)


@pytest.mark.parametrize(("tests", "p_m", "sharpe", "haircut"), [
    # methods.md s.12, Bonferroni column [recomputed]
    (1, 0.001986, 1.0000, 0.0),
    (10, 0.019865, 0.7465, 0.2535),
    (100, 0.198647, 0.4088, 0.5912),
    (200, 0.397295, 0.2686, 0.7314),
])
def test_concrete_case_bonferroni_column(tests, p_m, sharpe, haircut):
    cut = sharpe_haircut(1.0, 10.0, tests).bonferroni
    assert cut.p_value == pytest.approx(p_m, abs=5e-7)
    assert cut.sharpe == pytest.approx(sharpe, abs=5e-5)
    assert cut.haircut == pytest.approx(haircut, abs=5e-5)


def test_haircut_sharpe_inverts_the_p_value():
    # the two formulas of s.12 (steps 2-3 and 5) are inverses: HSR(p_S) = SR; p = 1 -> 0
    assert haircut_sharpe(sharpe_p_value(0.7, 6.5), 6.5) == pytest.approx(0.7, rel=1e-10)
    assert haircut_sharpe(1.0, 10.0) == pytest.approx(0.0, abs=1e-12)
    # against scipy directly: F_t^-1(1 - p/2; N - 1) / sqrt(N) * sqrt(12)
    assert haircut_sharpe(0.05, 10.0) == pytest.approx(
        stats.t.ppf(1 - 0.025, 119) / math.sqrt(120) * math.sqrt(12), rel=1e-12)


# -- Holm and BHY with the other tests simulated (HLZ) ---------------------------------------
@pytest.mark.parametrize(("tests", "holm", "holm_sr", "bhy_low", "bhy_high", "bhy_sr"), [
    # methods.md s.12, HLZ columns at rho 0.2 [recomputed], 2,000 draws, seeds 0-4; the
    # BHY value at M = 200 differs by seed: 0.0865-0.0870 -> HSR 0.5457-0.5467
    (1, 0.003973, 0.9289, 0.005959, 0.005959, (0.8855, 0.8855)),
    (10, 0.019865, 0.7465, 0.032994, 0.032994, (0.6822, 0.6822)),
    (100, 0.174810, 0.4317, 0.074482, 0.074482, (0.5690, 0.5690)),
    (200, 0.347633, 0.2982, 0.08645, 0.08705, (0.5457, 0.5467)),
])
@pytest.mark.parametrize("seed", range(5))
def test_hlz_simulated_columns(tests, holm, holm_sr, bhy_low, bhy_high, bhy_sr, seed):
    cut = sharpe_haircut(1.0, 10.0, tests, seed=seed)
    assert cut.simulated == tests
    assert cut.holm.p_value == pytest.approx(holm, abs=5e-7)
    assert cut.holm.sharpe == pytest.approx(holm_sr, abs=5e-5)
    assert bhy_low - 5e-7 <= cut.bhy.p_value <= bhy_high + 5e-7
    assert bhy_sr[0] - 5e-5 <= cut.bhy.sharpe <= bhy_sr[1] + 5e-5


def test_hlz_holm_median_is_a_multiple_of_the_single_p_value():
    # methods.md s.12: the medians are discrete, Holm = (M + 2 - k) p_S; 88 p_S at M = 100
    cut = sharpe_haircut(1.0, 10.0, 100, seed=3)
    assert cut.holm.p_value == pytest.approx(88 * cut.p_value, rel=1e-12)


def test_hlz_null_strategies_have_uniform_p_values():
    # a strategy with zero mean has t = |N(0, 1)| whatever rho, so its two-sided normal
    # p-value is uniform (common practice, no source); Kolmogorov-Smirnov from scipy
    t = HlzModel(p_zero=1.0).t_statistics(np.random.default_rng(5), 4000, 3)
    p = 2 * stats.norm.sf(t[:, 0])
    assert stats.kstest(p, "uniform").pvalue > 0.01
    # the shocks share a common factor: two strategies' signed shocks have correlation rho
    model = HlzModel(p_zero=1.0, rho=0.5)
    rng = np.random.default_rng(6)
    t = model.t_statistics(rng, 20000, 2)
    # |X| and |Y| of a bivariate normal with correlation r have corr (from E|XY|):
    # (2/pi)(sqrt(1 - r^2) + r asin r - 1) / (1 - 2/pi)  [memory; checked by the 0 case]
    r = 0.5
    expected = (2 / math.pi) * (math.sqrt(1 - r * r) + r * math.asin(r) - 1) / (1 - 2 / math.pi)
    assert np.corrcoef(t[:, 0], t[:, 1])[0, 1] == pytest.approx(expected, abs=0.02)


def test_simulated_medians_are_statsmodels_medians_over_the_draws():
    # reference library: replay the draws (one chunk) and adjust each family with statsmodels;
    # the strategy is column 0, the known others next, then the simulated ones
    from hunchbook.core.stats.haircut import HLZ_MODEL

    known = np.array([0.004, 0.3, 0.02])
    cut = sharpe_haircut(1.0, 10.0, 20, others=known, draws=60, seed=9)
    t = HLZ_MODEL.t_statistics(np.random.default_rng(9), 60, 16)
    families = [np.concatenate([[cut.p_value], known, row]) for row in 2 * stats.norm.sf(t)]
    for method in ("holm", "bhy"):
        expected = np.median([multipletests(f, method=STATSMODELS[method])[1][0]
                              for f in families])
        assert getattr(cut, method).p_value == pytest.approx(expected, rel=1e-12)


def test_simulation_is_seeded():
    a = sharpe_haircut(0.8, 7.0, 30, seed=11)
    assert sharpe_haircut(0.8, 7.0, 30, seed=11) == a
    # one draw: the seed shows through the median (2,000 draws' medians are discrete)
    one = [sharpe_haircut(0.8, 7.0, 30, draws=1, seed=s).bhy.p_value for s in (11, 12)]
    assert one[0] != one[1]


# -- Holm and BHY with the other tests known -------------------------------------------------
@pytest.mark.parametrize(("tests", "bhy", "bhy_sr"), [
    # methods.md s.12, last column: the other M - 1 p-values fixed at j/M, M tests in all;
    # Holm equals Bonferroni and BHY = M c(M) p_S [recomputed]
    (1, 0.001986, 1.0000),
    (10, 0.058183, 0.6049),
    (100, 1.0, 0.0),
    (200, 1.0, 0.0),
])
def test_known_others_fixed_at_j_over_m(tests, bhy, bhy_sr):
    others = np.arange(1, tests) / tests
    cut = sharpe_haircut(1.0, 10.0, tests, others=others)
    assert cut.simulated == 0
    assert cut.holm.p_value == pytest.approx(cut.bonferroni.p_value, rel=1e-12)
    assert cut.bhy.p_value == pytest.approx(bhy, abs=5e-7)
    assert cut.bhy.sharpe == pytest.approx(bhy_sr, abs=5e-5)


def test_known_others_match_statsmodels_on_the_whole_family():
    # reference library: the strategy's adjusted p-value is its entry in statsmodels'
    # adjustment of the whole family of M tests
    rng = np.random.default_rng(3)
    others = rng.uniform(0, 0.3, 14)
    cut = sharpe_haircut(0.9, 12.0, 15, others=others)
    family = np.concatenate([[cut.p_value], others])
    for method in ("holm", "bhy"):
        expected = multipletests(family, method=STATSMODELS[method])[1][0]
        assert getattr(cut, method).p_value == pytest.approx(expected, rel=1e-12)
    assert cut.bonferroni.p_value == pytest.approx(
        multipletests(family, method="bonferroni")[1][0], rel=1e-12)


def test_unknown_others_are_simulated():
    # NaN and missing p-values are drawn: 3 known + 1 NaN of 9 tests -> 5 drawn
    cut = sharpe_haircut(1.0, 10.0, 9, others=[0.2, 0.5, np.nan, 0.9])
    assert cut.simulated == 5
    assert cut.holm.p_value >= cut.p_value
    # a single test has nothing to adjust for (common practice, no source)
    alone = sharpe_haircut(1.0, 10.0, 1, others=[])
    assert alone.simulated == 0
    assert alone.holm.p_value == alone.bhy.p_value == alone.bonferroni.p_value == alone.p_value


def test_non_positive_sharpe_has_no_haircut_sharpe():
    cut = sharpe_haircut(-0.5, 10.0, 5, others=[0.5] * 4)
    assert cut.p_value == pytest.approx(sharpe_p_value(0.5, 10.0))
    assert all(math.isnan(a.sharpe) and math.isnan(a.haircut) for a in cut.adjustments)
    assert cut.to_dict()["holm"]["sharpe"] is None


def test_haircut_refuses_bad_input():
    with pytest.raises(HunchbookError, match="tests"):
        sharpe_haircut(1.0, 10.0, 0)
    with pytest.raises(HunchbookError, match="years"):
        sharpe_haircut(1.0, 0.05, 3)
    with pytest.raises(HunchbookError, match="others"):
        sharpe_haircut(1.0, 10.0, 2, others=[0.1, 0.2])
    with pytest.raises(HunchbookError, match="sharpe"):
        sharpe_haircut(float("nan"), 10.0, 2)


# -- expected false promotions ----------------------------------------------------------------
def test_expected_false_promotions_is_the_bhy_level_times_promotions():
    # definition (docs/statistics.md): BHY keeps the false discovery rate at or below the
    # level q* that admits every promotion (Benjamini & Yekutieli 2001, Theorem 1.3)
    assert expected_false_promotions([0.01, 0.04, 0.02]) == pytest.approx(0.12)
    assert expected_false_promotions([]) == 0.0
    # BHY level q* of the six p-values read as promotions (s.12 BHY column): 0.147 x 6
    assert expected_false_promotions(adjust_p_values(SIX, "bhy")) == pytest.approx(0.882)
    with pytest.raises(HunchbookError):
        expected_false_promotions([1.2])
