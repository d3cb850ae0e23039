"""Open interest and volume of the held contract and summed over the curve, on generated data
with blank cells, against pandas.

Source: pandas (reference library) - ``groupby("date").sum(min_count=1)`` over the rows of
each date for the curve totals, and a row look-up by (date, held contract) for the held
contract's own figures.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from hunchbook.api import Study
from tests.core.data_folders import rules, write_folder
from tests.reference_impl import random_contract_rows


def _rows(seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    rows = random_contract_rows(seed, "2021-03-01", 160, holidays=6)
    rows["volume"] = rng.integers(0, 5_000, len(rows)).astype(float)
    rows["open_interest"] = rng.integers(100, 90_000, len(rows)).astype(float)
    for column in ("volume", "open_interest"):  # blank cells, some dates with all blank
        rows.loc[rng.random(len(rows)) < 0.15, column] = np.nan
    blank_day = rows["date"] == rows["date"].iloc[len(rows) // 2]
    rows.loc[blank_day, "volume"] = np.nan
    return rows


@pytest.mark.parametrize("seed", [3, 4])
def test_totals_and_held_figures_match_pandas(tmp_path, seed) -> None:
    rows = _rows(seed)
    text = rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                       expiry=rows["expiry"].dt.strftime("%Y-%m-%d"))
    folder = write_folder(tmp_path, {"R": text})
    position = "curve_volume + curve_open_interest + open_interest + volume"
    study = Study.from_text(rules(position, ["R"]), folder)
    panel = study.panel
    n = int(panel.lengths[0])
    dates = pd.DatetimeIndex(panel.dates[:n, 0])
    totals = rows.groupby("date")[["volume", "open_interest"]].sum(min_count=1).loc[dates]
    np.testing.assert_array_equal(panel.series["curve_volume"][:n, 0], totals["volume"])
    np.testing.assert_array_equal(panel.series["curve_open_interest"][:n, 0],
                                  totals["open_interest"])
    held = rows.set_index(["date", "contract"]).loc[list(zip(dates, panel.contract[:n, 0],
                                                             strict=True))]
    np.testing.assert_array_equal(panel.series["open_interest"][:n, 0], held["open_interest"])
    np.testing.assert_array_equal(panel.series["volume"][:n, 0], held["volume"])
    assert np.isnan(panel.series["curve_volume"][:n, 0]).any()  # the all-blank date
    assert np.isnan(panel.series["curve_volume"][n:, 0]).all()  # padding
