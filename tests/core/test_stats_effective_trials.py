"""Effective number of independent trials (Li & Ji 2005) against published and closed-form values.

Source of the check values: shared reference (methods.md) s.11 -- Li, J. & Ji, L. (2005),
"Adjusting multiple testing in multi-locus analyses using the eigenvalues of a correlation
matrix", Heredity 95(3), 221-227; formula [memory, as restated by third-party documentation];
table values [recomputed] there from numpy eigvalsh and, independently, closed-form eigenvalues.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import linalg

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import EffectiveTrials, effective_trials, li_ji_count


def _blocks(sizes: list[int]) -> np.ndarray:
    """Correlation matrix of perfectly correlated blocks of the given sizes."""
    corr = np.zeros((sum(sizes), sum(sizes)))
    first = 0
    for m in sizes:
        corr[first:first + m, first:first + m] = 1.0
        first += m
    return corr


def _equicorrelated(m: int, rho: float) -> np.ndarray:
    corr = np.full((m, m), rho)
    np.fill_diagonal(corr, 1.0)
    return corr


def _ar1(m: int, rho: float) -> np.ndarray:
    lag = np.arange(m)
    return rho ** np.abs(lag[:, None] - lag[None, :])


def _orthonormal_centred(days: int, columns: int, seed: int) -> np.ndarray:
    """Columns with mean exactly 0 (to rounding) and sample correlation exactly the identity."""
    z = np.random.default_rng(seed).standard_normal((days, columns))
    z -= z.mean(axis=0)
    q, _ = np.linalg.qr(z)
    return q


def _pnl_with_correlation(corr: np.ndarray, days: int, seed: int) -> np.ndarray:
    """Daily P&L whose sample correlation matrix is ``corr``: Q L^T with Q orthonormal centred
    columns and L the Cholesky factor, then each column rescaled and shifted (which leaves
    Pearson correlation unchanged -- definition of the correlation coefficient)."""
    x = _orthonormal_centred(days, corr.shape[0], seed) @ np.linalg.cholesky(corr).T
    scale = np.linspace(500.0, 3000.0, corr.shape[0])
    return x * scale + np.linspace(-20.0, 20.0, corr.shape[0])


def _li_ji_literal(corr: np.ndarray) -> float:
    """Li & Ji (2005) as written, on scipy's eigenvalues: sum of I(|l| >= 1) + |l| - floor(|l|),
    eigenvalues rounded to 10 decimals first (s.11 pitfall 1)."""
    total = 0.0
    for value in np.round(linalg.eigvalsh(corr), 10):
        size = abs(value)
        total += (1.0 if size >= 1.0 else 0.0) + size - np.floor(size)
    return total


# --- li_ji_count on the s.11 table (Li-Ji column) --------------------------------------------

@pytest.mark.parametrize("m", [2, 7, 30])
def test_identity_gives_m(m):
    # s.11 table, row "identity, M >= 2": Li-Ji = M
    assert li_ji_count(np.eye(m)) == m


@pytest.mark.parametrize(("sizes", "expected"), [
    ([10], 1),            # s.11 table: one block of 10 -> 1
    ([5, 5], 2),          # blocks [5, 5] -> 2
    ([3, 3, 4], 3),       # blocks [3, 3, 4] -> 3 (6 without rounding: s.11 pitfall 1)
    ([4, 6, 7, 3], 4),    # blocks [4, 6, 7, 3], M = 20 -> 4
])
def test_perfectly_correlated_blocks_give_block_count(sizes, expected):
    # s.11 table, row "k perfectly correlated blocks": Li-Ji = k
    assert li_ji_count(_blocks(sizes)) == expected


def test_equicorrelated_row():
    # s.11 table: equicorrelated M = 10, rho = 0.5 -> eigenvalues 5.5 and 0.5 x 9 (closed form
    # 1 + (M - 1) rho and 1 - rho), Li-Ji 6 = 1.5 + 9 x 0.5
    corr = _equicorrelated(10, 0.5)
    assert np.allclose(np.sort(np.linalg.eigvalsh(corr)), [0.5] * 9 + [5.5])
    assert li_ji_count(corr) == pytest.approx(6.0, abs=1e-9)


def test_ar1_row():
    # s.11 table: AR(1) rho^|i-j|, M = 20, rho = 0.9 -> eigenvalues 11.238527, 4.000053,
    # 1.649027, 0.850425, 0.512816, ..., 0.052955; Li-Ji 7
    corr = _ar1(20, 0.9)
    eigen = np.sort(np.linalg.eigvalsh(corr))[::-1]
    assert eigen[:5] == pytest.approx([11.238527, 4.000053, 1.649027, 0.850425, 0.512816],
                                      abs=1e-6)
    assert eigen[-1] == pytest.approx(0.052955, abs=1e-6)
    assert li_ji_count(corr) == pytest.approx(7.0, abs=1e-9)


def test_negative_eigenvalues_count_by_absolute_value():
    # equicorrelated M = 3, rho = -0.6 is not positive semi-definite: closed-form eigenvalues
    # 1 + 2 rho = -0.2 and 1 - rho = 1.6 (twice) [recomputed]; Li & Ji's f(|l|) gives
    # 0.2 + 1.6 + 1.6 = 3.4 (s.11: fractions appear only with negative eigenvalues)
    assert li_ji_count(_equicorrelated(3, -0.6)) == pytest.approx(3.4, abs=1e-9)


@pytest.mark.parametrize("seed", range(4))
def test_matches_literal_formula_on_estimated_matrices(seed):
    # the formula of s.11 written out term by term on scipy's eigenvalues; matrices estimated
    # from short noisy samples (rank-deficient when days < sets) and a perturbed, indefinite one
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((12 + 20 * seed, 25)) @ rng.standard_normal((25, 25))
    corr = np.corrcoef(x, rowvar=False)
    assert li_ji_count(corr) == pytest.approx(_li_ji_literal(corr), abs=1e-8)
    bumped = corr + 0.3 * np.sign(rng.standard_normal(corr.shape))
    bumped = (bumped + bumped.T) / 2.0
    np.fill_diagonal(bumped, 1.0)
    assert np.linalg.eigvalsh(bumped).min() < 0
    assert li_ji_count(bumped) == pytest.approx(_li_ji_literal(bumped), abs=1e-8)


def test_li_ji_rejects_non_square_input():
    with pytest.raises(HunchbookError, match="square"):
        li_ji_count(np.ones((3, 4)))
    with pytest.raises(HunchbookError, match="NaN"):
        li_ji_count(np.array([[1.0, np.nan], [np.nan, 1.0]]))


# --- effective_trials on P&L matrices built to have the table's correlations ------------------

def test_uncorrelated_sets_give_n():
    # s.11 identity row: sample correlation exactly the identity -> N
    net = _pnl_with_correlation(np.eye(15), 400, seed=1)
    assert effective_trials(net) == EffectiveTrials(raw=15, effective=15.0, method="li-ji",
                                                    sampled=None)


@pytest.mark.parametrize("sizes", [[10], [5, 5], [3, 3, 4], [4, 6, 7, 3]])
def test_duplicated_sets_with_scale_changes_form_blocks(sizes):
    # s.11 table, block rows: a set that is another set's P&L times a factor (a bigger or
    # smaller position, or the opposite sign) plus a constant has correlation +-1 with it; the
    # sign does not change the eigenvalues (D C D with D = diag(+-1) is similar to C).
    rng = np.random.default_rng(7)
    bases = _orthonormal_centred(300, len(sizes), seed=3) * 1000.0
    columns = []
    for j, m in enumerate(sizes):
        for _ in range(m):
            factor = rng.choice([-1.0, 1.0]) * rng.uniform(0.2, 5.0)
            columns.append(factor * bases[:, j] + rng.uniform(-3.0, 3.0))
    result = effective_trials(np.column_stack(columns))
    assert result.raw == sum(sizes)
    assert result.effective == len(sizes)


def test_equicorrelated_and_ar1_pnl():
    # s.11 table: equicorrelated (M 10, rho 0.5) -> 6; AR(1) (M 20, rho 0.9) -> 7
    assert effective_trials(_pnl_with_correlation(_equicorrelated(10, 0.5), 250, seed=2)
                            ).effective == pytest.approx(6.0, abs=1e-9)
    assert effective_trials(_pnl_with_correlation(_ar1(20, 0.9), 250, seed=4)
                            ).effective == pytest.approx(7.0, abs=1e-9)


def test_flat_sets_count_one_each():
    # a set whose P&L never changes cannot be correlated: counted as one trial each (the
    # conservative choice documented in docs/statistics.md); the others form 2 blocks (s.11)
    base = _orthonormal_centred(200, 2, seed=5)
    net = np.column_stack([base[:, 0], 3 * base[:, 0], np.zeros(200), base[:, 1],
                           np.full(200, 12.5), -base[:, 1], np.zeros(200)])
    assert effective_trials(net).effective == 3 + 2


def test_single_set_and_all_flat():
    rng = np.random.default_rng(0)
    assert effective_trials(rng.standard_normal(50)).effective == 1.0
    assert effective_trials(rng.standard_normal((50, 1))).effective == 1.0
    assert effective_trials(np.zeros((50, 4))).effective == 4.0


def test_sampled_path_is_conservative_and_bounded():
    # 6 blocks of 50 perfectly correlated sets (exact count 6, s.11 block row). With
    # max_sets 40 the count is taken on 40 evenly spaced sets and scaled linearly: it must not
    # fall below the exact count (stricter, never laxer) nor exceed K.
    rng = np.random.default_rng(11)
    bases = _orthonormal_centred(250, 6, seed=9)
    net = np.repeat(bases, 50, axis=1) * rng.uniform(0.5, 2.0, 300)
    exact = effective_trials(net, max_sets=2000)
    sampled = effective_trials(net, max_sets=40)
    assert exact.effective == 6 and exact.sampled is None
    assert sampled.sampled == 40
    assert exact.effective <= sampled.effective <= 300
    # the sample of 40 evenly spaced sets meets all 6 blocks: 6 x 300 / 40
    assert sampled.effective == pytest.approx(6 * 300 / 40)
    # uncorrelated sets: the sample counts 40 of 40, scaled to all K = 300 (s.11 identity row)
    noise = _orthonormal_centred(400, 300, seed=10)
    assert effective_trials(noise, max_sets=40).effective == 300


def test_bad_input_is_a_clear_error():
    with pytest.raises(HunchbookError, match="net P&L matrix"):
        effective_trials(np.array([[1.0, np.nan], [2.0, 3.0]]))
    with pytest.raises(HunchbookError, match="max_sets"):
        effective_trials(np.ones((5, 3)), max_sets=1)
