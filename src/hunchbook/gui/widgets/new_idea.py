"""The "New idea" dialog: a title, a hypothesis and the markets it trades (the rest is filled in
the Idea section). The markets go into the idea and into its starter rules, so a new idea
starts with valid rules."""

from __future__ import annotations

from collections.abc import Sequence

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLineEdit,
    QListWidget,
    QListWidgetItem,
    QWidget,
)


class NewIdeaDialog(QDialog):
    """Ask for a new idea's title, hypothesis and markets; OK is enabled once all three are
    given. ``library`` is the data folder's markets, offered to tick; without one the markets
    are typed, separated by commas."""

    def __init__(self, parent: QWidget | None = None, library: Sequence[str] = ()) -> None:
        super().__init__(parent)
        self.setObjectName("newIdeaDialog")
        self.setWindowTitle("New idea")
        self.title = QLineEdit(self)
        self.title.setObjectName("newTitle")
        self.title.setPlaceholderText("A short name, e.g. 'Carry in grains'")
        self.hypothesis = QLineEdit(self)
        self.hypothesis.setObjectName("newHypothesis")
        self.hypothesis.setPlaceholderText("What you expect to happen, in one sentence")
        self.market_list = QListWidget(self)
        self.market_list.setObjectName("newMarkets")
        self.market_list.setMaximumHeight(130)
        for symbol in library:
            item = QListWidgetItem(symbol, self.market_list)
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            item.setCheckState(Qt.CheckState.Unchecked)
        self.market_text = QLineEdit(self)
        self.market_text.setObjectName("newMarketText")
        self.market_text.setPlaceholderText("Markets it trades, separated by commas, e.g. CORN, "
                                            "SOYBEAN")
        self.market_list.setVisible(bool(library))
        self.market_text.setVisible(not library)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                        | QDialogButtonBox.StandardButton.Cancel, self)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        ok.setText("Write it down")
        ok.setEnabled(False)

        def update() -> None:
            ok.setEnabled(bool(self.title.text().strip() and self.hypothesis.text().strip()
                               and self.markets()))

        self.title.textChanged.connect(update)
        self.hypothesis.textChanged.connect(update)
        self.market_list.itemChanged.connect(lambda _item: update())
        self.market_text.textChanged.connect(update)
        form = QFormLayout(self)
        form.addRow("Title", self.title)
        form.addRow("Hypothesis", self.hypothesis)
        form.addRow("Markets", self.market_list if library else self.market_text)
        form.addRow(self.buttons)
        self.resize(520, self.sizeHint().height())

    def markets(self) -> tuple[str, ...]:
        """The markets ticked (or typed), in order, without repeats."""
        if self.market_list.count():
            items = (self.market_list.item(n) for n in range(self.market_list.count()))
            return tuple(i.text() for i in items if i.checkState() == Qt.CheckState.Checked)
        typed = (part.strip().upper() for part in self.market_text.text().split(","))
        return tuple(dict.fromkeys(m for m in typed if m))
