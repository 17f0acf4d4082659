"""Transcript reading (extractor.ingest.transcripts): header blocks and speaker turns.

Every file is built here in ``tmp_path``; python-docx writes the .docx documents.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import InputError
from tests.ingest.interview_files import (
    EN_1,
    EN_2,
    ES_1,
    FR_1,
    read,
    write_docx,
)

TRANSCRIPT = f"""Respondent: KB-07
Gender: female
Age group: 30-45
Variety: Tamu Njano
Focus group: yes

Interviewer: What do you like about Tamu Njano?
Woman 1: {EN_1}
and it keeps well in the store.
Woman 2: The grain is small: we cannot sell it.

Moderator: Anything else?
Woman 1: No.

Respondent: KB-08
Language: Spanish
Entrevistador: ¿Qué le gusta?
Agricultor: {ES_1}
"""


def test_read_txt_transcript_turns_become_answers(tmp_path: Path) -> None:
    path = tmp_path / "kibali.txt"
    path.write_text(TRANSCRIPT, encoding="utf-8")
    result = read(path)
    assert (result.kind, result.layout, result.encoding) == ("txt", "transcript", "utf-8")
    got = [(r.respondent, r.question, r.answer, r.row) for r in result.rows]
    assert got == [
        ("KB-07", "What do you like about Tamu Njano?",
         f"{EN_1}\nand it keeps well in the store.", 8),
        ("KB-07", "What do you like about Tamu Njano?",
         "The grain is small: we cannot sell it.", 10),
        ("KB-07", "Anything else?", "No.", 13),
        ("KB-08", "¿Qué le gusta?", ES_1, 18),
    ]  # fmt: skip
    first, last = result.rows[0], result.rows[-1]
    assert first.metadata == {"gender": "female", "age_group": "30-45"}
    assert first.speaker == "Woman 1"
    assert (first.variety, first.is_group, first.lang_origin) == ("Tamu Njano", True,
                                                                          "detected")  # fmt: skip
    assert (last.lang, last.lang_origin, last.is_group) == ("es", "column", False)
    assert (last.metadata, last.speaker) == ({}, "Agricultor")


def test_read_txt_without_header_uses_file_stem(tmp_path: Path) -> None:
    path = tmp_path / "R-Minde-03.txt"
    path.write_text(f"Q: Why?\nFarmer: {EN_2}\n\nIt also needs weeding.\n", encoding="utf-8")
    rows = read(path).rows
    assert [(r.respondent, r.question, r.row) for r in rows] == [
        ("R-Minde-03", "Why?", 2),
        ("R-Minde-03", "Why?", 4),
    ]


def test_read_txt_numbered_question_labels_are_interviewer(tmp_path: Path) -> None:
    path = tmp_path / "minde.txt"
    path.write_text(f"Respondent: M-9\n\nQ1: Why Kibali?\nR: {EN_2}\n", encoding="utf-8")
    rows = read(path).rows
    assert [(r.question, r.answer, r.speaker) for r in rows] == [
        ("Why Kibali?", EN_2, "R"),
    ]


def test_read_docx_transcript_one_line_per_paragraph(tmp_path: Path) -> None:
    path = write_docx(tmp_path / "lowa.docx", [
        "Respondent: LW-2", "Gender: male", "", "Enquêteur: Pourquoi cette variété ?",
        f"Répondant 1: {FR_1}", "Elle se conserve bien.",
    ])  # fmt: skip
    result = read(path)
    assert (result.kind, result.encoding) == ("docx", None)
    (row,) = result.rows
    assert (row.respondent, row.question, row.row) == (
        "LW-2",
        "Pourquoi cette variété ?",
        5,
    )
    assert row.answer == f"{FR_1}\nElle se conserve bien."
    assert (row.lang, row.metadata) == ("fr", {"gender": "male"})
    assert row.speaker == "Répondant 1"


@pytest.mark.parametrize(
    "data", [b"not a zip at all", b"PK\x03\x04 truncated zip"], ids=["text", "truncated-zip"]
)
def test_read_corrupt_docx_names_file(tmp_path: Path, data: bytes) -> None:
    path = tmp_path / "broken.docx"
    path.write_bytes(data)
    with pytest.raises(InputError, match=r"'broken\.docx' is not a valid \.docx document"):
        read(path)


def test_read_transcript_bad_language_header_names_line(tmp_path: Path) -> None:
    path = tmp_path / "t.txt"
    path.write_text("Respondent: R1\nLanguage: Klingonese\n\nR1: Hello there friend\n")
    with pytest.raises(InputError, match=r"'t\.txt', line 2, column 'Language'"):
        read(path)
