"""Hunchbook's invented demo scenario: a fictional research desk, its market library, invented
contract-level futures data and example rule files.

The desk is *Fernhollow Lane Partners, systematic research desk*, an invented firm: Ines Marwood
(research lead) and two junior analysts, Theo Brackwater and Nia Oduya-Fell (see :data:`DESK`).
It trades eight invented futures markets (:data:`DEMO_MARKETS`): CRUDE, NATGAS (energy), GOLD,
COPPER (metals), CORN, SOYBEAN (grains), TNOTE10 (rates) and EQIDX (equity index). The contract
terms (sizes, ticks, fee levels, expiry rules) follow common exchange specifications for such
products: facts of the trade. The desk, its people, the names, prices, volumes and holidays are
invented, and the data is generated deterministically from a seed by :func:`write_demo_data`,
with the effects of :mod:`hunchbook.demo.effects` planted in it.

Expiry rules: energy contracts expire on the third-to-last business day of the month before
delivery; GOLD on the last business day on or before the 26th of the delivery month; COPPER on
or before the 15th; CORN and SOYBEAN on or before the 14th; TNOTE10 on or before the 20th; EQIDX
on the third Friday (the business day before, if that Friday is a holiday).
"""

from typing import Any

from hunchbook.demo.desk import DESK, Desk, Person
from hunchbook.demo.profiles import DEMO_MARKETS

#: Names read from :mod:`hunchbook.demo.generate` when first asked for (it loads pandas, which
#: the window's start, naming the demo desk's people, does without).
_GENERATED = ("CSV_COLUMNS", "DEFAULT_SEED", "demo_frames", "demo_market_library",
              "market_library_text", "write_demo_data")


def __getattr__(name: str) -> Any:
    if name in _GENERATED:
        from hunchbook.demo import generate

        return getattr(generate, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


__all__ = [
    "CSV_COLUMNS",
    "DEFAULT_SEED",
    "DEMO_MARKETS",
    "DESK",
    "Desk",
    "Person",
    "demo_frames",
    "demo_market_library",
    "market_library_text",
    "write_demo_data",
]
