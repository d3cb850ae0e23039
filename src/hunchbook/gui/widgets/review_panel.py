"""The Review section: the checklist, comments and the accept / return decision for a
submitted idea, and the idea's earlier reviews."""

from __future__ import annotations

from PySide6.QtWidgets import (
    QCheckBox,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPlainTextEdit,
    QPushButton,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from hunchbook.catalogue import CHECKLIST
from hunchbook.core.errors import HunchbookError
from hunchbook.gui.feedback import one_line
from hunchbook.gui.sections.base import IdeaSection
from hunchbook.store.records import Review


class ReviewPanel(IdeaSection):
    """The Review section: tick the checklist, write comments, accept or return a submitted
    idea; ``idea_changed`` follows a recorded review (the idea's stage moved). The tab is
    marked while the idea waits for review.

    Accepting needs every checklist item ticked and a valid rule file saved for the idea;
    returning needs comments (the catalogue checks all three and the buttons say so first).
    """

    key = "review"
    tab_title = "Review"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._rules_problem: str | None = None
        self.status = QLabel(self)
        self.status.setObjectName("reviewStatus")
        self.status.setWordWrap(True)
        self.checks: dict[str, QCheckBox] = {}
        box = QGroupBox("Checklist", self)
        box_layout = QVBoxLayout(box)
        for key, question in CHECKLIST.items():
            check = QCheckBox(question, box)
            check.setObjectName(f"check_{key}")
            check.toggled.connect(self._update_buttons)
            box_layout.addWidget(check)
            self.checks[key] = check
        self.comments = QPlainTextEdit(self)
        self.comments.setObjectName("reviewComments")
        self.comments.setPlaceholderText("Comments for the author (required when returning)")
        self.comments.setMaximumHeight(110)
        self.comments.textChanged.connect(self._update_buttons)
        self.accept_button = QPushButton("Accept for testing", self)
        self.accept_button.setObjectName("acceptButton")
        self.accept_button.clicked.connect(lambda: self.decide("accept"))
        self.return_button = QPushButton("Return with comments", self)
        self.return_button.setObjectName("returnButton")
        self.return_button.clicked.connect(lambda: self.decide("return"))
        self.history = QTextBrowser(self)
        self.history.setObjectName("reviewHistory")
        self.history.setOpenLinks(False)

        self.form = QWidget(self)
        buttons = QHBoxLayout()
        buttons.addStretch(1)
        buttons.addWidget(self.return_button)
        buttons.addWidget(self.accept_button)
        form_layout = QVBoxLayout(self.form)
        form_layout.setContentsMargins(0, 0, 0, 0)
        form_layout.addWidget(box)
        form_layout.addWidget(QLabel("Comments", self.form))
        form_layout.addWidget(self.comments)
        form_layout.addLayout(buttons)
        layout = QVBoxLayout(self)
        layout.addWidget(self.status)
        layout.addWidget(self.form)
        layout.addWidget(QLabel("Earlier reviews", self))
        layout.addWidget(self.history, 1)
        self.show_idea(None)

    def show_idea(self, idea_id: int | None) -> None:
        """Show an idea's reviews; the form is open (and the tab marked) when the idea is
        submitted."""
        self.idea_id = idea_id
        if idea_id is None or self.catalogue is None:
            self.status.setText("No idea selected.")
            self.form.setVisible(False)
            self.history.clear()
            self.tab_changed.emit(self.tab_title, "")
            return
        idea = self.catalogue.idea(idea_id)
        open_for_review = idea.stage == "submitted"
        self.form.setVisible(open_for_review)
        self.tab_changed.emit(f"{self.tab_title} \u25cf" if open_for_review else self.tab_title, "")
        self._rules_problem = (self.catalogue.acceptance_problem(idea_id) if open_for_review
                               else None)
        if open_for_review:
            rules = ("" if self._rules_problem is None
                     else f" It cannot be accepted yet: {self._rules_problem}.")
            self.status.setText(f"Submitted by {idea.submitted_by}; waiting for review. You "
                                f"review as {self.context.user}.{rules}")
            for check in self.checks.values():
                check.setChecked(False)
            self.comments.clear()
        else:
            self.status.setText(f"This idea is '{idea.stage}'. Ideas are reviewed once "
                                "submitted.")
        self.history.setHtml(_history_html(self.catalogue.reviews(idea_id)))
        self._update_buttons()

    def decide(self, decision: str) -> bool:
        """Record the review with ``decision`` (``accept`` or ``return``)."""
        if self.idea_id is None or self.catalogue is None:
            return False
        answers = {k: c.isChecked() for k, c in self.checks.items()}
        try:
            self.catalogue.review(self.idea_id, reviewer=self.context.user, checklist=answers,
                                   decision=decision,
                                   comments=self.comments.toPlainText().strip())
        except HunchbookError as exc:
            self.message.emit(f"Review not recorded: {one_line(exc)}")
            return False
        idea_id = self.idea_id
        self.show_idea(idea_id)
        self.message.emit("Accepted for testing." if decision == "accept"
                          else "Returned to the author with your comments.")
        self.idea_changed.emit(idea_id)
        return True

    def _update_buttons(self) -> None:
        every = all(c.isChecked() for c in self.checks.values())
        commented = bool(self.comments.toPlainText().strip())
        self.accept_button.setEnabled(every and self._rules_problem is None)
        self.accept_button.setToolTip(
            f"Cannot accept: {self._rules_problem}." if self._rules_problem is not None
            else "" if every else "Tick every checklist item to accept.")
        self.return_button.setEnabled(commented)
        self.return_button.setToolTip("" if commented else "Write comments to return it.")


def _history_html(reviews: list[Review]) -> str:
    if not reviews:
        return "<p><i>No reviews yet.</i></p>"
    parts = []
    for review in reversed(reviews):
        unmet = [CHECKLIST.get(k, k) for k, ok in review.checklist.items() if not ok]
        decision = "Accepted" if review.decision == "accept" else "Returned"
        body = _escape(review.comments) or "<i>no comments</i>"
        missing = ("".join(f"<li>{_escape(q)}</li>" for q in unmet))
        parts.append(f"<p><b>{decision}</b> by {_escape(review.reviewer)} on "
                     f"{review.at[:10]}<br>{body}</p>"
                     + (f"<p>Not met:</p><ul>{missing}</ul>" if unmet else ""))
    return "".join(parts)


def _escape(text: str) -> str:
    return (text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace("\n", "<br>"))
