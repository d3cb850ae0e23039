"""A variant's link travels in its bundle: linked where the parent is held, reported (never
half-imported) where it is not; promotion reviews travel too. House rules (common practice, no
source): a family's trials count for each member wherever the family is held."""

from __future__ import annotations

import zipfile
from pathlib import Path

import pytest

from hunchbook.catalogue import PROMOTION_CHECKLIST, Catalogue, CatalogueError
from tests.store.helpers import RULES, accepted_idea, run_args, table_counts


def _run(cat: Catalogue, idea: int, fasts: list[float], rules: str = RULES) -> None:
    revision = cat.save_rules(idea, rules, by="Nia")
    cat.record_run(idea, revision_id=revision.id, by="Nia",
                   **run_args([{"fast": f, "slow": 50.0} for f in fasts], [0.2] * len(fasts),
                              outcome="passes"))


@pytest.fixture
def family(tmp_path: Path) -> dict[str, Path]:
    """A parent with two runs' worth of trials and a variant, each exported to a bundle."""
    with Catalogue(tmp_path / "source.sqlite") as cat:
        parent = accepted_idea(cat, "Grain trend")
        _run(cat, parent, [5.0, 10.0])
        variant = accepted_idea(cat, "Grain trend, one more length")
        cat.set_variant_of(variant, parent, by="Nia", reason="Adds a third length.")
        _run(cat, variant, [20.0], RULES.replace("fast = [5, 10]", "fast = [5, 10, 20]"))
        assert cat.trial_count(variant) == 3
        paths = {"parent": tmp_path / "parent.zip", "variant": tmp_path / "variant.zip"}
        cat.export_bundle(parent, paths["parent"])
        cat.export_bundle(variant, paths["variant"])
        paths["link_uuid"] = Path(cat.variant_link(variant).uuid)
    return paths


def test_the_link_is_made_where_the_parent_is_held(family: dict[str, Path],
                                                   tmp_path: Path) -> None:
    with Catalogue(tmp_path / "desk.sqlite") as desk:
        parent = desk.import_bundle(family["parent"], by="Ines").idea_id
        assert desk.trial_count(parent) == 2
        report = desk.import_bundle(family["variant"], by="Ines")
        assert report.conflicts == () and report.added["variant_link"] == 1
        link = desk.variant_link(report.idea_id)
        assert (link.parent_id, link.reason, link.set_by) == (parent, "Adds a third length.",
                                                             "Nia")
        assert link.uuid == str(family["link_uuid"])
        # the family's three trials count for both, here as where they came from
        assert desk.trial_count(parent) == desk.trial_count(report.idea_id) == 3
        assert desk.idea(parent).trial_count == 3
        again = desk.import_bundle(family["variant"], by="Ines")
        assert again.already_present["variant_link"] == 1 and again.conflicts == ()
        assert desk.check() == []


def test_without_the_parent_the_idea_comes_in_unlinked_and_the_report_says_why(
        family: dict[str, Path], tmp_path: Path) -> None:
    with Catalogue(tmp_path / "desk.sqlite") as desk:
        report = desk.import_bundle(family["variant"], by="Ines")
        assert report.created and report.added["variant_link"] == 0
        (conflict,) = report.conflicts
        assert conflict.startswith("the idea is a variant of 'Grain trend' (")
        assert conflict.endswith("which this catalogue does not hold: not linked (import that "
                                 "idea, then link them)")
        assert desk.variant_link(report.idea_id) is None
        assert desk.trial_count(report.idea_id) == 1 and len(desk.runs(report.idea_id)) == 1
        # once the parent is in, the link is made by hand (or by importing the variant again)
        parent = desk.import_bundle(family["parent"], by="Ines").idea_id
        assert desk.import_bundle(family["variant"], by="Ines").added["variant_link"] == 1
        assert desk.variant_link(report.idea_id).parent_id == parent
        assert desk.check() == []


def test_an_idea_linked_otherwise_keeps_its_link_and_a_circle_is_not_made(
        family: dict[str, Path], tmp_path: Path) -> None:
    with Catalogue(tmp_path / "desk.sqlite") as desk:
        variant = desk.import_bundle(family["variant"], by="Ines").idea_id
        parent = desk.import_bundle(family["parent"], by="Ines").idea_id
        # here, the other way round: the bundle's parent is a variant of the bundle's variant
        desk.set_variant_of(parent, variant, by="Ines", reason="We saw it the other way.")
        report = desk.import_bundle(family["variant"], by="Ines")
        (conflict,) = report.conflicts
        assert conflict.startswith(f"not linked as a variant of idea {parent}: idea {parent} is "
                                   f"a variant of idea {variant}")
        assert desk.variant_link(variant) is None
        assert desk.check() == []

    with Catalogue(tmp_path / "second.sqlite") as desk:
        variant = desk.import_bundle(family["variant"], by="Ines").idea_id
        elsewhere = accepted_idea(desk, "Elsewhere")
        desk.set_variant_of(variant, elsewhere, by="Ines", reason="Ours.")
        desk.import_bundle(family["parent"], by="Ines")
        report = desk.import_bundle(family["variant"], by="Ines")
        (conflict,) = report.conflicts
        assert conflict.endswith(f"here it is a variant of idea {elsewhere}, kept")
        assert desk.variant_link(variant).parent_id == elsewhere


def _edit(path: Path, out: Path, old: str, new: str) -> Path:
    with zipfile.ZipFile(path) as archive:
        members = {n: archive.read(n) for n in archive.namelist()}
    text = members["bundle.toml"].decode()
    assert old in text
    members["bundle.toml"] = text.replace(old, new, 1).encode()
    with zipfile.ZipFile(out, "w") as archive:
        for name, data in members.items():
            archive.writestr(name, data)
    return out


@pytest.mark.parametrize("case", ["itself", "bad uuid", "no reason", "unknown key"])
def test_a_bad_variant_table_rejects_the_whole_bundle(family: dict[str, Path], tmp_path: Path,
                                                      case: str) -> None:
    with zipfile.ZipFile(family["variant"]) as archive:
        manifest = archive.read("bundle.toml").decode()
    own = manifest.split('[idea]\nuuid = "', 1)[1].split('"', 1)[0]
    parent = manifest.split("[variant_of]", 1)[1].split('parent = "', 1)[1].split('"', 1)[0]
    old, new, message = {
        "itself": (f'parent = "{parent}"', f'parent = "{own}"', "variant_of.parent: an idea "
                                                                  "cannot be a variant of itself"),
        "bad uuid": (f'parent = "{parent}"', 'parent = "nobody"', "variant_of.parent: expected "
                                                                  "a lower-case uuid"),
        "no reason": ('reason = "Adds a third length."', 'reason = ""', "variant_of.reason: "
                                                                        "must not be empty"),
        "unknown key": ("[variant_of]\n", "[variant_of]\nstrength = 3\n", "unknown key"),
    }[case]
    bad = _edit(family["variant"], tmp_path / "bad.zip", old, new)
    with Catalogue(tmp_path / "desk.sqlite") as desk:
        desk.import_bundle(family["parent"], by="Ines")
        before = table_counts(desk)
        with pytest.raises(CatalogueError, match=message) as caught:
            desk.import_bundle(bad, by="Ines")
        assert "\n" not in str(caught.value)
        assert table_counts(desk) == before
        assert desk.db.execute("SELECT count(*) FROM variant_links").fetchone()[0] == 0


def test_a_promotion_review_travels_with_its_checklist(tmp_path: Path) -> None:
    with Catalogue(tmp_path / "source.sqlite") as cat:
        idea = accepted_idea(cat)
        _run(cat, idea, [5.0])
        cat.review(idea, reviewer="Theo", decision="decline", comments="Unlock it first.",
                   checklist={**dict.fromkeys(PROMOTION_CHECKLIST, True),
                              "holdout_seen": False})
        cat.export_bundle(idea, tmp_path / "idea.zip")
        source = cat.reviews(idea)
    with Catalogue(tmp_path / "desk.sqlite") as desk:
        report = desk.import_bundle(tmp_path / "idea.zip", by="Ines")
        imported = desk.reviews(report.idea_id)
        assert [(r.uuid, r.kind, r.decision, r.checklist) for r in imported] == [
            (r.uuid, r.kind, r.decision, r.checklist) for r in source]
        assert imported[-1].kind == "promotion"
