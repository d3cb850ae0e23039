"""Cyclic garbage is collected on the UI thread once workers are in use."""

from __future__ import annotations

import gc
import threading

from hunchbook.gui import collector


class _Cycle:
    def __init__(self) -> None:
        self.me = self


def test_automatic_collection_moves_to_the_ui_thread(qtbot):
    collector.collect_on_ui_thread()
    assert not gc.isenabled()  # no collection can start in a worker thread any more
    seen: list[str] = []

    class Marked(_Cycle):
        def __del__(self) -> None:
            seen.append(threading.current_thread().name)

    Marked()
    for _ in range(gc.get_threshold()[0] + 10):  # allocations past the first threshold
        _Cycle()
    assert seen == []  # nothing collected automatically
    collector._collector.collect_if_due()  # what the UI thread's timer calls
    assert seen == [threading.main_thread().name]
