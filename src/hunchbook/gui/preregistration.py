"""Quick runs against the pre-registration: a run outside the version in force is refused at
once, before any data is read, with a box saying what lies outside and offering "Amend with
reason…", which opens the Idea section's dialog with the editor's rules (their parameter space)
and the markets the run needs proposed. The catalogue checks again before the sweep and when
the run is recorded; a grid larger than :data:`PRECHECK_LIMIT` sets is left to those checks (on
the worker), so that the window never waits seconds for a check (``benchmarks/committee.py``:
about 11 ms a thousand sets with a constraint)."""

from __future__ import annotations

from typing import TYPE_CHECKING, cast

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QMessageBox

from hunchbook.catalogue import Catalogue
from hunchbook.core.errors import HunchbookError, RuleError
from hunchbook.core.prereg import declared_sets
from hunchbook.core.rules import parse_rules
from hunchbook.gui.feedback import one_line
from hunchbook.gui.widgets.idea_form import AmendDialog, IdeaForm
from hunchbook.store.run_scopes import rule_markets

if TYPE_CHECKING:
    from hunchbook.gui.main_window import MainWindow

#: Largest grid (sets before the constraint) checked on the UI thread before a quick run.
PRECHECK_LIMIT = 20_000


def run_refusal(catalogue: Catalogue, idea_id: int, rule_text: str) -> str | None:
    """Why a quick run of these rules would be refused by the pre-registration (one line), or
    None (rules that do not parse are left to the rule check, grids over
    :data:`PRECHECK_LIMIT` sets to the worker's check)."""
    try:
        rules = parse_rules(rule_text)
        if rules.grid_size() > PRECHECK_LIMIT:
            return None
        sets = declared_sets(rules)
    except RuleError:
        return None
    try:
        catalogue.check_preregistration(idea_id, rule_text, sets)
    except HunchbookError as exc:
        return one_line(exc)
    return None


def offer_amendment(window: MainWindow, idea_id: int, rule_text: str,
                    refusal: str) -> QMessageBox:
    """Show why the run is refused (window-modal, not blocking); once the idea has a
    pre-registration, offer to amend it with a reason."""
    box = QMessageBox(QMessageBox.Icon.Warning, "Outside the pre-registration", refusal,
                      parent=window)
    box.setObjectName("preregistrationRefusal")
    box.setWindowModality(Qt.WindowModality.WindowModal)
    catalogue = window.catalogue
    if catalogue is not None and catalogue.preregistrations(idea_id):
        amend = box.addButton("Amend with reason\u2026", QMessageBox.ButtonRole.AcceptRole)
        amend.setObjectName("amendFromRun")
        amend.clicked.connect(lambda: open_amendment(window, idea_id, rule_text))
    box.addButton(QMessageBox.StandardButton.Cancel)
    box.open()
    return box


def open_amendment(window: MainWindow, idea_id: int, rule_text: str) -> AmendDialog | None:
    """Show the idea and open its amendment dialog with these rules' parameter space and the
    markets they trade beyond the pre-registered ones."""
    catalogue = window.catalogue
    if catalogue is None or window.current_idea_id() != idea_id:
        return None
    versions = catalogue.preregistrations(idea_id)
    registered = versions[-1].markets if versions else ()
    extra = [m for m in rule_markets(rule_text) if m not in registered]
    form = cast(IdeaForm, window.section("idea"))
    window.show_section("idea")
    return form.open_amend_dialog(rule_text=rule_text, markets=extra)
