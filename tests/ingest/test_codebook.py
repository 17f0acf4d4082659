"""Tests of extractor.ingest.codebook: the question codebook CSV."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.codebook import read_codebook
from extractor.types import QuestionCode


def _write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "questions.csv"
    path.write_text(text, encoding="utf-8")
    return path


def test_codebook_reads_text_and_direction_per_question(tmp_path: Path) -> None:
    path = _write(
        tmp_path,
        "question,text,direction\n"
        'reason_preferred,"Why did you prefer it, then?",likes\n'
        "q5_dislike,,Dislikes\n"
        "q9,Anything else?,\n",
    )
    assert read_codebook(path) == {
        "reason_preferred": QuestionCode(
            "reason_preferred", "Why did you prefer it, then?", "likes"
        ),
        "q5_dislike": QuestionCode("q5_dislike", None, "dislikes"),
        "q9": QuestionCode("q9", "Anything else?", None),
    }


def test_codebook_reads_a_semicolon_table(tmp_path: Path) -> None:
    path = _write(tmp_path, "question;direction\nq1;wishes\n")
    assert read_codebook(path)["q1"].direction == "wishes"


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("key,direction\nq1,likes\n", "has no 'question' column"),
        ("question,direction\nq1,hates\n", r"row 2, column 'direction': 'hates' is not one of"),
        ("question,direction\nq1,likes\nq1,open\n", "row 3: question 'q1' is given twice"),
        ("", "is empty"),
    ],
    ids=["no-question-column", "unknown-direction", "repeated", "empty"],
)
def test_codebook_bad_files_name_the_row_and_column(
    tmp_path: Path, text: str, message: str
) -> None:
    with pytest.raises(InputError, match=message):
        read_codebook(_write(tmp_path, text))
