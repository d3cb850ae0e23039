"""Python's cyclic garbage collection, kept on the UI thread.

The collector runs in whichever thread happens to allocate when a threshold is crossed. If
that is a worker thread and the cycle holds a Qt widget, the widget is destroyed off the UI
thread, which Qt forbids and which deadlocks here (seen: a worker stuck acquiring the GIL
inside ``QObject::~QObject`` during a collection). So once workers are used, automatic
collection is switched off and a timer on the UI thread collects instead, by the same
generation thresholds.
"""

from __future__ import annotations

import gc

from PySide6.QtCore import QCoreApplication, QObject, QThread, QTimer

#: How often the UI thread checks whether a collection is due (milliseconds).
INTERVAL_MS = 500

_collector: UiThreadCollector | None = None


class UiThreadCollector(QObject):
    """Disables automatic collection and collects on the UI thread's timer."""

    def __init__(self, parent: QObject) -> None:
        super().__init__(parent)
        self._timer = QTimer(self, interval=INTERVAL_MS)
        self._timer.timeout.connect(self.collect_if_due)
        self._timer.start()
        gc.disable()

    def collect_if_due(self) -> None:
        """Collect the oldest generation whose allocation count passed its threshold."""
        counts, thresholds = gc.get_count(), gc.get_threshold()
        due = [g for g in range(3) if counts[g] > thresholds[g]]
        if due:
            gc.collect(max(due))


def collect_on_ui_thread() -> None:
    """Install the UI-thread collector once (call from the UI thread before starting work)."""
    global _collector
    app = QCoreApplication.instance()
    if _collector is not None or app is None or QThread.currentThread() is not app.thread():
        return
    _collector = UiThreadCollector(app)
