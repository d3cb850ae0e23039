"""The rule files of the invented demo desk's ideas (one text per revision), all runnable on
the invented demo data. The catalogue (:mod:`hunchbook.demo.catalogue`) saves and runs them.
"""

from __future__ import annotations

#: Every demo market, in library order.
BOOK = ("CRUDE", "NATGAS", "GOLD", "COPPER", "CORN", "SOYBEAN", "TNOTE10", "EQIDX")
#: The breakout idea's markets.
BREAKOUT_MARKETS = ("CRUDE", "GOLD", "COPPER", "EQIDX")

_SIZING = "[sizing]\ntarget_vol = 0.10\ncapital = 1_000_000\nvol_window = 25\n"


def rule_file(name: str, description: str, markets: tuple[str, ...], parameters: str,
              signal: str, *, top: str = "", extra: str = "") -> str:
    """One demo rule file: each market sized to 10 % annual volatility of 1,000,000 USD,
    rolled 5 business days before expiry with difference adjustment."""
    quoted = ", ".join(f'"{m}"' for m in markets)
    signal = signal.replace('"', '\\"')
    return (f"# Invented rule file of the Fernhollow Lane Partners demo desk (fictional).\n"
            f'name = "{name}"\ndescription = "{description}"\nmarkets = [{quoted}]\n{top}\n'
            f"[parameters]\n{parameters}\n\n[signal]\nposition = \"{signal}\"\n\n"
            f'[roll]\ndays_before_expiry = 5\nadjust = "difference"\n\n{_SIZING}{extra}')


TREND = rule_file(
    "Two-average trend", "Sign of fast minus slow exponential average.", BOOK,
    'fast = [8, 16, 32]\nslow = [64, 128]\nconstraint = "fast < slow"',
    "sign(ewm(close, fast) - ewm(close, slow))")

#: An analyst's variant of TREND: the same rule with shorter averages (a near copy).
TREND_FASTER = rule_file(
    "Two-average trend, faster", "Sign of fast minus slow exponential average, shorter "
    "averages.", BOOK, 'fast = [10, 20]\nslow = [60, 90]\nconstraint = "fast < slow"',
    "sign(ewm(close, fast) - ewm(close, slow))")

_MIDPOINT = "sign(close - (max(high, n) + min(low, n)) / 2)"
BREAKOUT = rule_file(
    "Channel midpoint breakout", "Side of the n-bar channel midpoint.", BREAKOUT_MARKETS,
    "n = { start = 20, stop = 120, step = 20 }", _MIDPOINT)
BREAKOUT_WIDE = rule_file(
    "Channel midpoint breakout", "Side of the n-bar channel midpoint, every length 10-200.",
    BREAKOUT_MARKETS, "n = { start = 10, stop = 200, step = 10 }", _MIDPOINT)

REVERSION = rule_file(
    "Short-term reversion", "Fade stretched closes.", ("CORN", "SOYBEAN", "TNOTE10"),
    "n = [3, 5, 10]\nentry = [0.5, 1.0]",
    "-sign(zscore(close, n)) if abs(zscore(close, n)) > entry else 0")

STORAGE = rule_file(
    "Storage-report drift", "Follow the storage day's move for a few days (2021 only).",
    ("NATGAS",), "days = [1, 2, 3]", 'hold(sign(diff(close, 1)) * event("storage"), days)',
    top="start = 2021-01-04\nend = 2021-12-31\n")

GOLD_RATES = rule_file(
    "Gold after rate shocks", "Follow GOLD for a month after a large TNOTE10 move.", ("GOLD",),
    "window = [10, 20]\nthreshold = [1.5, 2.0]",
    'hold(sign(zscore(close["TNOTE10"], window)) if abs(zscore(close["TNOTE10"], window)) > '
    'threshold else 0, 20)', top='reads = ["TNOTE10"]\n')

_COSTS = "\n[costs]\nslippage_ticks = 2   # two ticks each way: the cost we assume, as asked\n"
RATES_DRAFT = rule_file(
    "Rates trend", "Price against its n-bar average.", ("TNOTE10", "EQIDX"),
    "n = [10, 20]\nbuffer = [0.0]",
    "sign(close - mean(close, n)) if abs(zscore(close, n)) > buffer else 0")
RATES_FAST = rule_file(
    "Rates trend", "Price against its n-bar average.", ("TNOTE10", "EQIDX"),
    "n = [10, 20]\nbuffer = [0.0]",
    "sign(close - mean(close, n)) if abs(zscore(close, n)) > buffer else 0",
    extra=_COSTS)
RATES_SLOW = rule_file(
    "Rates trend, slow", "Price against its n-bar average, wide buffer.", ("TNOTE10", "EQIDX"),
    "n = [60, 120, 250]\nbuffer = [1.0, 1.5]",
    "sign(close - mean(close, n)) if abs(zscore(close, n)) > buffer else 0",
    extra=_COSTS)

COPPER_CARRY = rule_file(
    "Copper carry", "Long when the curve pays to hold (backwardation), short in contango.",
    ("COPPER",), "n = [1, 20]", "sign(mean(carry, n))")
MONTH_END = rule_file(
    "Month-end flow", "Long EQIDX over the last trading days of the month.", ("EQIDX",),
    "k = [2, 3]", "1 if days_to_month_end < k else 0")
CRUDE_CARRY = rule_file(
    "Crude roll-yield tilt", "Long in backwardation, short in contango.", ("CRUDE",),
    "n = [1, 20]", "sign(mean(carry, n))")
SOY_SEASON = rule_file(
    "Soybean autumn", "Long SOYBEAN in the crush season.", ("SOYBEAN",), "first = [8, 9]",
    "1 if month >= first and month <= 11 else 0")
VOL_FILTER = rule_file(
    "Ten-year trend, calm markets", "Trend only when volatility is below its yearly average.",
    ("TNOTE10",), "fast = [16, 32]\nslow = [128]\nconstraint = \"fast < slow\"",
    "sign(ewm(close, fast) - ewm(close, slow)) "
    "if std(diff(close, 1), 20) < mean(std(diff(close, 1), 20), 250) else 0")
VOL_FILTER_QUARTER = rule_file(
    "Ten-year trend, calm markets", "The same rule on one recent quarter only.",
    ("TNOTE10",), "fast = [16, 32]\nslow = [128]\nconstraint = \"fast < slow\"",
    "sign(ewm(close, fast) - ewm(close, slow)) "
    "if std(diff(close, 1), 20) < mean(std(diff(close, 1), 20), 250) else 0",
    top="start = 2021-09-01\nend = 2021-12-31\n")
WEATHER = rule_file(
    "Grain weather-premium fade", "In July, fade CORN's move of the last n bars.", ("CORN",),
    "n = [20, 40]", "-sign(diff(close, n)) if month == 7 else 0")
MOMENTUM = rule_file(
    "Volatility-scaled cross-market momentum",
    "Rank of the twelve-month move over its volatility across the eight markets.", BOOK,
    "n = [250]", "cs_rank((close - lag(close, n)) / std(diff(close, 1), 60))")
GAP_FADE = rule_file(
    "Overnight gap fade", "Fade large gaps between the close and the next open.", ("EQIDX",),
    "k = [1.0, 2.0]", "-sign(open - lag(close, 1)) if abs(open - lag(close, 1)) > "
    "k * std(diff(close, 1), 20) else 0")
METALS_PAIR = rule_file(
    "Metals pair", "Fade the GOLD/COPPER log ratio's stretch from its one-year mean.",
    ("GOLD",), "n = [250]", '-sign(zscore(log(close) - log(close["COPPER"]), n))',
    top='reads = ["COPPER"]\n')
