"""OBO flat files: the Plant Trait Ontology read in place, and broken files."""

from __future__ import annotations

import re
from collections import defaultdict
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list
from extractor.ingest.obo import strip_scope_note
from extractor.workspace.settings import ConceptListSettings

TO_FILE = (
    Path(__file__).resolve().parents[2].parent
    / "shared"
    / "datasets"
    / "plant-trait-ontology"
    / "plant-trait-ontology.obo"
)
needs_to = pytest.mark.skipif(
    not TO_FILE.is_file(),
    reason="the Plant Trait Ontology is not at ../shared/datasets/plant-trait-ontology/",
)
YIELD = "TO:0000371"  # "yield trait" in the Plant Trait Ontology


def _scan_stanzas(path: Path) -> list[dict[str, list[str]]]:
    """Split the file into [Term] stanzas by a plain line scan (no OBO parser).

    The independent method the counts below are checked against: a stanza starts at a
    line "[Term]" and ends at the next line starting with "["; its lines are "tag: value".
    """
    stanzas: list[dict[str, list[str]]] = []
    current: dict[str, list[str]] | None = None
    for line in path.read_text(encoding="utf-8").splitlines():
        if line.startswith("["):
            current = defaultdict(list) if line.strip() == "[Term]" else None
            if current is not None:
                stanzas.append(current)
        elif current is not None and ": " in line:
            tag, value = line.split(": ", 1)
            current[tag].append(value)
    return stanzas


def _scan_descendants(stanzas: list[dict[str, list[str]]], root: str) -> set[str]:
    """Return the root and its descendants by repeated passes over the scanned is_a lines."""
    current = [s for s in stanzas if s.get("is_obsolete") != ["true"]]
    found = {root}
    grew = True
    while grew:
        grew = False
        for stanza in current:
            parents = {value.split(" ! ")[0].strip() for value in stanza.get("is_a", [])}
            if stanza["id"][0] not in found and parents & found:
                found.add(stanza["id"][0])
                grew = True
    return found


@pytest.fixture(scope="module")
def scanned() -> list[dict[str, list[str]]]:
    if not TO_FILE.is_file():
        pytest.skip("the Plant Trait Ontology is not at ../shared/datasets/plant-trait-ontology/")
    return _scan_stanzas(TO_FILE)


@needs_to
def test_obo_term_and_obsolete_counts_match_a_line_scan(scanned: list) -> None:
    loaded = load_concept_list(TO_FILE)
    obsolete = [s for s in scanned if s.get("is_obsolete") == ["true"]]
    # Line scan of [Term] stanzas (method above); the dataset README gives 1,700 terms
    # of which 110 are obsolete, which the scan must agree with.
    assert (len(scanned), len(obsolete)) == (1700, 110)
    assert len(loaded.concepts) == len(scanned) - len(obsolete)
    assert f"{len(obsolete)} obsolete terms were left out." in loaded.notes


@needs_to
def test_obo_synonyms_match_a_line_scan(scanned: list) -> None:
    loaded = load_concept_list(TO_FILE)
    # Synonyms by a plain line scan: text between the first pair of quotes, and the word
    # after it; the README gives 1,652 synonyms (EXACT 259, RELATED 1,205, NARROW 160,
    # BROAD 28) over all terms.
    pattern = re.compile(r'^"(.*)" (EXACT|RELATED|NARROW|BROAD)\b')
    all_scopes = [pattern.match(v).group(2) for s in scanned for v in s.get("synonym", [])]  # type: ignore[union-attr]
    assert (len(all_scopes), all_scopes.count("EXACT"), all_scopes.count("BROAD")) == (
        1652,
        259,
        28,
    )
    expected = set()
    for stanza in scanned:
        if stanza.get("is_obsolete") == ["true"]:
            continue
        name = stanza["name"][0].casefold()
        for value in stanza.get("synonym", []):
            match = pattern.match(value)
            assert match is not None
            text = strip_scope_note(match.group(1))
            if text.casefold() != name:
                kind = "alternative" if match.group(2) in ("EXACT", "NARROW") else "hidden"
                expected.add((stanza["id"][0], text.casefold(), kind))
    got = {(a.concept_id, a.text.casefold(), a.kind) for a in loaded.aliases}
    assert {g for g in got if g[2] != "preferred"} == expected
    assert ("TO:0000276", "drought resistance", "alternative") in got  # an EXACT synonym


@needs_to
def test_obo_root_imports_the_branch_a_line_scan_finds(scanned: list) -> None:
    options = ConceptListSettings(roots=(YIELD,))
    loaded = load_concept_list(TO_FILE, options=options)
    expected = _scan_descendants(scanned, YIELD)
    assert {c.id for c in loaded.concepts} == expected
    assert len(expected) > 20
    top = next(c for c in loaded.concepts if c.id == YIELD)
    assert top.parents == ()  # its own parent lies outside the branch
    kept = {c.id for c in loaded.concepts}
    assert all(p in kept for c in loaded.concepts for p in c.parents)


@needs_to
def test_obo_exclude_leaves_out_a_sub_branch(scanned: list) -> None:
    grain = "TO:0000396"  # "grain yield trait", under "yield trait"
    options = ConceptListSettings(roots=(YIELD,), exclude=(grain,))
    loaded = load_concept_list(TO_FILE, options=options)
    expected = _scan_descendants(scanned, YIELD) - _scan_descendants(scanned, grain)
    assert {c.id for c in loaded.concepts} == expected


def _obo(tmp_path: Path, body: str) -> Path:
    path = tmp_path / "traits.obo"
    path.write_text("format-version: 1.2\n\n" + body, encoding="utf-8")
    return path


def test_obo_synonym_type_gives_the_language(tmp_path: Path) -> None:
    path = _obo(
        tmp_path,
        "[Term]\nid: BTX:1\nname: cooking time\n"
        'synonym: "temps de cuisson" EXACT LANG_fr []\n'
        'synonym: "colour" EXACT UK_SPELLING []\n',
    )
    text = path.read_text(encoding="utf-8")
    header = 'synonymtypedef: LANG_fr "French"\nsynonymtypedef: UK_SPELLING "British spelling"\n'
    path.write_text(text.replace("\n\n", "\n" + header + "\n", 1), encoding="utf-8")
    aliases = {(a.text, a.lang) for a in load_concept_list(path).aliases}
    assert ("temps de cuisson", "fr") in aliases
    assert ("colour", "en") in aliases  # UK_SPELLING is not Ukrainian


@pytest.mark.parametrize(
    ("body", "options", "message"),
    [
        ("[Term]\nid: BTX:1\nname: a\n\n[Term\nid: BTX:2\nname: b\n", {}, r"line 7: not valid OBO"),
        (
            "[Term]\nid: BTX:1\nname: a\nis_a: BTX:2\n\n[Term]\nid: BTX:2\nname: b\nis_a: BTX:1\n",
            {},
            r"cycle \(BTX:\d -> BTX:\d -> BTX:\d\)",
        ),
        ("[Term]\nid: BTX:1\nname: a\n", {"roots": ("BTX:9",)}, r"no concept 'BTX:9'.*--root"),
        ("[Term]\nid: BTX:1\nname: a\nis_obsolete: true\n", {}, r"no named, current \[Term\]"),
    ],
    ids=["broken-stanza", "is-a-cycle", "unknown-root", "only-obsolete"],
)
def test_obo_bad_files_are_one_sentence(
    tmp_path: Path, body: str, options: dict, message: str
) -> None:
    with pytest.raises(InputError, match=message) as caught:
        load_concept_list(_obo(tmp_path, body), options=ConceptListSettings(**options))
    assert "\n" not in str(caught.value)
