"""The error raised for bad catalogue input: a missing record, a refused change, a bad bundle."""

from __future__ import annotations

from dataclasses import dataclass

from hunchbook.core.errors import HunchbookError


@dataclass(eq=False)
class CatalogueError(HunchbookError):
    """A catalogue operation refused because of its input.

    ``where`` names the catalogue file or bundle and ``field`` the record field or bundle member
    at fault (for example ``"idea 12"``, ``"journal[3].text"``).
    """

    problem: str
    where: str | None = None
    field: str | None = None

    def __post_init__(self) -> None:
        super().__init__(self.problem)

    def __str__(self) -> str:
        place = [p for p in (self.where, self.field) if p]
        return f"{', '.join(place)}: {self.problem}" if place else self.problem


@dataclass(eq=False)
class DamagedCatalogue(CatalogueError):
    """The catalogue file cannot be read as Hunchbook wrote it (damaged pages, a changed
    schema). ``advice`` says how to look into it and where the latest backup is."""

    advice: str = ""

    def __str__(self) -> str:
        text = super().__str__()
        return f"{text}; {self.advice}" if self.advice else text
