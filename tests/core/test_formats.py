"""The one number format: thousands separators, percentages never rounded to 0 or 100 %."""

from hunchbook.core.formats import count, date, moment, pct, plural


def test_counts_carry_thousands_separators():
    # common practice, no source: English thousands separators
    assert count(4513) == "4,513" and count(12.5) == "12.5" and count(float("nan")) == "—"
    assert plural(4513, "day") == "4,513 days" and plural(1, "review") == "1 review"
    assert plural(2, "entry", "entries") == "2 entries" and plural(0, "idea") == "0 ideas"


def test_percentages_read_as_the_tables_show_them():
    # common practice, no source: one decimal, a space before the sign (as the figure tables)
    assert pct(0.996) == "99.6 %" and pct(0.05) == "5.0 %" and pct(float("nan")) == "n/a"
    assert pct(1.0) == "100.0 %" and pct(0.0) == "0.0 %"


def test_a_share_below_one_never_reads_as_a_hundred_percent():
    # 0.9996 rounds to 100.0 at one decimal: it is not certain, so it must not read as 100 %
    assert pct(0.9996) == "> 99.9 %" and pct(0.99949) == "99.9 %"
    assert pct(0.0004) == "< 0.1 %" and pct(0.0005) == "0.1 %"


def test_dates_read_as_dates():
    assert date("2025-05-12T09:01:00+00:00") == "2025-05-12"
    assert moment("2025-05-12T09:01:00+00:00") == "2025-05-12 09:01"


def test_a_haircut_just_below_the_whole_sharpe_ratio_never_reads_minus_100_percent():
    # the desk's haircut of a Sharpe ratio (Harvey & Liu 2015) is a share in [0, 1]; rounded
    # to whole percent a cut of 99.8 % would read "-100 %", as if nothing were left
    from hunchbook.desk import _percent

    assert _percent(0.26) == "-26 %"
    assert _percent(0.998) == "cut > 99 %"
    assert _percent(0.0) == "0 %"
    assert _percent(float("nan")) == "n/a"
