"""The one entry point for interview files (extractor.ingest.reader): paths, suffixes, settings.

Every file is built here in ``tmp_path``. Outside references are named where they are
used (BCP 47 / RFC 5646 for language settings).
"""

from __future__ import annotations

import codecs
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest import SUFFIXES, read_interviews
from tests.ingest.interview_files import (
    EN_1,
    LANGS,
    read,
)


def test_read_missing_path_names_it(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"nowhere\.csv' does not exist"):
        read(tmp_path / "nowhere.csv")


@pytest.mark.parametrize(
    "suffix", [".csv", ".txt", ".xlsx", ".xls", ".ods", ".docx"], ids=lambda s: s[1:]
)
def test_read_empty_file_names_it(tmp_path: Path, suffix: str) -> None:
    path = tmp_path / f"blank{suffix}"
    path.write_bytes(b"")
    with pytest.raises(InputError, match=rf"'blank\{suffix}' is empty"):
        read(path)


@pytest.mark.parametrize(
    "bom", [codecs.BOM_UTF8, codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE], ids=["utf8", "le", "be"]
)
def test_read_file_holding_only_a_byte_order_mark_is_empty(tmp_path: Path, bom: bytes) -> None:
    # The byte order marks as Python's codecs module holds them (Unicode FAQ on BOMs).
    path = tmp_path / "blank.csv"
    path.write_bytes(bom + b"\r\n")
    with pytest.raises(InputError, match=r"'blank\.csv' is empty"):
        read(path)


def test_read_unknown_suffix_lists_allowed(tmp_path: Path) -> None:
    path = tmp_path / "survey.sav"
    path.write_bytes(b"x")
    with pytest.raises(InputError, match=r"'survey\.sav'.*allowed are \.xlsx, \.xls, \.ods, \.csv"):
        read(path)
    assert ".docx" in SUFFIXES


def test_read_mapping_with_unknown_key_lists_allowed(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"unknown key 'text'; allowed keys are respondent"):
        read(path, mapping={"text": "Answer"})


def test_read_bad_default_language_names_setting(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Respondent,Answer\nR1,{EN_1}\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"setting 'default language'.*'e-n'"):
        read_interviews(path, default_lang="e-n")


def test_read_short_answer_gets_default_language(tmp_path: Path) -> None:
    path = tmp_path / "long.csv"
    path.write_text("Respondent,Answer\nR1,Oui.\n", encoding="utf-8")
    row = read_interviews(path, languages=LANGS, default_lang="FR").rows[0]
    assert (row.lang, row.lang_origin) == ("fr", "default")


def test_respondent_with_conflicting_metadata_is_warned_by_row(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(
        "respondent,gender,district,answer\n"
        "R1,female,Lowa,It cooks fast.\n"
        "R2,male,Lowa,The grain is small.\n"
        "R1,male,Lowa,Birds eat it.\n",
        encoding="utf-8",
    )
    result = read_interviews(path, default_lang="en")
    assert result.warnings == [
        "File 'survey.csv', row 4: respondent 'R1' has gender 'male', but 'female' in row 2; "
        "'female' is kept, so correct the file if it is wrong."
    ]


def test_transcript_respondent_with_conflicting_metadata_names_the_line(tmp_path: Path) -> None:
    path = tmp_path / "notes.txt"
    path.write_text(
        "Respondent: KB-07\nGender: female\n\nFarmer: It cooks fast.\n\n"
        "Respondent: KB-07\nGender: male\n\nFarmer: Birds eat it.\n",
        encoding="utf-8",
    )
    [warning] = read_interviews(path, default_lang="en").warnings
    assert warning.startswith("File 'notes.txt', line 9: respondent 'KB-07' has gender 'male'")
    assert "'female' in line 4" in warning
