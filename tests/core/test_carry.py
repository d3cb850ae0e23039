"""Curve series and carry on a hand-worked three-contract curve, every number written out.

Sources: Koijen, Moskowitz, Pedersen & Vrugt (2018), "Carry", Journal of Financial Economics
127(2), 197-225, two-contract carry C_ann = (F1 - F2) / (F2 * (T2 - T1)); the check values and
conventions of ../shared/reference/methods.md section 10 (divide by F2 not F1, simple not
log or compounded, T2 - T1 from the expiry dates counted ACT/365). Day counts by hand from the
calendar (2024 is a leap year).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from hunchbook.api import Study
from hunchbook.core.curve import annualised_carry
from hunchbook.core.errors import DataError
from tests.core.data_folders import rules, write_folder

# Contracts H, M, U expire Fri 2024-03-15, Sat 2024-06-15 and Mon 2024-09-16.
# H -> M: Mar 16-31 (16) + Apr (30) + May (31) + Jun 1-15 (15) = 92 days.
# M -> U: Jun 16-30 (15) + Jul (31) + Aug (31) + Sep 1-16 (16) = 93 days.
# H -> U: 92 + 93 = 185 days.
CURVE = """date,contract,expiry,close,volume,open_interest
2024-02-01,H,2024-03-15,100.00,500,9000
2024-02-01,M,2024-06-15,98.00,200,4000
2024-02-01,U,2024-09-16,97.00,,1000
2024-02-02,H,2024-03-15,101.00,400,8800
2024-02-02,M,2024-06-15,98.50,250,4100
2024-02-05,H,2024-03-15,100.00,450,8700
2024-02-05,U,2024-09-16,96.00,20,1100
2024-03-07,H,2024-03-15,100.00,100,3000
2024-03-07,M,2024-06-15,98.00,900,9500
2024-03-08,H,2024-03-15,99.00,50,2000
2024-03-08,M,2024-06-15,97.00,950,9600
2024-03-08,U,2024-09-16,96.00,30,1200
2024-03-11,H,2024-03-15,99.50,10,1500
2024-03-11,M,2024-06-15,97.50,800,9700
"""
# Default roll: 5 business days before expiry. busday_offset(2024-03-15, -5) = Fri 2024-03-08,
# so H is held at the closes of Feb 1, 2, 5 and Mar 7, and M from the close of Mar 8.
CONTINUOUS = "date,close\n2024-02-01,10\n2024-02-02,11\n"


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return write_folder(tmp_path_factory.mktemp("carry"), {"CRV": CURVE, "FLAT": CONTINUOUS})


def _series(folder, name: str) -> np.ndarray:
    study = Study.from_text(rules(name, ["CRV"]), folder)
    column = study.panel.series[name][:, 0]
    return column[: int(study.panel.lengths[0])]


def test_check_values_of_the_reference_sheet() -> None:
    # methods.md section 10, rows 1-3: F1, F2, T2 - T1 -> C_ann (T in days, ACT/365).
    assert annualised_carry(100.0, 98.0, 0.0, 0.25 * 365) == pytest.approx(0.0816327, abs=5e-8)
    assert annualised_carry(50.0, 51.0, 0.0, 365 / 12) == pytest.approx(-0.2352941, abs=5e-8)
    assert annualised_carry(100.0, 98.0, 10.0, 102.0) == pytest.approx(0.0809672, abs=5e-8)
    # A short earns -C (row 1 and 2: -0.0816327 and +0.2352941).
    assert -annualised_carry(50.0, 51.0, 0.0, 365 / 12) == pytest.approx(0.2352941, abs=5e-8)


def test_conventions_a_test_must_tell_apart() -> None:
    # methods.md section 10, row 4 (F1 = 100, F2 = 98, 0.25 y): dividing by F1 gives
    # 0.0800000, the log form ln(F1/F2)/dT 0.0808108, compounding (F1/F2)^(1/dT) - 1 0.0841658;
    # the paper's simple form divided by F2 gives 0.0816327. With 92 days, ACT/360 would give
    # 2/98 * 360/92 = 0.0798580 where ACT/365 gives 0.0809672.
    ours = annualised_carry(100.0, 98.0, 0.0, 91.25)
    assert ours == pytest.approx(0.0816327, abs=5e-8)
    for other in (0.0800000, 0.0808108, 0.0841658):
        assert abs(ours - other) > 5e-4
    assert ours == pytest.approx(2.00 / 98.00 / 0.25, rel=1e-12)
    act365 = annualised_carry(100.0, 98.0, 0.0, 92.0)
    assert act365 == pytest.approx(0.0809672, abs=5e-8)
    assert abs(act365 - 2 / 98 * 360 / 92) > 5e-4


def test_undefined_carry() -> None:
    # Common practice, no source: no carry without a positive far price or a later expiry.
    values = annualised_carry(np.array([100.0, 100.0, 100.0, np.nan]),
                              np.array([0.0, -5.0, 98.0, 98.0]),
                              np.array([0.0, 0.0, 30.0, 0.0]), np.array([92.0, 92.0, 30.0, 92.0]))
    assert np.isnan(values).all()


def test_curve_series_on_the_hand_worked_curve(folder) -> None:
    nan = math.nan
    # held: H, H, H, H, M, M; price = the held contract's own close
    np.testing.assert_allclose(_series(folder, "price"),
                               [100.00, 101.00, 100.00, 100.00, 97.00, 97.50])
    # next listed after the held one: M, M, U (M has no row on Feb 5), M, U, none (U has no
    # row on Mar 11, and H expires before the held M)
    np.testing.assert_allclose(_series(folder, "next_price"),
                               [98.00, 98.50, 96.00, 98.00, 96.00, nan])
    # days to H's expiry Mar 15: from Feb 1 (Feb has 29 days) 28 + 15 = 43, then 42, 39, 8;
    # to M's Jun 15 from Mar 8: 23 + 30 + 31 + 15 = 99, from Mar 11: 96
    np.testing.assert_array_equal(_series(folder, "expiry_days"), [43, 42, 39, 8, 99, 96])
    # next: + 92 (H -> M), + 185 (H -> U on Feb 5), + 93 (M -> U on Mar 8)
    np.testing.assert_array_equal(_series(folder, "next_expiry_days"),
                                  [135, 134, 224, 100, 192, nan])
    # carry = (F1 - F2) / (F2 * days / 365):
    #   Feb 1, Mar 7: 2 / 98 * 365 / 92 = 730 / 9016 = 0.0809672 (reference sheet row 3)
    #   Feb 2: 2.5 / 98.5 * 365 / 92 = 912.5 / 9062 = 0.1006952
    #   Feb 5: 4 / 96 * 365 / 185 = 1460 / 17760 = 0.0822072
    #   Mar 8: 1 / 96 * 365 / 93 = 365 / 8928 = 0.0408826; Mar 11: no next contract
    np.testing.assert_allclose(
        _series(folder, "carry"),
        [0.0809672, 0.1006952, 0.0822072, 0.0809672, 0.0408826, nan], atol=5e-8)


def test_open_interest_and_volume_of_the_curve(folder) -> None:
    # the held contract's own open interest: H, H, H, H, M, M
    np.testing.assert_array_equal(_series(folder, "open_interest"),
                                  [9000, 8800, 8700, 3000, 9600, 9700])
    # summed over every contract with a row that date (U's blank volume on Feb 1 left out)
    np.testing.assert_array_equal(_series(folder, "curve_volume"),
                                  [700, 650, 470, 1000, 1030, 810])
    np.testing.assert_array_equal(_series(folder, "curve_open_interest"),
                                  [14000, 12900, 9800, 12500, 12800, 11200])


def test_a_continuous_market_has_no_curve(folder) -> None:
    for name in ("carry", "price", "next_price", "expiry_days", "next_expiry_days",
                 "curve_volume", "curve_open_interest"):
        with pytest.raises(DataError) as caught:
            Study.from_text(rules(f"sign({name})", ["CRV", "FLAT"]), folder)
        message = str(caught.value)
        assert f"'{name}' of market 'FLAT'" in message and "no curve" in message
        assert message.startswith(str(folder / "FLAT.csv"))
    # another market's curve, read by name, is refused the same way
    with pytest.raises(DataError, match="'carry' of market 'FLAT'"):
        Study.from_text(rules('carry["FLAT"]', ["CRV"], reads=["FLAT"]), folder)


def test_a_column_the_file_lacks_is_named(folder, tmp_path) -> None:
    bare = write_folder(tmp_path / "bare", {"CRV": "\n".join(
        line.rsplit(",", 2)[0] for line in CURVE.splitlines()) + "\n"})
    for name, column in (("curve_volume", "volume"), ("open_interest", "open_interest"),
                         ("curve_open_interest", "open_interest")):
        with pytest.raises(DataError, match=f"reads '{name}' of market 'CRV', but its file "
                                            f"has no '{column}' column"):
            Study.from_text(rules(name, ["CRV"]), bare)
