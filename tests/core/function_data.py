"""Generated futures data folders on different holiday calendars, for the tests of the
functions across markets and the holding rules (test input only)."""

from __future__ import annotations

from pathlib import Path

from tests.reference_impl import continuous, random_contract_rows

#: Markets of the generated folder: (name, seed, first date, bars, holidays left out).
MARKETS = (("M1", 31, "2019-06-03", 160, 6), ("M2", 32, "2019-06-17", 150, 9),
           ("M3", 33, "2019-06-03", 140, 3), ("M4", 34, "2019-07-01", 150, 12))

_SPEC = """
[{name}]
multiplier = 100
tick_size = 0.01
currency = "USD"
commission = 0.5
exchange_fee = 1.0
regulatory_fee = 0.02
slippage_ticks = 1
"""


def write_folder(folder: Path) -> dict[str, object]:
    """Write the markets' contract files and library into ``folder``; return each market's
    continuous frame by name, built by the independent pandas reference (2 business days
    before expiry, difference adjustment)."""
    (folder / "markets.toml").write_text("".join(_SPEC.format(name=m[0]) for m in MARKETS))
    frames = {}
    for name, seed, start, bars, holidays in MARKETS:
        rows = random_contract_rows(seed, start, bars, holidays=holidays)
        rows.assign(date=rows["date"].dt.strftime("%Y-%m-%d"),
                    expiry=rows["expiry"].dt.strftime("%Y-%m-%d")) \
            .to_csv(folder / f"{name}.csv", index=False)
        frames[name] = continuous(rows, days_before_expiry=2, adjust="difference")
    return frames


def rule_text(position: str) -> str:
    """A rule file trading every generated market with ``position``."""
    names = ", ".join(f'"{m[0]}"' for m in MARKETS)
    return (f'name = "functions check"\nmarkets = [{names}]\n[signal]\n'
            f'position = "{position}"\n[roll]\ndays_before_expiry = 2\n')
