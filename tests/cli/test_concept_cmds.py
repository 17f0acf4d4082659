"""`traits concepts import` and `traits concepts list` as a user runs them."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.cli import concept_cmds
from extractor.jobs.curate import TermSuggestions
from extractor.nlp.synonyms import Candidate
from extractor.workspace.folder import init_workspace
from tests.cli.trial import run
from tests.ingest.test_obo import TO_FILE, YIELD, needs_to


@pytest.fixture
def ws(tmp_path: Path) -> Path:
    init_workspace(tmp_path / "ws")
    return tmp_path / "ws"


@needs_to
def test_import_one_branch_of_the_trait_ontology_and_list_it_as_a_tree(ws: Path) -> None:
    code, out = run("-w", str(ws), "concepts", "import", str(TO_FILE), "--root", YIELD)
    assert code == 0, out
    assert "110 obsolete terms were left out" in out
    assert "Imported 41 concepts" in out  # the scanned branch count of tests/ingest/test_obo.py
    code, out = run("-w", str(ws), "concepts", "list")
    assert code == 0
    lines = out.splitlines()
    top = next(i for i, line in enumerate(lines) if "TO:0000371 en: yield trait" in line)
    child = next(i for i, line in enumerate(lines) if "TO:0000396 en: grain yield trait" in line)
    assert top < child and lines[child].index("TO:") > lines[top].index("TO:")  # indented


def test_import_a_trait_table_named_in_traits_toml(ws: Path, tmp_path: Path) -> None:
    table = tmp_path / "traits.csv"
    table.write_text("Code,Trait name,Parent\nBTX:1,cooking quality,\nBTX:2,cooking time,BTX:1\n")
    settings = ws / "traits.toml"
    text = settings.read_text(encoding="utf-8")
    settings.write_text(
        text.replace('id_column = ""', 'id_column = "Code"', 1),
        encoding="utf-8",
    )
    code, out = run(
        "-w", str(ws), "concepts", "import", str(table),
        "--label-column", "Trait name", "--parent-column", "Parent",
    )  # fmt: skip
    assert code == 0 and "Imported 2 concepts with 2 aliases" in out, out


def test_reimport_shows_the_changes_table(ws: Path, tmp_path: Path) -> None:
    table = tmp_path / "c.csv"
    table.write_text("id,label\nBTX:1,taste\nBTX:2,smell\n", encoding="utf-8")
    assert run("-w", str(ws), "concepts", "import", str(table))[0] == 0
    table.write_text("id,label\nBTX:1,flavour\nBTX:3,colour\n", encoding="utf-8")
    code, out = run("-w", str(ws), "concepts", "import", str(table), "--dry-run")
    assert code == 0 and "nothing was stored" in out
    for expected in ("added", "BTX:3", "removed", "BTX:2", "renamed", "'taste' -> 'flavour'"):
        assert expected in out


def test_unrecognised_table_is_one_sentence_with_the_options(ws: Path, tmp_path: Path) -> None:
    table = tmp_path / "c.csv"
    table.write_text("Trait ID,Trait name\nBTX:1,taste\n", encoding="utf-8")
    code, out = run("-w", str(ws), "concepts", "import", str(table))
    assert code == 1 and "--id-column 'Trait ID' --label-column 'Trait name'" in out
    assert "Traceback" not in out


@pytest.mark.parametrize(
    ("synonyms", "says"),
    [
        ((), "No unlinked term occurs at least 2 times; nothing to suggest."),
        (
            (Candidate("BTX:1", "temps de cuisson", "fr", 0.91, "cooking time", 4),),
            "No unlinked term occurs at least 2 times; candidate synonyms from the "
            "pretrained space follow.",
        ),
    ],
    ids=["nothing", "synonyms-only"],
)
def test_concepts_suggest_says_nothing_to_suggest_only_when_there_is_nothing(
    ws: Path, monkeypatch: pytest.MonkeyPatch, synonyms: tuple[Candidate, ...], says: str
) -> None:
    # a user saw "nothing to suggest" printed above a table of candidate synonyms
    found = TermSuggestions(
        terms=[], names={"BTX:1": "cooking time"}, min_count=2, synonyms=synonyms
    )
    monkeypatch.setattr(concept_cmds, "suggest_terms", lambda ws, min_count: found)
    code, out = run("-w", str(ws), "concepts", "suggest")
    assert code == 0, out
    assert says in " ".join(out.split())
    assert ("temps de cuisson" in out) == bool(synonyms)
