"""The Review section: the review of a submitted idea (its checklist, comments, accept or
return) and the promotion review of a tested one (the promotion checklist, comments, promote
or decline), each by someone other than the idea's author unless the desk is a one-person desk;
and the idea's earlier reviews."""

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

from hunchbook.catalogue import REVIEW_KINDS
from hunchbook.core import formats
from hunchbook.core.errors import HunchbookError
from hunchbook.gui.feedback import one_line
from hunchbook.gui.sections.base import IdeaSection
from hunchbook.store.records import Idea, Review
from hunchbook.store.settings import same_person
from hunchbook.store.vocab import BY_AUTHOR, DECISION_LABELS

#: The kind of review an idea at each stage is open for.
_OPEN_AT = {kind.stage: name for name, kind in REVIEW_KINDS.items()}
#: Text of each decision's button.
_BUTTONS = {"accept": "Accept for testing", "return": "Return with comments",
            "promote": "Promote", "decline": "Decline with comments"}
#: What the status bar says after each decision.
_DONE = {"accept": "Accepted for testing.", "return": "Returned to the author with your comments.",
         "promote": "Promoted: the promotion review is in the journal.",
         "decline": "Promotion declined; your comments are in the journal."}


class ReviewPanel(IdeaSection):
    """The Review section: tick the checklist, write comments and decide. A submitted idea is
    accepted or returned; a tested idea is promoted or declined (its promotion checklist:
    holdout seen, correlation with the book seen, costs checked). ``idea_changed`` follows a
    recorded review. The tab is marked while the idea waits for the user's review or promotion
    review (see :meth:`~hunchbook.catalogue.Catalogue.next_step`).

    Four eyes: the author of an idea does not review it (the form stays closed and says so),
    unless the catalogue's desk setting ``one_person_desk`` is on; the review then says it was
    made by the author. Accepting needs every item ticked and a valid rule file saved;
    promoting needs every item ticked (the holdout only once unlocked); returning and declining
    need comments (the catalogue checks all of it and the buttons say so first).
    """

    key = "review"
    tab_title = "Review"

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._problem: str | None = None
        self.kind: str | None = None
        self.status = QLabel(self)
        self.status.setObjectName("reviewStatus")
        self.status.setWordWrap(True)
        #: The checkboxes of each kind of review, by item key.
        self.checklists: dict[str, dict[str, QCheckBox]] = {}
        self.boxes: dict[str, QGroupBox] = {}
        for name, kind in REVIEW_KINDS.items():
            box = QGroupBox("Promotion checklist" if name == "promotion" else "Checklist", self)
            box.setObjectName(f"{name}Checklist")
            box_layout = QVBoxLayout(box)
            checks = {}
            for key, question in kind.checklist.items():
                check = QCheckBox(question, box)
                check.setObjectName(f"check_{key}")
                check.toggled.connect(self._update_buttons)
                box_layout.addWidget(check)
                checks[key] = check
            self.checklists[name], self.boxes[name] = checks, box
        self.checks = self.checklists["idea"]
        self.promotion_checks = self.checklists["promotion"]
        self.comments = QPlainTextEdit(self)
        self.comments.setObjectName("reviewComments")
        self.comments.setMaximumHeight(110)
        self.comments.textChanged.connect(self._update_buttons)
        self.buttons: dict[str, QPushButton] = {}
        row = QHBoxLayout()
        row.addStretch(1)
        for decision in ("return", "accept", "decline", "promote"):
            button = QPushButton(_BUTTONS[decision], self)
            button.setObjectName(f"{decision}Button")
            button.clicked.connect(lambda _=False, d=decision: self.decide(d))
            row.addWidget(button)
            self.buttons[decision] = button
        self.accept_button, self.return_button = self.buttons["accept"], self.buttons["return"]
        self.promote_button, self.decline_button = (self.buttons["promote"],
                                                    self.buttons["decline"])
        self.history = QTextBrowser(self)
        self.history.setObjectName("reviewHistory")
        self.history.setOpenLinks(False)

        self.form = QWidget(self)
        form_layout = QVBoxLayout(self.form)
        form_layout.setContentsMargins(0, 0, 0, 0)
        for box in self.boxes.values():
            form_layout.addWidget(box)
        form_layout.addWidget(QLabel("Comments", self.form))
        form_layout.addWidget(self.comments)
        form_layout.addLayout(row)
        layout = QVBoxLayout(self)
        layout.addWidget(self.status)
        layout.addWidget(self.form)
        layout.addWidget(QLabel("Earlier reviews", self))
        layout.addWidget(self.history, 1)
        self.show_idea(None)

    def show_idea(self, idea_id: int | None) -> None:
        """Show an idea's reviews; the form is open (and the tab marked) when the idea waits
        for a review (submitted) or a promotion review (tested) that the user may make."""
        self.idea_id = idea_id
        self.kind = None
        if idea_id is None or self.catalogue is None:
            self.status.setText("No idea selected.")
            self.form.setVisible(False)
            self.history.clear()
            self.tab_changed.emit(self.tab_title, "")
            return
        idea = self.catalogue.idea(idea_id)
        kind = _OPEN_AT.get(idea.stage)
        alone = self.catalogue.desk_setting("one_person_desk")
        own = same_person(idea.submitted_by, self.context.user)
        may = kind is not None and (not own or alone)
        self.kind = kind if may else None
        self.form.setVisible(may)
        for name, box in self.boxes.items():
            box.setVisible(name == kind)
        for decision, button in self.buttons.items():
            button.setVisible(kind is not None and decision in REVIEW_KINDS[kind].decisions)
        step = self.catalogue.next_step(idea_id, self.context.user) if may else None
        waiting = step in ("review", "promotion review")
        self.tab_changed.emit(f"{self.tab_title} \u25cf" if waiting else self.tab_title,
                              f"Waiting for your {step}" if waiting else "")
        self._problem = self._decision_problem(idea) if may else None
        self.status.setText(self._status(idea, kind, own, alone))
        for checks in self.checklists.values():
            for check in checks.values():
                check.setChecked(False)
                check.setEnabled(True)
                check.setToolTip("")
        if kind == "promotion" and self.catalogue.holdout_view(idea_id) is None:
            seen = self.promotion_checks["holdout_seen"]
            seen.setEnabled(False)
            seen.setToolTip("The held-out years of this idea have not been unlocked (Idea "
                            "\u25b8 Unlock holdout\u2026).")
        self.comments.clear()
        self.comments.setPlaceholderText(
            "Comments for the author (required when declining)" if kind == "promotion"
            else "Comments for the author (required when returning)")
        self.history.setHtml(_history_html(self.catalogue.reviews(idea_id)))
        self._update_buttons()

    def decide(self, decision: str) -> bool:
        """Record the review with ``decision`` (``accept``, ``return``, ``promote`` or
        ``decline``)."""
        if self.idea_id is None or self.catalogue is None:
            return False
        kind = next(n for n, k in REVIEW_KINDS.items() if decision in k.decisions)
        answers = {k: c.isChecked() for k, c in self.checklists[kind].items()}
        try:
            self.catalogue.review(self.idea_id, reviewer=self.context.user, checklist=answers,
                                   decision=decision,
                                   comments=self.comments.toPlainText().strip())
        except HunchbookError as exc:
            self.message.emit(f"Review not recorded: {one_line(exc)}")
            return False
        idea_id = self.idea_id
        self.show_idea(idea_id)
        self.message.emit(_DONE[decision])
        self.idea_changed.emit(idea_id)
        return True

    def _status(self, idea: Idea, kind: str | None, own: bool, alone: bool) -> str:
        user = self.context.user
        if kind is None:
            return (f"This idea is '{idea.stage}'. Ideas are reviewed once submitted, and "
                    "promoted by a promotion review once tested.")
        step = "promotion review" if kind == "promotion" else "review"
        if own and not alone:
            return (f"You wrote this idea: its {step} is made by someone else (four eyes). A "
                    "desk of one can allow it with the desk setting one_person_desk.")
        text = (f"Submitted by {idea.submitted_by}; waiting for review." if kind == "idea" else
                f"Tested; written by {idea.submitted_by}. Promoting it is a review: answer the "
                "promotion checklist.")
        text += f" You review as {user}."
        if own:
            text += f" One-person desk: your {step} will say it was reviewed by the author."
        if self._problem is not None:
            text += f" It cannot be {'promoted' if kind == 'promotion' else 'accepted'} yet: " \
                    f"{self._problem}."
        return text

    def _decision_problem(self, idea: Idea) -> str | None:
        """Why the approving decision is not possible yet, as far as the catalogue knows."""
        assert self.catalogue is not None
        if idea.stage == "submitted":
            return self.catalogue.acceptance_problem(idea.id)
        if self.catalogue.holdout_view(idea.id) is None:
            return ("its held-out years have not been unlocked, so 'holdout seen' cannot be "
                    "ticked")
        return None

    def _update_buttons(self) -> None:
        kind = self.kind
        commented = bool(self.comments.toPlainText().strip())
        for button in self.buttons.values():
            button.setEnabled(False)
            button.setToolTip("")
        if kind is None:
            return
        spec = REVIEW_KINDS[kind]
        every = all(c.isChecked() for c in self.checklists[kind].values())
        approve = self.buttons[spec.approves]
        approve.setEnabled(every and self._problem is None)
        approve.setToolTip(f"Cannot {spec.approves}: {self._problem}." if self._problem
                           else "" if every else f"Tick every checklist item to {spec.approves}.")
        for decision in spec.needs_comments:
            self.buttons[decision].setEnabled(commented)
            self.buttons[decision].setToolTip("" if commented else
                                              f"Write comments to {decision} it.")


def _history_html(reviews: list[Review]) -> str:
    if not reviews:
        return "<p><i>No reviews yet.</i></p>"
    parts = []
    for review in reversed(reviews):
        questions = REVIEW_KINDS.get(review.kind, REVIEW_KINDS["idea"]).checklist
        unmet = [questions.get(k, k) for k, ok in review.checklist.items() if not ok]
        decision = DECISION_LABELS.get(review.decision, review.decision)
        own = f" <i>({BY_AUTHOR})</i>" if review.by_author else ""
        body = _escape(review.comments) or "<i>no comments</i>"
        missing = ("".join(f"<li>{_escape(q)}</li>" for q in unmet))
        parts.append(f"<p><b>{decision}</b> by {_escape(review.reviewer)} on "
                     f"{formats.date(review.at)}{own}<br>{body}</p>"
                     + (f"<p>Not met:</p><ul>{missing}</ul>" if unmet else ""))
    return "".join(parts)


def _escape(text: str) -> str:
    return (text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace("\n", "<br>"))
