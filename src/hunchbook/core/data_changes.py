"""Which markets' prices changed since an idea's last run.

Each catalogue run keeps one digest per market of the exact rows it read
(:func:`hunchbook.core.prices.market_fingerprints`, cut at the holdout boundary). A re-run
compares its digests with those of the idea's last run (:func:`compare_markets`): a market
whose digest differs changed, one the last run did not read is new, one it read and this run
did not is gone. A last run recorded before the per-market digests existed cannot say which
markets changed: its changes are "not recorded" (said only when its whole-data fingerprint
differs), never claimed.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass


@dataclass(frozen=True)
class DataChanges:
    """The data of a run against the idea's last run (``since_run``).

    ``changed`` lists the markets read by both whose prices differ, ``new`` those only this run
    read, ``gone`` those only the last run read (each in the order the runs read them);
    ``recorded`` is false when the last run kept no per-market digests (its data differed, but
    which markets is not known). ``since_uuid`` names the last run wherever the record travels
    (an imported run's ``since_run`` is renumbered from it).
    """

    since_run: int
    changed: tuple[str, ...] = ()
    new: tuple[str, ...] = ()
    gone: tuple[str, ...] = ()
    recorded: bool = True
    since_uuid: str | None = None

    @property
    def any(self) -> bool:
        """Whether there is anything to say (a change, or changes not recorded)."""
        return bool(self.changed or self.new or self.gone or not self.recorded)

    def sentence(self) -> str:
        """One line, e.g. ``Data changed since run 3: CRUDE, GOLD (prices differ); SILVER
        (new)``; empty when nothing changed."""
        if not self.recorded:
            return (f"Data changed since run {self.since_run}: which markets is not recorded "
                    "(that run kept no per-market fingerprints).")
        parts = [f"{', '.join(names)} ({what})" for names, what in (
            (self.changed, "prices differ"), (self.new, "new"), (self.gone, "gone")) if names]
        return f"Data changed since run {self.since_run}: {'; '.join(parts)}." if parts else ""


def compare_markets(since_run: int, last: Mapping[str, str] | None, current: Mapping[str, str],
                    *, whole_changed: bool, since_uuid: str | None = None) -> DataChanges | None:
    """This run's per-market digests (``current``) against the last run's (``last``; None when
    it kept none); ``whole_changed`` whether the whole-data fingerprints differ. None when
    nothing changed."""
    if last is None:
        return (DataChanges(since_run=since_run, recorded=False, since_uuid=since_uuid)
                if whole_changed else None)
    found = DataChanges(
        since_run=since_run, since_uuid=since_uuid,
        changed=tuple(m for m in current if m in last and last[m] != current[m]),
        new=tuple(m for m in current if m not in last),
        gone=tuple(m for m in last if m not in current))
    return found if found.any else None
