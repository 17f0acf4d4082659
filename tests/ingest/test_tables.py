"""Spreadsheet reading (extractor.ingest.tables): sheets, row numbers, exact cell text.

Every file is built here in ``tmp_path``. Outside references: RFC 4180 for CSV records
and quoting, and Python's ``csv`` module and openpyxl as reference readers of the same
files.
"""

from __future__ import annotations

import csv
from pathlib import Path

import openpyxl
import pytest

from extractor.errors import InputError
from tests.ingest.interview_files import (
    EN_1,
    EN_2,
    FR_1,
    read,
    write_xlsx,
)


def test_read_xlsx_reads_every_sheet_with_spreadsheet_row_numbers(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {
        "Kibali": [["Respondent ID", "Gender", "Answer"], ["007", "female", EN_1],
                   [None, None, None], ["008", "male", EN_2]],
        "Lowa": [["Code", "Sexe", "Réponse"], [12, "femme", FR_1]],
    })  # fmt: skip
    result = read(path)
    assert (result.kind, result.layout, result.encoding) == ("xlsx", "long", None)
    # Spreadsheet programmes number the header row 1 and keep counting blank rows.
    assert [(r.sheet, r.row, r.respondent) for r in result.rows] == [
        ("Kibali", 2, "007"), ("Kibali", 4, "008"), ("Lowa", 2, "12"),
    ]  # fmt: skip
    assert [r.lang for r in result.rows] == ["en", "en", "fr"]
    assert result.rows[2].metadata == {"sexe": "femme"}


def test_read_xlsx_reads_only_named_sheet(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {
        "Kibali": [["Respondent", "Answer"], ["R1", EN_1]],
        "Lowa": [["Respondent", "Answer"], ["R2", EN_2]],
    })  # fmt: skip
    rows = read(path, sheet="Lowa").rows
    assert [(r.respondent, r.sheet) for r in rows] == [("R2", "Lowa")]


def test_read_xlsx_unknown_sheet_lists_sheets(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {"Kibali": [["Respondent", "Answer"]]})
    with pytest.raises(InputError, match=r"'survey\.xlsx' has no sheet 'Minde'.*'Kibali'"):
        read(path, sheet="Minde")


def test_read_xlsx_skips_unrecognised_sheet_with_warning(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {
        "Answers": [["Respondent", "Answer"], ["R1", EN_1]],
        "Codebook": [["Code", "Meaning"], ["1", "yes"], ["2", "no"]],
    })  # fmt: skip
    result = read(path)
    assert [r.respondent for r in result.rows] == ["R1"]
    assert any("'Codebook'" in w for w in result.warnings)


def test_read_csv_warns_about_cells_beyond_header(tmp_path: Path) -> None:
    # RFC 4180 section 2, rule 4: each record should hold as many fields as the header.
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\nR2,Too small, and hard\n", encoding="utf-8")
    result = read(path)
    assert result.rows[1].answer == "Too small"
    assert any("row 3 has more cells than the header" in w for w in result.warnings)


def test_read_csv_keeps_answer_text_exactly(tmp_path: Path) -> None:
    # RFC 4180 section 2, rules 6-7: a field with commas, line breaks or double
    # quotes is quoted, and an inner double quote is written twice.
    answers = ['  It is "sweet", and\r\nit keeps.  ', "=1+1 looks like a formula", "\tTabbed"]
    path = tmp_path / "survey.csv"
    lines = ["Respondent,Answer"] + [
        f'R{i},"{a.replace(chr(34), chr(34) * 2)}"' for i, a in enumerate(answers)
    ]
    path.write_bytes("\r\n".join(lines).encode("utf-8"))
    assert [r.answer for r in read(path).rows] == answers


def test_read_csv_skips_blank_and_missing_answers(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,   \nR2,NaN\nR3,\nR4,{EN_1}\n", encoding="utf-8")
    assert [(r.respondent, r.row) for r in read(path).rows] == [("R4", 5)]


def test_read_invalid_workbook_names_file(tmp_path: Path) -> None:
    path = tmp_path / "broken.xlsx"
    path.write_text("Respondent,Answer\nR1,hello\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'broken\.xlsx' is not a valid \.xlsx workbook"):
        read(path)


def test_read_answer_without_respondent_names_row(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n,{EN_2}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'survey\.csv', row 3: there is an answer but no "
                                         r"respondent ID in column 'Respondent'"):  # fmt: skip
        read(path)


TRICKY_ANSWERS = [
    'It is "sweet", and\nit keeps.',
    "  Leading and trailing spaces  ",
    "Semicolons; commas, and\ttabs",
    "Ça résiste à la sécheresse – ñame también",
]


def test_read_csv_agrees_with_python_csv_reader(tmp_path: Path) -> None:
    # Python's csv module writes and reads RFC 4180 records: the reader must give each
    # answer exactly as csv.reader does.
    path = tmp_path / "survey.csv"
    with path.open("w", encoding="utf-8", newline="") as handle:
        csv.writer(handle).writerows(
            [["Respondent", "Answer"], *([f"R{i}", a] for i, a in enumerate(TRICKY_ANSWERS))]
        )
    with path.open(encoding="utf-8", newline="") as handle:
        reference = [row[1] for row in csv.reader(handle)][1:]
    rows = read(path).rows
    assert [r.answer for r in rows] == reference == TRICKY_ANSWERS
    # Rows are numbered by record, as a spreadsheet programme shows the CSV (header = 1),
    # even where a quoted answer spans two lines of the file.
    assert [r.row for r in rows] == [2, 3, 4, 5]


def test_read_xlsx_agrees_with_openpyxl_cells(tmp_path: Path) -> None:
    # openpyxl, the reference reader of the file it wrote: each answer is the cell's
    # value on the row openpyxl numbers it.
    path = write_xlsx(
        tmp_path / "survey.xlsx",
        {
            "Kibali": [
                ["Respondent", "Answer"],
                *([f"R{i}", a] for i, a in enumerate(TRICKY_ANSWERS)),
            ]
        },
    )
    sheet = openpyxl.load_workbook(path)["Kibali"]
    reference = [(row[1].row, row[1].value) for row in sheet.iter_rows(min_row=2)]
    assert [(r.row, r.answer) for r in read(path).rows] == reference


def test_read_csv_cell_over_the_field_limit_names_the_row(tmp_path: Path) -> None:
    # The csv module's default field limit is 131,072 characters (its docs); Excel's cell
    # limit is 32,767 (from memory), so such a cell comes from a quote left open.
    path = tmp_path / "big.csv"
    path.write_text('respondent,answer\nR1,fast\nR2,"' + "beans " * 30_000 + '"\n')
    with pytest.raises(InputError, match=r"File 'big.csv', row 3: a cell is longer than 131,072"):
        read(path)


def test_read_csv_quote_left_open_swallowing_rows_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "quote.csv"
    path.write_text('respondent,answer\nKA-01,fast\nKA-02,"It cooks fast.\nKA-03,Bad taste.\n')
    with pytest.raises(InputError, match=r"'quote.csv', row 3: a quote opened in this row"):
        read(path)


def test_read_csv_multiline_answer_with_commas_is_kept(tmp_path: Path) -> None:
    path = tmp_path / "lines.csv"
    path.write_text('respondent,answer\nKA-01,"It cooks fast.\nAlso, the taste, is good."\n')
    result = read(path)
    assert [r.answer for r in result.rows] == ["It cooks fast.\nAlso, the taste, is good."]


def test_read_wide_layout_warns_once_naming_repeated_respondent_ids(tmp_path: Path) -> None:
    path = tmp_path / "dup.csv"
    path.write_text(
        "respondent_id,gender,Why do you grow it?\n"
        f'VK-01,female,"{EN_1}"\nVK-02,male,"{EN_2}"\nVK-01,female,"{FR_1}"\n'
        f'VK-02,male,"{EN_1}"\nVK-03,male,"{EN_2}"\n',
        encoding="utf-8",
    )
    result = read(path)
    # Every row's answer is kept, under the one respondent.
    assert [(r.respondent, r.row) for r in result.rows] == [
        ("VK-01", 2), ("VK-02", 3), ("VK-01", 4), ("VK-02", 5), ("VK-03", 6),
    ]  # fmt: skip
    (warning,) = [w for w in result.warnings if "repeated" in w]
    assert warning.startswith("File 'dup.csv': a respondent ID is repeated ")
    assert "('VK-01' on rows 2 and 4; 'VK-02' on rows 3 and 5)" in warning
    assert "one respondent" in warning


def test_read_long_layout_does_not_warn_about_a_respondent_on_several_rows(
    tmp_path: Path,
) -> None:
    path = tmp_path / "long.csv"
    path.write_text(
        f'Respondent,Question,Answer\nR1,Why?,"{EN_1}"\nR1,Why not?,"{EN_2}"\n', encoding="utf-8"
    )
    assert read(path).warnings == []
