"""The "New idea" dialog: a title and a hypothesis (the rest is filled in the Idea section)."""

from __future__ import annotations

from PySide6.QtWidgets import QDialog, QDialogButtonBox, QFormLayout, QLineEdit, QWidget


class NewIdeaDialog(QDialog):
    """Ask for a new idea's title and hypothesis; OK is enabled once both are written."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("newIdeaDialog")
        self.setWindowTitle("New idea")
        self.title = QLineEdit(self)
        self.title.setObjectName("newTitle")
        self.title.setPlaceholderText("A short name, e.g. 'Carry in grains'")
        self.hypothesis = QLineEdit(self)
        self.hypothesis.setObjectName("newHypothesis")
        self.hypothesis.setPlaceholderText("What you expect to happen, in one sentence")
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                        | QDialogButtonBox.StandardButton.Cancel, self)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        ok.setText("Write it down")
        ok.setEnabled(False)

        def update() -> None:
            ok.setEnabled(bool(self.title.text().strip() and self.hypothesis.text().strip()))

        self.title.textChanged.connect(update)
        self.hypothesis.textChanged.connect(update)
        form = QFormLayout(self)
        form.addRow("Title", self.title)
        form.addRow("Hypothesis", self.hypothesis)
        form.addRow(self.buttons)
        self.resize(520, self.sizeHint().height())
