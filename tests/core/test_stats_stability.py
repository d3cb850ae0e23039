"""Parameter-grid stability: neighbour means and the isolated-spike flag on hand-made grids."""

from __future__ import annotations

import numpy as np
import pytest

from hunchbook.core.errors import HunchbookError
from hunchbook.core.stats import neighbour_counts, neighbour_means, stability_flag


def test_neighbour_means_by_hand():
    # hand-computed on a 3 x 3 grid (common practice, no source: axis neighbours only)
    #   1 2 3
    #   4 5 6
    #   7 8 9
    grid = np.arange(1.0, 10.0)
    means = neighbour_means(grid, (3, 3))
    assert means[4] == pytest.approx((2 + 4 + 6 + 8) / 4)   # centre
    assert means[0] == pytest.approx((2 + 4) / 2)            # corner
    assert means[1] == pytest.approx((1 + 3 + 5) / 3)        # edge
    assert neighbour_counts(grid, (3, 3)).tolist() == [2, 3, 2, 3, 4, 3, 2, 3, 2]


def test_missing_cells_are_skipped():
    # cells removed by a constraint are NaN: they neither count nor contribute (by hand)
    grid = np.array([1.0, np.nan, 3.0,
                     4.0, 5.0, np.nan,
                     np.nan, 8.0, 9.0])
    means = neighbour_means(grid, (3, 3))
    assert means[4] == pytest.approx((4 + 8) / 2)
    assert means[2] != means[2]  # cell 2's neighbours (1 and 5) are both NaN: NaN
    assert neighbour_counts(grid, (3, 3))[2] == 0


def test_three_dimensional_grid_by_hand():
    # 2 x 2 x 2 cube: every cell has 3 neighbours, one along each parameter (by hand)
    grid = np.arange(8.0)
    means = neighbour_means(grid, (2, 2, 2))
    assert means[0] == pytest.approx((1 + 2 + 4) / 3)
    assert means[7] == pytest.approx((6 + 5 + 3) / 3)


def test_plateau_is_not_flagged_and_spike_is():
    # hand-made grids (house rule documented in docs/statistics.md, no published source)
    plateau = np.array([0.2, 0.3, 0.3, 0.2,
                        0.4, 0.9, 1.0, 0.5,
                        0.4, 0.8, 0.9, 0.4,
                        0.1, 0.3, 0.2, 0.1])
    assert not stability_flag(plateau, (4, 4), int(np.argmax(plateau)))
    spike = np.array([0.1, 0.0, 0.2, 0.1,
                      0.0, 0.1, 1.4, 0.0,
                      0.2, 0.1, 0.0, 0.1,
                      0.1, 0.2, 0.0, 0.1])
    assert stability_flag(spike, (4, 4), 6)


def test_each_spike_rule_on_its_own():
    # rule 1: best - neighbours > multiple x grid spread; rule 2: neighbours < ratio x best
    grid = np.array([0.9, 1.0, 0.9, 0.0, 0.0, 0.0])
    # best 1.0, neighbours (0.9 + 0.9 + 0.0) / 3 = 0.6 (by hand) -> ratio 0.6 >= 0.5: no;
    # spread = std (ddof 0) of all cells = 0.4679; 1.0 - 0.6 = 0.4 < 2 x 0.4679: no
    assert not stability_flag(grid, (2, 3), 1)
    assert stability_flag(grid, (2, 3), 1, min_ratio=0.7)           # 0.6 < 0.7
    assert stability_flag(grid, (2, 3), 1, spread_multiple=0.5)     # 0.4 > 0.234


def test_single_cell_and_nan_best_are_not_flagged():
    assert not stability_flag(np.array([2.0]), (1,), 0)
    assert not stability_flag(np.array([np.nan, 1.0]), (2,), 0)


def test_bad_grid_raises_clear_error():
    with pytest.raises(HunchbookError, match="does not hold"):
        neighbour_means(np.zeros(5), (2, 3))
    with pytest.raises(HunchbookError, match="best cell"):
        stability_flag(np.zeros(6), (2, 3), 6)
