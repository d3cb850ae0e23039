"""Small data folders written by hand for the tests of the series a rule reads (test input
only): a market library entry per market, price files as CSV text, an optional events file."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

_ENTRY = """[{name}]
multiplier = 1000
tick_size = 0.01
currency = "USD"
commission = 1
exchange_fee = 0
regulatory_fee = 0
slippage_ticks = 0
"""


def write_folder(folder: Path, prices: dict[str, str | pd.DataFrame],
                 events: str | None = None) -> Path:
    """Write ``markets.toml``, one ``<market>.csv`` per entry of ``prices`` (CSV text or a
    frame) and, when given, ``events.csv``; return the folder."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "markets.toml").write_text("\n".join(_ENTRY.format(name=m) for m in prices))
    for market, content in prices.items():
        path = folder / f"{market}.csv"
        if isinstance(content, pd.DataFrame):
            content.to_csv(path, index=False)
        else:
            path.write_text(content)
    if events is not None:
        (folder / "events.csv").write_text(events)
    return folder


def rules(position: str, markets: list[str], reads: list[str] | None = None) -> str:
    """A one-set rule file trading ``markets`` on ``position`` (written in single quotes, so
    it may hold double quotes), reading ``reads``."""
    listed = ", ".join(f'"{m}"' for m in markets)
    text = f'name = "series test"\nmarkets = [{listed}]\n'
    if reads:
        text += "reads = [" + ", ".join(f'"{m}"' for m in reads) + "]\n"
    return text + f"[signal]\nposition = '{position}'\n"
