"""How each kind of journal entry reads: a sentence with human labels, made from the stored text.

The stored text of an entry never changes (the rows are append-only and hash-chained, see
:mod:`hunchbook.store.chain`); the catalogue writes its automatic entries in fixed patterns and
this module reads them back as sentences for the window, the review pack and the command line.
One function per kind in :data:`SENTENCES`; a text that does not match its kind's pattern (an
entry of an older version, or one imported from a bundle) is shown as stored, with its field and
checklist keys put in words. People's notes, decisions and corrections are Markdown and are
shown as written.
"""

from __future__ import annotations

import re
from collections.abc import Callable

from hunchbook.store.records import Entry
from hunchbook.store.vocab import (
    CHECKLIST,
    DESK_SETTINGS,
    ENTRY_WORDS,
    FIELD_LABELS,
    PROMOTION_CHECKLIST,
    RATIONALE_WORDS,
    SOURCE_WORDS,
)

#: Every checklist item's question, by key (idea review and promotion review).
_QUESTIONS = {**CHECKLIST, **PROMOTION_CHECKLIST}

#: Labels of stored values that are keys (kinds of rationale and source).
_VALUE_LABELS = {**RATIONALE_WORDS.labels, **SOURCE_WORDS.labels}

_RUN = re.compile(
    r"Run (?P<id>\d+) on rule revision (?P<rev>\d+): (?P<sets>\d+) parameter set\(s\), "
    r"trial count now (?P<trials>\d+)(?: \(with its family of (?P<family>\d+) ideas\))?; "
    r"data \w+, engine \S+?\.(?P<changed> .*?)? Chosen set (?P<chosen>.*?), net Sharpe "
    r"(?P<sharpe>\S+)\. Verdict: (?P<verdict>[^.]+)\.(?P<rest>.*)", re.DOTALL)
_HOLDOUT = re.compile(
    r"Holdout unlocked by (?P<by>.+?): rule revision (?P<rev>\d+), chosen set (?P<chosen>.*?) "
    r"\(of run (?P<run>\d+)\) run once on the held-out dates (?P<first>\S+) to (?P<last>\S+) "
    r"\((?P<days>\d+) days from the boundary \S+\)\. (?P<rest>.*)", re.DOTALL)
_STAGE = re.compile(r"Stage (?P<old>\w+) -> (?P<new>\w+)\. ?(?P<reason>.*)", re.DOTALL)
_REVIEW = re.compile(
    r"(?P<decision>[^.]+)\.(?P<own> \([^)]*\.\))? (?P<kind>Promotion checklist|Checklist): "
    r"(?P<ticks>(?:\[[x ]\] \w+(?:; )?)*)\.(?: Comments: (?P<comments>.*))?", re.DOTALL)
_TICK = re.compile(r"\[(?P<mark>[x ])\] (?P<key>\w+)")
_EDITED = re.compile(r"Edited\. (?P<changes>.*?)(?:\. Reason: (?P<reason>.*))?", re.DOTALL)
_FIELD = re.compile(r"(?:^|; )(?P<key>" + "|".join(FIELD_LABELS) + r"): ")
_SETTING = re.compile(r"Desk setting (?P<key>\w+) (?:turned|set to) (?P<value>\S+) \(.*?\): ",
                      re.DOTALL)


def sentence(entry: Entry) -> str:
    """The entry as people read it (Markdown): a sentence for an automatic entry, the text as
    written for a person's note, decision or correction."""
    return SENTENCES.get(entry.kind, _as_written)(entry.text)


def kind_label(kind: str) -> str:
    """How a kind of entry reads, e.g. ``Pre-registration``."""
    return ENTRY_WORDS.label(kind)


def _as_written(text: str) -> str:
    return text


def _plural(count: str | int, word: str) -> str:
    return f"{count} {word}" + ("" if int(count) == 1 else "s")


_COUNTED = re.compile(r"\b(?P<count>\d+) (?P<word>[a-z-]+)\(s\)")


def _plurals(text: str) -> str:
    """``8 trial(s)`` as ``8 trials``, ``1 trial(s)`` as ``1 trial``; arrows as arrows."""
    return _COUNTED.sub(lambda m: _plural(m["count"], m["word"]), text).replace(" -> ", " \u2192 ")


def _run(text: str) -> str:
    """``Quick run 3 on rule revision 2: 20 sets, 20 trials counted, chosen n=30, net Sharpe
    0.44, verdict Likely luck. <reasons> Next: <action>``."""
    held = _HOLDOUT.fullmatch(text)
    if held:
        return (f"Held-out years unlocked by {held['by']}: the chosen set {held['chosen']} of "
                f"quick run {held['run']} (rule revision {held['rev']}) ran once on "
                f"{held['first']} to {held['last']} ({held['days']} days). {held['rest']}")
    run = _RUN.fullmatch(text)
    if run is None:
        return _keys_in_words(text)
    family = f" with its family of {run['family']} ideas" if run["family"] else ""
    changed = f" {run['changed'].strip()}" if run["changed"] else ""
    return (f"Quick run {run['id']} on rule revision {run['rev']}: "
            f"{_plural(run['sets'], 'set')}, {_plural(run['trials'], 'trial')} counted{family}, "
            f"chosen {run['chosen']}, net Sharpe {run['sharpe']}, verdict "
            f"{run['verdict']}.{changed}{run['rest']}")


def _stage(text: str) -> str:
    """``Moved from submitted to accepted: <reason>``."""
    stage = _STAGE.fullmatch(text)
    if stage is None:
        return text
    reason = stage["reason"].strip()
    return (f"Moved from {stage['old']} to {stage['new']}"
            + (f": {reason}" if reason else "."))


def _review(text: str) -> str:
    """``Accepted for testing; every checklist item ticked. Comments: ...`` or the items not
    ticked, each as its question."""
    review = _REVIEW.fullmatch(text)
    if review is None:
        return _keys_in_words(text)
    ticks = [(t["mark"] == "x", t["key"]) for t in _TICK.finditer(review["ticks"])]
    what = "promotion checklist" if review["kind"].startswith("Promotion") else "checklist"
    missing = [_QUESTIONS.get(key, key.replace("_", " ")).rstrip(".") for ok, key in ticks
               if not ok]
    if not missing:
        ticked = f"every {what} item ticked"
    else:
        ticked = (f"{len(ticks) - len(missing)} of {len(ticks)} {what} items ticked; not "
                  "ticked: " + "; ".join(f"\u201c{q}\u201d" for q in missing))
    comments = f" Comments: {review['comments']}" if review["comments"] else ""
    return f"{review['decision']}{review['own'] or ''}; {ticked}.{comments}"


def _edit(text: str) -> str:
    """``Edited: Kind of rationale from Risk premium to Behavioural. Reason: ...``; the other
    edit entries (rule file saved, variant links) are sentences already."""
    edited = _EDITED.fullmatch(text)
    if edited is None:
        return _plurals(text)
    changes = []
    keys = [(m["key"], m.start(), m.end()) for m in _FIELD.finditer(edited["changes"])]
    for number, (key, _, end) in enumerate(keys):
        stop = keys[number + 1][1] if number + 1 < len(keys) else len(edited["changes"])
        old, _, new = edited["changes"][end:stop].partition(" -> ")
        changes.append(f"{FIELD_LABELS[key]} from {_value(old)} to {_value(new)}")
    if not changes:
        return _keys_in_words(text)
    reason = f" Reason: {edited['reason']}" if edited["reason"] else ""
    return "Edited: " + "; ".join(changes) + "." + reason


def _value(shown: str) -> str:
    """A value as the edit entry stored it (``'text'``, a list or ``(none)``), in words."""
    shown = shown.strip()
    if len(shown) >= 2 and shown[0] == shown[-1] and shown[0] in "'\"":
        inner = shown[1:-1]
        return _VALUE_LABELS.get(inner, f"\u201c{inner}\u201d")
    return shown


def _decision(text: str) -> str:
    """A person's decision as written; a desk setting's change with the setting in words."""
    setting = _SETTING.match(text)
    spec = None if setting is None else DESK_SETTINGS.get(setting["key"])
    if setting is None or spec is None:
        return text
    label = setting["key"].replace("_", " ")
    value = spec.kind.read(setting["value"])
    if spec.kind.verb == "turned":
        said = f"Desk setting \u201c{label}\u201d turned {spec.kind.show(value)}"
    else:
        said = f"Desk {label} " + ("unset" if value is None else f"set to {spec.kind.show(value)}")
    # the meaning as written then (it may itself hold "): "); the reason follows it
    written = text[:setting.start("value")] + f"{setting['value']} ({spec.meaning}): "
    reason = text[len(written):] if text.startswith(written) else text[setting.end():]
    return f"{said} ({spec.meaning}): {reason}"


def _preregistration(text: str) -> str:
    return _plurals(text)


def _keys_in_words(text: str) -> str:
    """A text that matched no pattern, with checklist and field keys in words."""
    for key, question in _QUESTIONS.items():
        text = text.replace(key, f"\u201c{question.rstrip('.')}\u201d")
    return _FIELD.sub(lambda m: m[0].replace(m["key"], FIELD_LABELS[m["key"]]), text)


#: How each kind of entry reads: kind -> function of the stored text (a kind missing here is
#: shown as written).
SENTENCES: dict[str, Callable[[str], str]] = {
    "note": _as_written,
    "decision": _decision,
    "correction": _as_written,
    "run": _run,
    "stage": _stage,
    "review": _review,
    "edit": _edit,
    "preregistration": _preregistration,
}
