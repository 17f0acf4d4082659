"""Tests for extractor.ingest: spreadsheet and transcript readers.

Every fixture is built here in ``tmp_path``; respondents, places and varieties are
invented (Kibali, Lowa, Tamu Njano, Minde).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import docx
import openpyxl
import pytest

from extractor.errors import InputError
from extractor.ingest import SUFFIXES, ReadResult, read_interviews

LANGS = ["en", "fr", "es"]
EN_1 = "We like Tamu Njano because it cooks fast and the porridge is sweet."
EN_2 = "The grain of Kibali is too small and the birds eat it before harvest."
FR_1 = "Nous aimons Tamu Njano parce qu'elle cuit vite et que la bouillie est sucrée."
ES_1 = "Nos gusta Kibali porque madura temprano y rinde mucho en la parcela."


def write_xlsx(path: Path, sheets: dict[str, list[list[Any]]]) -> Path:
    """Write a workbook with one sheet per entry, rows as given."""
    workbook = openpyxl.Workbook()
    workbook.remove(workbook.active)
    for name, rows in sheets.items():
        sheet = workbook.create_sheet(name)
        for row in rows:
            sheet.append(row)
    workbook.save(path)
    return path


def write_docx(path: Path, paragraphs: list[str]) -> Path:
    """Write a .docx document with one paragraph per entry."""
    document = docx.Document()
    for text in paragraphs:
        document.add_paragraph(text)
    document.save(str(path))
    return path


def read(path: Path, **kwargs: Any) -> ReadResult:
    """Read with the test candidate languages."""
    return read_interviews(path, languages=LANGS, **kwargs)


# --- spreadsheets -----------------------------------------------------------------


def test_read_xlsx_reads_every_sheet_with_spreadsheet_row_numbers(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {
        "Kibali": [["Respondent ID", "Gender", "Answer"], ["007", "female", EN_1],
                   [None, None, None], ["008", "male", EN_2]],
        "Lowa": [["Code", "Sexe", "Réponse"], [12, "femme", FR_1]],
    })  # fmt: skip
    result = read(path)
    assert (result.kind, result.layout, result.encoding) == ("xlsx", "long", None)
    # Spreadsheet programmes number the header row 1 and keep counting blank rows.
    assert [(r["sheet"], r["row"], r["respondent"]) for r in result.rows] == [
        ("Kibali", 2, "007"), ("Kibali", 4, "008"), ("Lowa", 2, "12"),
    ]  # fmt: skip
    assert [r["lang"] for r in result.rows] == ["en", "en", "fr"]
    assert result.rows[2]["metadata"] == {"sexe": "femme"}


def test_read_xlsx_reads_only_named_sheet(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xlsx", {
        "Kibali": [["Respondent", "Answer"], ["R1", EN_1]],
        "Lowa": [["Respondent", "Answer"], ["R2", EN_2]],
    })  # fmt: skip
    rows = read(path, sheet="Lowa").rows
    assert [(r["respondent"], r["sheet"]) for r in rows] == [("R2", "Lowa")]


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
    assert [r["respondent"] for r in result.rows] == ["R1"]
    assert any("'Codebook'" in w for w in result.warnings)


@pytest.mark.parametrize(
    ("encoding", "expected_encoding", "warns"),
    [("utf-8", "utf-8", False), ("utf-8-sig", "utf-8-sig", False), ("cp1252", "cp1252", True)],
    ids=["utf8", "utf8-bom", "cp1252"],
)
def test_read_csv_decodes_encodings(
    tmp_path: Path, encoding: str, expected_encoding: str, warns: bool
) -> None:
    # Windows-1252 encodes "é" as 0xE9 and "’" as 0x92 (code page table, from memory);
    # Python's codec writes the bytes, and the reader must give the same text back.
    answer = "La variété de Minde n’est pas sucrée, mais elle résiste bien à la sécheresse."
    path = tmp_path / "survey.csv"
    path.write_bytes(f'Répondant,Réponse\nR1,"{answer}"\n'.encode(encoding))
    if encoding == "cp1252":
        assert b"\xe9" in path.read_bytes() and b"\x92" in path.read_bytes()
    if encoding == "utf-8-sig":
        assert path.read_bytes().startswith(b"\xef\xbb\xbf")  # the Unicode UTF-8 BOM
    result = read(path)
    assert result.encoding == expected_encoding
    assert result.rows[0]["answer"] == answer
    assert result.rows[0]["respondent"] == "R1"
    assert any("cp1252" in w for w in result.warnings) == warns


def test_read_csv_falls_back_to_latin1_for_bytes_cp1252_lacks(tmp_path: Path) -> None:
    # 0x81 is unassigned in Windows-1252 but is a C1 control in ISO 8859-1 (from memory).
    path = tmp_path / "survey.csv"
    path.write_bytes(b"Respondent,Answer\nR1,caf\xe9 \x81 " + EN_1.encode() + b"\n")
    result = read(path)
    assert result.encoding == "latin-1"
    assert result.rows[0]["answer"].startswith("café \x81 ")
    assert any("latin-1" in w for w in result.warnings)


def test_read_csv_warns_about_cells_beyond_header(tmp_path: Path) -> None:
    # RFC 4180 section 2, rule 4: each record should hold as many fields as the header.
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\nR2,Too small, and hard\n", encoding="utf-8")
    result = read(path)
    assert result.rows[1]["answer"] == "Too small"
    assert any("row 3 has more cells than the header" in w for w in result.warnings)


def test_read_csv_sniffs_semicolon(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Encuestado;Sexo;Respuesta\nE-01;mujer;{ES_1}\n", encoding="utf-8")
    row = read(path).rows[0]
    assert (row["respondent"], row["answer"], row["metadata"]) == ("E-01", ES_1, {"sexo": "mujer"})
    assert (row["lang"], row["lang_origin"]) == ("es", "detected")


def test_read_tsv_splits_on_tabs(tmp_path: Path) -> None:
    path = tmp_path / "survey.tsv"
    answer = "Too small, too hard; we sell it cheaply"
    path.write_text(f"participant\tverbatim\nP1\t{answer}\n", encoding="utf-8")
    result = read(path)
    assert result.kind == "tsv"
    assert [(r["respondent"], r["answer"]) for r in result.rows] == [("P1", answer)]


def test_read_csv_keeps_answer_text_exactly(tmp_path: Path) -> None:
    # RFC 4180 section 2, rules 6-7: a field with commas, line breaks or double
    # quotes is quoted, and an inner double quote is written twice.
    answers = ['  It is "sweet", and\r\nit keeps.  ', "=1+1 looks like a formula", "\tTabbed"]
    path = tmp_path / "survey.csv"
    lines = ["Respondent,Answer"] + [
        f'R{i},"{a.replace(chr(34), chr(34) * 2)}"' for i, a in enumerate(answers)
    ]
    path.write_bytes("\r\n".join(lines).encode("utf-8"))
    assert [r["answer"] for r in read(path).rows] == answers


def test_read_csv_skips_blank_and_missing_answers(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,   \nR2,NaN\nR3,\nR4,{EN_1}\n", encoding="utf-8")
    assert [(r["respondent"], r["row"]) for r in read(path).rows] == [("R4", 5)]


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
    assert [(r["respondent"], r["question"], r["row"]) for r in result.rows] == [
        ("007", q1, 2), ("007", q2, 2), ("008", q1, 3), ("008", q2, 3),
    ]  # fmt: skip
    assert result.rows[0]["metadata"] == {"gender": "female", "district": "Lowa",
                                          "age_group": "30-45"}  # fmt: skip
    assert result.rows[2]["metadata"] == {"gender": "male", "district": "Minde"}


def test_read_long_layout_keeps_question_variety_group_and_language(tmp_path: Path) -> None:
    path = tmp_path / "long.csv"
    path.write_text(
        "respondent_id,Question,Answer,Language,Variety,Focus group,Role\n"
        f'FG-1,Why?,"{FR_1}",FR,Tamu Njano,oui,processor\n'
        f'R-2,,"{EN_1}",,,no,\n',
        encoding="utf-8",
    )
    first, second = read(path).rows
    assert first == {
        "respondent": "FG-1", "question": "Why?", "answer": FR_1, "lang": "fr",
        "lang_origin": "column", "variety": "Tamu Njano", "metadata": {"role": "processor"},
        "sheet": None, "row": 2, "is_group": True,
    }  # fmt: skip
    assert (second["question"], second["variety"], second["is_group"]) == (None, None, False)
    assert (second["lang"], second["lang_origin"], second["metadata"]) == ("en", "detected", {})


def test_read_short_answer_gets_default_language(tmp_path: Path) -> None:
    path = tmp_path / "long.csv"
    path.write_text("Respondent,Answer\nR1,Oui.\n", encoding="utf-8")
    row = read_interviews(path, languages=LANGS, default_lang="FR").rows[0]
    assert (row["lang"], row["lang_origin"]) == ("fr", "default")


def test_read_mapping_overrides_recognition(tmp_path: Path) -> None:
    path = tmp_path / "mapped.csv"
    path.write_text(f"Col A,Col B,Text,ID\nK-1,{EN_1},ignored note,99\n", encoding="utf-8")
    row = read(path, mapping={"respondent": "Col A", "answer": "col b"}).rows[0]
    assert (row["respondent"], row["answer"]) == ("K-1", EN_1)
    assert row["metadata"] == {"text": "ignored note", "id": "99"}


def test_read_mapping_questions_makes_wide_layout(tmp_path: Path) -> None:
    path = tmp_path / "mapped.csv"
    path.write_text("Who,Q1,Q2,Village\nW-1,Sweet,Too small,Lowa\n", encoding="utf-8")
    result = read(path, mapping={"respondent": "Who", "questions": ["Q1", "Q2"]})
    assert result.layout == "wide"
    assert [(r["question"], r["answer"]) for r in result.rows] == [
        ("Q1", "Sweet"),
        ("Q2", "Too small"),
    ]
    assert result.rows[0]["metadata"] == {"village": "Lowa"}


# --- transcripts ------------------------------------------------------------------

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
    got = [(r["respondent"], r["question"], r["answer"], r["row"]) for r in result.rows]
    assert got == [
        ("KB-07", "What do you like about Tamu Njano?",
         f"{EN_1}\nand it keeps well in the store.", 8),
        ("KB-07", "What do you like about Tamu Njano?",
         "The grain is small: we cannot sell it.", 10),
        ("KB-07", "Anything else?", "No.", 13),
        ("KB-08", "¿Qué le gusta?", ES_1, 18),
    ]  # fmt: skip
    first, last = result.rows[0], result.rows[-1]
    assert first["metadata"] == {"gender": "female", "age_group": "30-45"}
    assert first["speaker"] == "Woman 1"
    assert (first["variety"], first["is_group"], first["lang_origin"]) == ("Tamu Njano", True,
                                                                          "detected")  # fmt: skip
    assert (last["lang"], last["lang_origin"], last["is_group"]) == ("es", "column", False)
    assert (last["metadata"], last["speaker"]) == ({}, "Agricultor")


def test_read_txt_without_header_uses_file_stem(tmp_path: Path) -> None:
    path = tmp_path / "R-Minde-03.txt"
    path.write_text(f"Q: Why?\nFarmer: {EN_2}\n\nIt also needs weeding.\n", encoding="utf-8")
    rows = read(path).rows
    assert [(r["respondent"], r["question"], r["row"]) for r in rows] == [
        ("R-Minde-03", "Why?", 2),
        ("R-Minde-03", "Why?", 4),
    ]


def test_read_txt_numbered_question_labels_are_interviewer(tmp_path: Path) -> None:
    path = tmp_path / "minde.txt"
    path.write_text(f"Respondent: M-9\n\nQ1: Why Kibali?\nR: {EN_2}\n", encoding="utf-8")
    rows = read(path).rows
    assert [(r["question"], r["answer"], r["speaker"]) for r in rows] == [
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
    assert (row["respondent"], row["question"], row["row"]) == (
        "LW-2",
        "Pourquoi cette variété ?",
        5,
    )
    assert row["answer"] == f"{FR_1}\nElle se conserve bien."
    assert (row["lang"], row["metadata"]) == ("fr", {"gender": "male"})
    assert row["speaker"] == "Répondant 1"


# --- bad inputs -------------------------------------------------------------------


def test_read_missing_path_names_it(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"nowhere\.csv' does not exist"):
        read(tmp_path / "nowhere.csv")


@pytest.mark.parametrize("suffix", [".csv", ".txt", ".xlsx", ".docx"], ids=lambda s: s[1:])
def test_read_empty_file_names_it(tmp_path: Path, suffix: str) -> None:
    path = tmp_path / f"blank{suffix}"
    path.write_bytes(b"")
    with pytest.raises(InputError, match=rf"'blank\{suffix}' is empty"):
        read(path)


def test_read_unknown_suffix_lists_allowed(tmp_path: Path) -> None:
    path = tmp_path / "survey.xls"
    path.write_bytes(b"x")
    with pytest.raises(InputError, match=r"'survey\.xls'.*allowed are \.xlsx, \.csv"):
        read(path)
    assert ".docx" in SUFFIXES


def test_read_invalid_workbook_names_file(tmp_path: Path) -> None:
    path = tmp_path / "broken.xlsx"
    path.write_text("Respondent,Answer\nR1,hello\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'broken\.xlsx' is not a valid \.xlsx workbook"):
        read(path)


# Encrypted Office files are OLE compound files; the header signature
# D0 CF 11 E0 A1 B1 1A E1 is from [MS-CFB] section 2.2 (from memory).
OLE_HEADER = bytes.fromhex("d0cf11e0a1b11ae1") + b"\x00" * 504


@pytest.mark.parametrize("suffix", [".docx", ".xlsx"], ids=["docx", "xlsx"])
def test_read_encrypted_office_file_says_password_protected(tmp_path: Path, suffix: str) -> None:
    path = tmp_path / f"locked{suffix}"
    path.write_bytes(OLE_HEADER)
    with pytest.raises(InputError, match=rf"'locked\{suffix}' is password-protected"):
        read(path)


@pytest.mark.parametrize(
    "data", [b"not a zip at all", b"PK\x03\x04 truncated zip"], ids=["text", "truncated-zip"]
)
def test_read_corrupt_docx_names_file(tmp_path: Path, data: bytes) -> None:
    path = tmp_path / "broken.docx"
    path.write_bytes(data)
    with pytest.raises(InputError, match=r"'broken\.docx' is not a valid \.docx document"):
        read(path)


def test_read_csv_without_answer_or_free_text_lists_headers(tmp_path: Path) -> None:
    path = tmp_path / "codes.csv"
    path.write_text("Respondent,Gender,District\nR1,female,Lowa\nR2,male,Lowa\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'codes\.csv'.*'Respondent', 'Gender', 'District'.*"
                                         r"\{'answer': '<header>'\}"):  # fmt: skip
        read(path)


def test_read_mapping_naming_missing_column_lists_headers(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'survey\.csv'.*'Verbatim' for 'answer'.*'Respondent'"):
        read(path, mapping={"answer": "Verbatim"})


def test_read_mapping_with_unknown_key_lists_allowed(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"unknown key 'text'; allowed keys are respondent"):
        read(path, mapping={"text": "Answer"})


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


def test_read_answer_without_respondent_names_row(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n,{EN_2}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"'survey\.csv', row 3: there is an answer but no "
                                         r"respondent ID in column 'Respondent'"):  # fmt: skip
        read(path)


def test_read_transcript_bad_language_header_names_line(tmp_path: Path) -> None:
    path = tmp_path / "t.txt"
    path.write_text("Respondent: R1\nLanguage: Klingonese\n\nR1: Hello there friend\n")
    with pytest.raises(InputError, match=r"'t\.txt', line 2, column 'Language'"):
        read(path)


def test_read_bad_default_language_names_setting(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"setting 'default language'.*'e-n'"):
        read_interviews(path, default_lang="e-n")
