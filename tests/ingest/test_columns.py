"""Column recognition (extractor.ingest.columns): long and wide layouts, mappings, cells.

Every file is built here in ``tmp_path``; headers follow common survey exports in
English, French and Spanish.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.types import AnswerRow
from tests.ingest.interview_files import (
    EN_1,
    EN_2,
    FR_1,
    read,
    write_xlsx,
)


def test_read_wide_layout_turns_free_text_columns_into_questions(tmp_path: Path) -> None:
    q1, q2 = "What do you like about Tamu Njano?", "What do you dislike about Kibali"
    path = write_xlsx(tmp_path / "wide.xlsx", {"Sheet1": [
        ["Respondent code", "Gender", "District", "Age group", q1, q2],
        ["007", "female", "Lowa", "30-45", EN_1, EN_2],
        ["008", "male", "Minde", None, "It gives a good yield even with little rain.",
         "It needs too much weeding and the cobs are small."],
    ]})  # fmt: skip
    result = read(path)
    assert result.layout == "wide"
    assert [(r.respondent, r.question, r.row) for r in result.rows] == [
        ("007", q1, 2), ("007", q2, 2), ("008", q1, 3), ("008", q2, 3),
    ]  # fmt: skip
    assert result.rows[0].metadata == {"gender": "female", "district": "Lowa",
                                          "age_group": "30-45"}  # fmt: skip
    assert result.rows[2].metadata == {"gender": "male", "district": "Minde"}


def test_read_long_layout_keeps_question_variety_group_and_language(tmp_path: Path) -> None:
    path = tmp_path / "long.csv"
    path.write_text(
        "respondent_id,Question,Answer,Language,Variety,Focus group,Role\n"
        f'FG-1,Why?,"{FR_1}",FR,Tamu Njano,oui,processor\n'
        f'R-2,,"{EN_1}",,,no,\n',
        encoding="utf-8",
    )
    first, second = read(path).rows
    assert first == AnswerRow(
        respondent="FG-1", question="Why?", answer=FR_1, lang="fr", lang_origin="column",
        variety="Tamu Njano", metadata={"role": "processor"}, sheet=None, row=2, is_group=True,
    )  # fmt: skip
    assert (second.question, second.variety, second.is_group) == (None, None, False)
    assert (second.lang, second.lang_origin, second.metadata) == ("en", "detected", {})


def test_read_mapping_overrides_recognition(tmp_path: Path) -> None:
    path = tmp_path / "mapped.csv"
    path.write_text(f"Col A,Col B,Text,ID\nK-1,{EN_1},ignored note,99\n", encoding="utf-8")
    row = read(path, mapping={"respondent": "Col A", "answer": "col b"}).rows[0]
    assert (row.respondent, row.answer) == ("K-1", EN_1)
    assert row.metadata == {"text": "ignored note", "id": "99"}


def test_read_mapping_questions_makes_wide_layout(tmp_path: Path) -> None:
    path = tmp_path / "mapped.csv"
    path.write_text("Who,Q1,Q2,Village\nW-1,Sweet,Too small,Lowa\n", encoding="utf-8")
    result = read(path, mapping={"respondent": "Who", "questions": ["Q1", "Q2"]})
    assert result.layout == "wide"
    assert [(r.question, r.answer) for r in result.rows] == [
        ("Q1", "Sweet"),
        ("Q2", "Too small"),
    ]
    assert result.rows[0].metadata == {"village": "Lowa"}


def test_read_csv_without_answer_or_free_text_lists_headers(tmp_path: Path) -> None:
    path = tmp_path / "codes.csv"
    path.write_text("Respondent,Gender,District\nR1,female,Lowa\nR2,male,Lowa\n", encoding="utf-8")
    headers = r"'codes\.csv'.*'Respondent', 'Gender', 'District'.*"
    how = r"--answer-column.*answer = \"HEADER\" under \[columns\] in traits\.toml"
    with pytest.raises(InputError, match=headers + how):
        read(path)


def test_read_mapping_naming_missing_column_lists_headers(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    named = r"'survey\.csv'.*answer column was named 'Verbatim'.*'Respondent'.*--answer-column"
    with pytest.raises(InputError, match=named):
        read(path, mapping={"answer": "Verbatim"})


def test_read_unknown_language_tag_names_row_and_column(tmp_path: Path) -> None:
    path = write_xlsx(
        tmp_path / "survey.xlsx",
        {
            "Kibali": [
                ["Respondent", "Answer", "Idioma"],
                ["R1", EN_1, "en"],
                ["R2", EN_2, "zz-top"],
            ]
        },
    )
    with pytest.raises(InputError, match=r"'survey\.xlsx', sheet 'Kibali', row 3, column "
                                         r"'Idioma': the language 'zz-top'"):  # fmt: skip
        read(path)
