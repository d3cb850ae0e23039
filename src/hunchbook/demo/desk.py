"""The invented research desk that owns the demo data and example rule files."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Person:
    """One invented member of the demo desk."""

    name: str
    role: str
    focus: str


@dataclass(frozen=True)
class Desk:
    """The invented demo desk: its name, a short story and its people."""

    name: str
    story: str
    people: tuple[Person, ...]

    @property
    def lead(self) -> Person:
        """The desk's research lead (the first person listed)."""
        return self.people[0]


#: The invented desk behind every demo file. Firm, people and markets are all fictional.
DESK = Desk(
    name="Fernhollow Lane Partners, systematic research desk",
    story=(
        "Fernhollow Lane Partners is an invented small trading firm. Its systematic research "
        "desk keeps a book of trading hunches on eight invented futures markets (energy, "
        "metals, grains, rates and an equity index), writes each one down as a rule file, and "
        "runs quick backtests on invented contract-level data before deciding which ideas "
        "deserve a closer look. Nothing about the firm, its people or its data is real."
    ),
    people=(
        Person(name="Ines Marwood", role="research lead",
               focus="trend and momentum rules across the whole book; signs off on ideas"),
        Person(name="Theo Brackwater", role="junior analyst",
               focus="energy and grain markets; short-term mean reversion"),
        Person(name="Nia Oduya-Fell", role="junior analyst",
               focus="rates and equity index; roll rules and trading costs"),
    ),
)
