"""Day counts that turn daily figures into yearly ones, used by every part of Hunchbook."""

#: Trading days per year: annualises means (x 252), volatilities and Sharpe ratios (x sqrt 252).
DAYS_PER_YEAR = 252
#: Days per calendar year, for counts "per year" over the calendar span of a result.
CALENDAR_DAYS_PER_YEAR = 365.25
