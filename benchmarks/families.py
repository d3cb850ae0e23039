"""What families and four eyes cost the catalogue: counting a family's trials (a recursive query
over the variant links), the family tree, recording a run in a large family (every member's
trial count refreshed), and the "waiting for me" filter over 10,000 ideas.

Built through the public API: 10,000 ideas (a quarter submitted), a family of 50 ideas in a
chain and a bushy tree, each member with one run of 40 parameter sets under its own strategy
(2,000 trials), and a lone idea with one such run. Records come from the store tests' builder.

Run: ``.venv/bin/python benchmarks/families.py [--repeats R]``. Prints min / median / max over
the repeats. Not a test: figures depend on the machine and on what else runs on it.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from benchmarks.timing import repeat_times  # noqa: E402
from tests.store.helpers import RULES, run_args  # noqa: E402

from hunchbook.catalogue import CHECKLIST, Catalogue  # noqa: E402

MEMBERS = 50
SETS = 40
PEOPLE = ["Ines", "Theo", "Nia", "Ada", "Rui"]


def _show(label: str, seconds: list[float]) -> None:
    print(f"{label:<56} min {1e3 * min(seconds):8.2f} ms  median "
          f"{1e3 * statistics.median(seconds):8.2f} ms  max {1e3 * max(seconds):8.2f} ms")


def _rules(k: int) -> str:
    """A rule text of its own strategy (the signal differs by a constant)."""
    return RULES.replace("fast = [5, 10]", f"fast = [{', '.join(str(5 + n) for n in range(SETS))}]"
                         ).replace("mean(close, slow))", f"mean(close, slow) - {k})")


def _accepted(cat: Catalogue, title: str, k: int) -> int:
    idea = cat.add_idea(title=title, hypothesis="h", submitted_by=PEOPLE[k % 5],
                        stage="submitted")
    cat.save_rules(idea, _rules(k), by=PEOPLE[k % 5])
    cat.review(idea, reviewer=PEOPLE[(k + 1) % 5], checklist=dict.fromkeys(CHECKLIST, True),
               decision="accept", comments="ok")
    return idea


def _record(cat: Catalogue, idea: int, k: int) -> int:
    sets = [{"fast": float(5 + n), "slow": 50.0} for n in range(SETS)]
    return cat.record_run(idea, revision_id=cat.latest_revision(idea).id, by="Bench",
                          **run_args(sets, [0.01 * n for n in range(SETS)], seed=k % 7))


def _rerun(cat: Catalogue, idea: int, k: int) -> None:
    """Save rules of a new strategy and record a run of them."""
    with cat.transaction():
        cat.save_rules(idea, _rules(k), by="Bench")
        _record(cat, idea, k)


def build(cat: Catalogue) -> tuple[list[int], int]:
    """The family (members in link order) and the lone idea."""
    with cat.transaction():
        for k in range(10_000):
            cat.add_idea(title=f"Idea {k}", hypothesis="h", submitted_by=PEOPLE[k % 5],
                         stage="submitted" if k % 4 == 0 else "draft")
    family: list[int] = []
    for k in range(MEMBERS):
        with cat.transaction():
            idea = _accepted(cat, f"Member {k}", k)
            if family:  # the first ten in a chain, the rest hung on those
                parent = family[-1] if k < 10 else family[k % 10]
                cat.set_variant_of(idea, parent, by="Bench", reason="benchmark")
            _record(cat, idea, k)
        family.append(idea)
    with cat.transaction():
        lone = _accepted(cat, "Lone", MEMBERS)
        _record(cat, lone, MEMBERS)
    return family, lone


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp, Catalogue(Path(tmp) / "bench.sqlite") as cat:
        start = time.perf_counter()
        family, lone = build(cat)
        print(f"built 10,000 ideas, a family of {MEMBERS} with {cat.trial_count(family[-1]):,} "
              f"trials and a lone idea in {time.perf_counter() - start:.1f} s")
        sets = [{"fast": float(5 + n), "slow": 50.0} for n in range(SETS)]
        deepest = family[9]
        for label, idea in (("lone idea", lone), (f"family of {MEMBERS}", deepest)):
            _show(f"trial count ({label})", repeat_times(lambda i=idea: cat.trial_count(i),
                                                   args.repeats))
            _show(f"prospective trials ({label})", repeat_times(
                lambda i=idea: cat.prospective_trials(i, _rules(999), sets), args.repeats))
            _show(f"family tree ({label})",
                  repeat_times(lambda i=idea: cat.family(i), args.repeats))
        strategies = iter(range(1_000, 2_000))
        for label, idea in (("lone idea", lone), (f"family of {MEMBERS}", deepest)):
            _show(f"record a run of {SETS} new sets ({label})",
                  repeat_times(lambda i=idea: _rerun(cat, i, next(strategies)), args.repeats))
        _show("list all 10,050 ideas", repeat_times(cat.list_ideas, args.repeats))
        _show("list ideas waiting for one person", repeat_times(
            lambda: cat.list_ideas(waiting_for="Theo"), args.repeats))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
