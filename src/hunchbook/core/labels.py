"""Vocabularies: each fixed set of keys (verdict outcomes, stages, sources, ...) with the label
people read.

One rule for every vocabulary: what is printed is the label, and what is accepted is the label
or the key, in any case (``"Likely luck"``, ``"likely luck"`` and ``"selection_luck"`` are the
same verdict). The command line parses its options and prints its tables through
:class:`Vocabulary`, so every label it prints is one it accepts.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from hunchbook.core.errors import HunchbookError


def _fold(text: str) -> str:
    return " ".join(text.replace("_", " ").replace("-", " ").split()).casefold()


@dataclass(frozen=True)
class Vocabulary:
    """A fixed set of keys and their labels, in order.

    ``name`` says what the values are (``"verdict"``, ``"stage"``), for error messages.
    """

    name: str
    labels: Mapping[str, str]

    @classmethod
    def of(cls, name: str, keys: tuple[str, ...] | list[str],
           labels: Mapping[str, str] | None = None) -> Vocabulary:
        """A vocabulary of ``keys``; a key without a label reads as itself, capitalised, with
        spaces for underscores (``risk_premium`` -> ``Risk premium``)."""
        given = labels or {}
        return cls(name, {k: given.get(k, k.replace("_", " ").capitalize()) for k in keys})

    @property
    def keys(self) -> tuple[str, ...]:
        """The keys, in order."""
        return tuple(self.labels)

    def label(self, key: str | None) -> str:
        """The label of a key (an unknown key reads as itself; ``None`` as empty text)."""
        if not key:
            return ""
        return self.labels.get(key, key)

    def key(self, text: str) -> str:
        """The key that ``text`` names: a key or a label, in any case.

        Raises
        ------
        HunchbookError
            ``text`` names none of them; the message lists the labels (and the closest one).
        """
        wanted = _fold(text)
        for key, label in self.labels.items():
            if wanted in (_fold(key), _fold(label)):
                return key
        from difflib import get_close_matches  # only for the error: kept out of start-up

        choices = list(self.labels.values())
        close = get_close_matches(text, choices, n=1, cutoff=0.6)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise HunchbookError(f"unknown {self.name} '{text}'; known: "
                             f"{', '.join(repr(c) for c in choices)} (or their keys: "
                             f"{', '.join(self.labels)}){hint}")

    def parse(self, text: str) -> str:
        """:meth:`key` as an ``argparse`` type: a bad value is reported as the option's error
        (``argparse`` shows the message and exits with status 2)."""
        import argparse

        try:
            return self.key(text)
        except HunchbookError as exc:
            raise argparse.ArgumentTypeError(str(exc)) from None

    def help(self) -> str:
        """The labels for an option's help text."""
        return (", ".join(f"'{label}'" for label in self.labels.values())
                + " (or the keys; any case)")


__all__ = ["Vocabulary"]
