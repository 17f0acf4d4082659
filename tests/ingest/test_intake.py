"""Interview files and concept lists into a workspace's store (extractor.ingest.intake).

Inputs are built here in ``tmp_path``; respondents, places and varieties are invented
(Kibali, Lowa, Tamu Njano). Outside references: files are written with Python's ``csv``
module (RFC 4180 quoting), expected sentence counts come from spaCy's own rule-based
``sentencizer`` on a blank English pipeline, and what reached the store is counted through
a second, independent ``sqlite3`` connection to the store file: under SQLite's atomic
commit (https://www.sqlite.org/atomiccommit.html) another connection sees only committed
rows.
"""

from __future__ import annotations

import csv
import sqlite3
from collections.abc import Iterator, Sequence
from pathlib import Path
from typing import Any

import pytest
import spacy

from extractor.errors import InputError
from extractor.ingest import intake
from extractor.ingest.intake import (
    ConceptImport,
    FileReport,
    add_files,
    import_concepts,
    interview_files,
    stored_path,
)
from extractor.ingest.reader import SUFFIXES
from extractor.workspace import store
from extractor.workspace.folder import STORE_FILE, Workspace

HEADER = ["Respondent ID", "Question", "Answer", "Language"]
ROWS = [
    ["KIB-01", "Why do you like it?", "Tamu Njano cooks fast. The porridge is sweet.", "en"],
    ["KIB-02", "Why do you like it?", "The grain of Lowa is big.", "en"],
]
NEW_ROW = [
    "KIB-03",
    "What is missing?",
    "We want a variety that stores well. Weevils eat ours.",
    "en",
]


def write_csv(path: Path, rows: Sequence[Sequence[str]], header: Sequence[str] = HEADER) -> Path:
    """Write a UTF-8 CSV file with a header row, quoted as Python's csv module quotes."""
    with path.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow(header)
        writer.writerows(rows)
    return path


def reference_sentences(texts: Sequence[str]) -> int:
    """Count the sentences of English texts with spaCy's sentencizer, independently."""
    nlp = spacy.blank("en")
    nlp.add_pipe("sentencizer")
    return sum(len(list(nlp(text).sents)) for text in texts)


@pytest.fixture
def committed(workspace: Workspace) -> Iterator[sqlite3.Connection]:
    """A second connection to the workspace's store file: it sees committed rows only."""
    conn = sqlite3.connect(workspace.root / STORE_FILE)
    yield conn
    conn.close()


def count(conn: sqlite3.Connection, table: str) -> int:
    """Count the committed rows of one table."""
    return int(conn.execute(f"SELECT COUNT(*) FROM {table}").fetchone()[0])


def stored(conn: sqlite3.Connection) -> dict[str, int]:
    """Count committed sources, respondents, answers and sentences."""
    return {t: count(conn, t) for t in ("sources", "respondents", "answers", "sentences")}


# --- add_files --------------------------------------------------------------------


def test_add_files_reports_what_one_new_file_added(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path
) -> None:
    path = write_csv(tmp_path / "kibali.csv", ROWS)
    [report] = add_files(workspace, [path])
    sentences = reference_sentences([row[2] for row in ROWS])
    assert report == FileReport(
        path=path.resolve().as_posix(),
        status="added",
        layout="long",
        respondents=2,
        answers=2,
        sentences=sentences,
    )
    assert stored(committed) == {
        "sources": 1,
        "respondents": 2,
        "answers": 2,
        "sentences": sentences,
    }


def test_add_files_twice_adds_nothing(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path
) -> None:
    path = write_csv(tmp_path / "kibali.csv", ROWS)
    add_files(workspace, [path])
    before = stored(committed)
    [again] = add_files(workspace, [path])
    assert again == FileReport(path=path.resolve().as_posix(), status="unchanged")
    assert stored(committed) == before


def test_add_files_changed_file_adds_only_its_new_answers(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path
) -> None:
    path = write_csv(tmp_path / "kibali.csv", ROWS)
    add_files(workspace, [path])
    before = stored(committed)
    write_csv(path, [*ROWS, NEW_ROW])
    [report] = add_files(workspace, [path])
    new_sentences = reference_sentences([NEW_ROW[2]])
    assert (report.status, report.respondents, report.answers, report.sentences) == (
        "added",
        1,
        1,
        new_sentences,
    )
    assert stored(committed) == {
        "sources": before["sources"] + 1,
        "respondents": before["respondents"] + 1,
        "answers": before["answers"] + 1,
        "sentences": before["sentences"] + new_sentences,
    }


def test_add_files_changed_file_without_new_answers_says_so(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path
) -> None:
    path = write_csv(tmp_path / "kibali.csv", ROWS)
    add_files(workspace, [path])
    # The same answers in another order: new bytes, no new answer.
    write_csv(path, ROWS[::-1])
    [report] = add_files(workspace, [path])
    assert (report.status, report.answers, report.sentences) == ("no new answers", 0, 0)
    assert count(committed, "answers") == len(ROWS)


def test_add_files_bad_file_stores_none_of_the_files(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path
) -> None:
    good = write_csv(tmp_path / "kibali.csv", ROWS)
    # An answer without a respondent ID: the reader refuses the file, naming the row.
    bad = write_csv(tmp_path / "lowa.csv", [["", "Why?", "The birds eat it.", "en"]])
    with pytest.raises(InputError, match=r"lowa\.csv.*row 2.*no respondent ID"):
        add_files(workspace, [good, bad])
    assert stored(committed) == dict.fromkeys(("sources", "respondents", "answers", "sentences"), 0)


def test_add_files_failed_store_rolls_back_the_files_stored_before(
    workspace: Workspace,
    committed: sqlite3.Connection,
    tmp_path: Path,
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    first = write_csv(tmp_path / "kibali.csv", ROWS)
    second = write_csv(tmp_path / "lowa.csv", [NEW_ROW])
    real_add_source = intake.store.add_source
    calls: list[str] = []

    def fail_on_second(conn: sqlite3.Connection, **kwargs: Any) -> dict[str, int]:
        calls.append(kwargs["path"])
        if len(calls) == 2:
            raise OSError("disk full")
        return real_add_source(conn, **kwargs)

    monkeypatch.setattr(intake.store, "add_source", fail_on_second)
    with pytest.raises(OSError, match="disk full"):
        add_files(workspace, [first, second])
    assert len(calls) == 2  # the first file was written inside the transaction...
    assert stored(committed) == dict.fromkeys(("sources", "respondents", "answers", "sentences"), 0)
    monkeypatch.undo()
    # ...and rolled back: adding both again stores both in full.
    reports = add_files(workspace, [first, second])
    assert [r.status for r in reports] == ["added", "added"]
    assert count(committed, "answers") == len(ROWS) + 1


@pytest.mark.parametrize(
    ("name", "message"),
    [("missing.csv", "does not exist"), ("folder", "is a folder")],
    ids=["missing-file", "folder"],
)
def test_add_files_refuses_a_path_that_is_not_a_file(
    workspace: Workspace, committed: sqlite3.Connection, tmp_path: Path, name: str, message: str
) -> None:
    (tmp_path / "folder").mkdir()
    good = write_csv(tmp_path / "kibali.csv", ROWS)
    with pytest.raises(InputError, match=message):
        add_files(workspace, [good, tmp_path / name])
    assert count(committed, "sources") == 0


# --- interview_files and stored_path -----------------------------------------------


def test_interview_files_picks_only_the_readers_suffixes(tmp_path: Path) -> None:
    folder = tmp_path / "interviews"
    folder.mkdir()
    readable = [f"answers{suffix}" for suffix in SUFFIXES] + ["UPPER.CSV"]
    skipped = ["notes.pdf", "old.sav", "old.doc", "labels.jsonl", ".hidden.csv", "~$open.xlsx"]
    for name in readable + skipped:
        (folder / name).write_bytes(b"x")
    (folder / "more.csv").mkdir()  # a folder with a readable suffix is not a file
    assert interview_files(folder) == sorted(folder / name for name in readable)


def test_interview_files_of_a_missing_folder_is_empty(tmp_path: Path) -> None:
    assert interview_files(tmp_path / "nowhere") == []


def test_stored_path_is_relative_inside_the_workspace(workspace: Workspace) -> None:
    path = workspace.root / "interviews" / "kibali.csv"
    assert stored_path(workspace, path) == "interviews/kibali.csv"


def test_stored_path_is_absolute_outside_the_workspace(
    workspace: Workspace, tmp_path: Path
) -> None:
    path = tmp_path / "elsewhere" / "kibali.csv"
    assert stored_path(workspace, path) == path.resolve().as_posix()


# --- import_concepts --------------------------------------------------------------

CONCEPTS = [
    ["BTX:9001", "cooking time", "en", "cooks fast|quick to cook"],
    ["BTX:9002", "grain size", "en", "big grain"],
]


def test_import_concepts_imports_then_reports_unchanged(
    workspace: Workspace, committed: sqlite3.Connection
) -> None:
    path = write_csv(
        workspace.root / "concepts.csv", CONCEPTS, header=["id", "label", "lang", "synonyms"]
    )
    first = import_concepts(workspace, path)
    # Each label is one alias, plus one per synonym (SKOS prefLabel and altLabel).
    aliases = sum(1 + len(row[3].split("|")) for row in CONCEPTS)
    assert (first.status, first.path, first.concepts, first.aliases, first.warnings) == (
        "imported",
        "concepts.csv",
        len(CONCEPTS),
        aliases,
        (),
    )
    assert first.version is not None
    again = import_concepts(workspace, path)
    assert again == ConceptImport(
        status="unchanged", path="concepts.csv", concepts=len(CONCEPTS), aliases=aliases
    )
    assert count(committed, "concept_versions") == 1


def test_import_concepts_missing_file_names_it(workspace: Workspace) -> None:
    with pytest.raises(InputError, match=r"nothing\.csv does not exist"):
        import_concepts(workspace, workspace.root / "nothing.csv")


def test_add_warns_when_a_file_contradicts_a_stored_respondent(
    workspace: Workspace, tmp_path: Path
) -> None:
    first, second = tmp_path / "round1.csv", tmp_path / "round2.csv"
    first.write_text("respondent,gender,answer\nR1,female,It cooks fast.\n", encoding="utf-8")
    second.write_text("respondent,gender,answer\nR1,male,Birds eat it.\n", encoding="utf-8")
    add_files(workspace, [first])
    [report] = add_files(workspace, [second])
    assert report.warnings == (
        "File 'round2.csv', row 2: respondent 'R1' has gender 'male', but 'female' in the "
        "workspace (added before); 'female' is kept, so correct the file if it is wrong.",
    )
    assert store.respondents(workspace.conn)[0]["gender"] == "female"
