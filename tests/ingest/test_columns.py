"""Column recognition (extractor.ingest.columns): long and wide layouts, mappings, cells.

Every file is built here in ``tmp_path``; headers follow common survey exports in
English, French and Spanish.
"""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.columns import is_blank
from extractor.types import AnswerRow
from tests.ingest.interview_files import (
    EN_1,
    EN_2,
    FR_1,
    read,
    write_xlsx,
)
from tests.maize import CODEBOOK, SKIP_REASON, load_answers


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


# --- short answers in a wide table: the codebook's questions, a warning otherwise ---------

SHORT_WIDE = (
    "respondent_id,gender,role,district,why_grow,dislike_q\n"
    'VK-01,female,farmer,Lindaro,"It grows fast, and we like the taste.",The grain is small.\n'
    'VK-02,male,trader,Lindaro,"It sells well at the Tessaly market, they ask for it.",Low price.\n'
    'VK-03,female,farmer,Morvane,"It matures early, before the hungry months.",It rots.\n'
)


def test_read_wide_layout_takes_a_codebook_question_however_short_its_answers(
    tmp_path: Path,
) -> None:
    path = tmp_path / "short.csv"
    path.write_text(SHORT_WIDE, encoding="utf-8")
    result = read(path, coded={"dislike_q"})
    assert [(r.respondent, r.question) for r in result.rows if r.question == "dislike_q"] == [
        ("VK-01", "dislike_q"), ("VK-02", "dislike_q"), ("VK-03", "dislike_q"),
    ]  # fmt: skip
    assert len(result.rows) == 6
    assert result.rows[0].metadata == {"gender": "female", "role": "farmer", "district": "Lindaro"}
    assert not any("read like answers" in w for w in result.warnings)


def test_read_wide_layout_warns_about_metadata_that_reads_like_answers(tmp_path: Path) -> None:
    path = tmp_path / "short.csv"
    path.write_text(SHORT_WIDE, encoding="utf-8")
    result = read(path)
    assert len(result.rows) == 3  # nothing else changes: the column stays metadata
    assert result.rows[0].metadata["dislike_q"] == "The grain is small."
    (warning,) = [w for w in result.warnings if "read like answers" in w]
    assert warning.startswith("File 'short.csv', column 'dislike_q': ")
    assert "'The grain is small.'" in warning
    assert "questions.csv" in warning and "[codebook]" in warning
    assert 'questions = ["dislike_q", ...] under [columns] in traits.toml' in warning


@pytest.mark.parametrize(
    "values",
    [
        ["Lindaro", "Upper Morvane", "Tessaly", "Lindaro East"],
        ["farmer and trader", "farmer", "trader", "farmer and trader", "processor"],
        ["18-29", "30-45", "45 and over", "30-45"],
        ["12 March 2025", "2025-03-14", "14/03/2025", "3 Apr. 2025"],
        ["Maria da Silva", "Amina Kessy", "Jean de la Croix", "Tomas Ruvaro"],
        ["primary school completed", "no formal education", "university degree", "none"],
    ],
    ids=["villages", "roles", "age groups", "dates", "names", "education"],
)
def test_read_wide_layout_does_not_warn_about_ordinary_metadata(
    tmp_path: Path, values: list[str]
) -> None:
    path = tmp_path / "wide.csv"
    lines = ["Respondent,Info,Why do you grow it?"] + [
        f'R{i},{v},"{EN_1}"' for i, v in enumerate(values)
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    result = read(path)
    assert result.rows[0].metadata == {"info": values[0]}
    assert result.warnings == []


def test_read_demo_files_warn_of_no_metadata_column() -> None:
    # The invented demo's wide CSV and long workbook (smoke check: categorical metadata).
    folder = Path(__file__).resolve().parents[2] / "sample_interviews" / "interviews"
    for path in sorted(folder.glob("*.csv")) + sorted(folder.glob("*.xlsx")):
        assert not any("read like answers" in w for w in read(path).warnings), path.name


def test_read_maize_survey_as_a_wide_table_warns_of_no_metadata_column(tmp_path: Path) -> None:
    # Real answers (tests/maize.py): one row per farmer, metadata then the two questions.
    answers = load_answers()
    if answers is None:
        pytest.skip(SKIP_REASON)
    people: dict[str, dict[str, str]] = {}
    for row in answers:
        person = people.setdefault(row["respondent"], {
            k: row[k] for k in ("respondent", "country", "gender", "age_group", "language")
        })  # fmt: skip
        person[row["question"]] = row["answer"]
    path = tmp_path / "maize_wide.csv"
    columns = ["respondent", "country", "gender", "age_group", "language", *CODEBOOK]
    with path.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.DictWriter(handle, columns)
        writer.writeheader()
        writer.writerows(people.values())
    result = read(path, coded=set(CODEBOOK))
    assert not any("read like answers" in w for w in result.warnings)
    assert len(result.rows) == sum(1 for row in answers if not is_blank(row["answer"]))
    assert set(result.rows[0].metadata) == {"country", "gender", "age_group"}


# --- which missing column is named first --------------------------------------------------


def test_read_short_answers_without_ids_names_the_missing_id_column(tmp_path: Path) -> None:
    path = tmp_path / "noid.csv"
    path.write_text(
        "gender,district,dislike_q\nfemale,Lindaro,The grain is small.\nmale,Lindaro,Low price.\n",
        encoding="utf-8",
    )
    both = (r"'noid\.csv': no respondent ID column was recognised, nor any answer column "
            r".*--respondent-column.*--answer-column.*question codebook")  # fmt: skip
    with pytest.raises(InputError, match=both):
        read(path)
    # With the column in the codebook only the IDs are missing, and only they are named.
    with pytest.raises(InputError, match=r"no respondent ID column was recognised \(") as err:
        read(path, coded={"dislike_q"})
    assert "answer column" not in str(err.value)
