"""Workbook sheets (extractor.ingest.sheets): .xlsx, .xls and .ods read alike.

Outside references: the .ods files are written by odfpy (the OpenDocument library) and by
pandas' odf writer; the .xls file is a real Excel 97-2003 workbook that statsmodels ships
with its nowcasting test results, read cell by cell with xlrd as the reference. The file
signatures are from [MS-CFB] (OLE compound files) and PKWARE's APPNOTE (zip).
"""

from __future__ import annotations

import io
import subprocess
import sys
import zipfile
from datetime import date, timedelta
from pathlib import Path

import pandas as pd
import pytest
import xlrd

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list
from extractor.ingest.sheets import read_sheets
from tests.ingest.interview_files import EN_1, EN_2, FR_1, read, write_ods, write_xlsx

STATSMODELS_XLS = "statsmodels/tsa/statespace/tests/results/frbny_nowcast/Nowcasting/test_spec.xls"


def _real_xls() -> Path:
    """The .xls that statsmodels ships (written by Excel, not by this project)."""
    statsmodels = pytest.importorskip("statsmodels")
    path = Path(statsmodels.__file__).parents[1] / STATSMODELS_XLS
    if not path.is_file():
        pytest.skip(f"statsmodels was installed without its test files ({STATSMODELS_XLS})")
    return path


def test_read_ods_reads_every_sheet_with_spreadsheet_row_numbers(tmp_path: Path) -> None:
    path = write_ods(tmp_path / "survey.ods", {
        "Kibali": [["Respondent ID", "Gender", "Answer"], ["007", "female", EN_1],
                   [None, None, None], ["008", "male", EN_2]],
        "Lowa": [[None], ["Code", "Sexe", "Réponse"], [12, "femme", FR_1]],
    })  # fmt: skip
    result = read(path)
    assert (result.kind, result.layout, result.encoding) == ("ods", "long", None)
    # Spreadsheet programmes number the first row 1 and keep counting blank rows.
    assert [(r.sheet, r.row, r.respondent, r.answer) for r in result.rows] == [
        ("Kibali", 2, "007", EN_1), ("Kibali", 4, "008", EN_2), ("Lowa", 3, "12", FR_1),
    ]  # fmt: skip
    assert result.rows[2].metadata == {"sexe": "femme"}


def test_read_ods_written_by_pandas_odf_writer(tmp_path: Path) -> None:
    path = tmp_path / "wide.ods"
    frame = pd.DataFrame(
        {"Respondent": ["K-1", "K-2"], "What do you like about Tamu Njano?": [EN_1, EN_2]}
    )
    frame.to_excel(path, engine="odf", index=False, sheet_name="Kibali")
    result = read(path, sheet="Kibali")
    assert result.layout == "wide"
    assert [(r.respondent, r.question, r.answer) for r in result.rows] == [
        ("K-1", "What do you like about Tamu Njano?", EN_1),
        ("K-2", "What do you like about Tamu Njano?", EN_2),
    ]


def test_read_real_xls_agrees_with_xlrd_cells() -> None:
    path = _real_xls()
    result = read(path, mapping={"respondent": "SeriesID", "answer": "SeriesName"})
    sheet = xlrd.open_workbook(str(path)).sheet_by_index(0)  # the reference reader
    expected = [
        (sheet.name, r + 1, sheet.cell_value(r, 1), sheet.cell_value(r, 2))
        for r in range(1, sheet.nrows)
    ]
    assert result.kind == "xls"
    assert [(r.sheet, r.row, r.respondent, r.answer) for r in result.rows] == expected
    # Excel stores every number as a double: 1.0 in the Model column reads as "1".
    assert sheet.cell_value(1, 0) == 1.0 and result.rows[0].metadata["model"] == "1"


def test_read_real_xls_unknown_sheet_lists_sheets() -> None:
    with pytest.raises(InputError, match=r"'test_spec\.xls' has no sheet 'Answers'.*'spec'"):
        read(_real_xls(), sheet="Answers")


@pytest.mark.parametrize(
    ("name", "content", "message"),
    [
        ("broken.ods", b"Respondent,Answer\nR1,hello\n", r"'broken\.ods' is not a valid \.ods"),
        ("broken.xls", b"Respondent,Answer\nR1,hello\n", r"'broken\.xls' is not a valid \.xls"),
        # an OLE compound file header ([MS-CFB] 2.2) with nothing behind it
        ("cut.xls", bytes.fromhex("d0cf11e0a1b11ae1") + b"\0" * 504, r"'cut\.xls' is not a valid"),
        ("empty.ods", b"PK\x05\x06" + b"\0" * 18, r"'empty\.ods' is not a valid \.ods"),
    ],
    ids=["text-as-ods", "text-as-xls", "truncated-xls", "empty-zip-ods"],
)
def test_read_broken_workbook_is_one_sentence_naming_it(
    tmp_path: Path, name: str, content: bytes, message: str
) -> None:
    path = tmp_path / name
    path.write_bytes(content)
    with pytest.raises(InputError, match=message):
        read(path)


def test_read_xlsx_named_xls_says_to_rename_it(tmp_path: Path) -> None:
    path = write_xlsx(tmp_path / "survey.xls", {"S": [["Respondent", "Answer"], ["R1", EN_1]]})
    assert path.read_bytes()[:4] == b"PK\x03\x04"  # PKWARE APPNOTE: a zip archive
    with pytest.raises(InputError, match=r"'survey\.xls' is a newer \.xlsx.*rename it to \.xlsx"):
        read(path)


def test_read_ods_that_is_a_zip_without_content_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "odd.ods"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet")
    with pytest.raises(InputError, match=r"'odd\.ods' is not a valid \.ods workbook"):
        read(path)


def test_read_sheets_of_real_xls_are_numbered_from_one() -> None:
    path = _real_xls()
    (sheet,) = read_sheets(path, path.read_bytes())
    assert (sheet.name, sheet.visible) == ("spec", True)
    header = ["Model", "SeriesID", "SeriesName", "Frequency", "Block1-Global",
              "Transformation", "Units", "Category"]  # fmt: skip
    assert sheet.grid[0] == (1, header)


def test_load_concept_list_from_ods(tmp_path: Path) -> None:
    path = write_ods(tmp_path / "concepts.ods", {
        "Traits": [["id", "label", "lang", "synonyms"],
                   ["BTX:0001", "cooking time", "en", "cooks fast|quick to cook"],
                   ["BTX:0001", "temps de cuisson", "fr", "cuit vite"]],
    })  # fmt: skip
    loaded = load_concept_list(path)
    assert {(a.text, a.lang, a.kind) for a in loaded.aliases} == {
        ("cooking time", "en", "preferred"),
        ("cooks fast", "en", "alternative"),
        ("quick to cook", "en", "alternative"),
        ("temps de cuisson", "fr", "preferred"),
        ("cuit vite", "fr", "alternative"),
    }


def test_load_concept_list_from_real_xls_reads_its_first_sheet(tmp_path: Path) -> None:
    # The statsmodels file has no id/label columns: the reader must get far enough to
    # name the columns xlrd finds in it.
    with pytest.raises(InputError, match=r"no 'id' or 'label' column.*'SeriesID'"):
        load_concept_list(_real_xls())


@pytest.mark.parametrize("suffix", [".xls", ".ods"], ids=["xls", "ods"])
def test_load_concept_list_broken_workbook_is_one_sentence(tmp_path: Path, suffix: str) -> None:
    path = tmp_path / f"concepts{suffix}"
    path.write_bytes(b"id,label\nBTX:1,taste\n")
    with pytest.raises(InputError, match=rf"concepts\{suffix}.*not a valid \{suffix} workbook"):
        load_concept_list(path)


def _macrodata_xls() -> Path:
    """The FRED data of statsmodels, as Excel saved it: a README sheet and two date columns."""
    statsmodels = pytest.importorskip("statsmodels")
    path = Path(statsmodels.__file__).parent.joinpath(
        "datasets/macrodata/src/macrodata.xls/macrodata.xls"
    )
    if not path.is_file():
        pytest.skip("statsmodels was installed without its source data files")
    return path


def test_read_sheets_of_real_xls_give_dates_as_iso_text() -> None:
    path = _macrodata_xls()
    sheets = {s.name: s for s in read_sheets(path, path.read_bytes())}
    assert list(sheets) == ["README", "Monthly", "Quarterly"]
    # Excel's 1900 date system counts days from 1899-12-30 for dates after February 1900
    # (Microsoft's documented serial dates with the Lotus leap-year quirk, from memory):
    # the serial 17168 in the first Quarterly row is 1 January 1947.
    serial = xlrd.open_workbook(str(path), logfile=io.StringIO()).sheet_by_name("Quarterly")
    assert serial.cell_value(1, 0) == 17168.0
    assert (date(1899, 12, 30) + timedelta(days=17168)).isoformat() == "1947-01-01"
    assert sheets["Quarterly"].grid[1][0] == 2 and sheets["Quarterly"].grid[1][1][0] == "1947-01-01"


def test_read_xls_prints_nothing_even_when_xlrd_warns() -> None:
    # This file makes xlrd warn about an OLE2 inconsistency, on the stdout it captured at
    # import; library code never prints. A fresh interpreter sees what a user would.
    path = _macrodata_xls()
    code = (
        "from pathlib import Path; from extractor.ingest.sheets import read_sheets; "
        f"p = Path({str(path)!r}); print(len(read_sheets(p, p.read_bytes())))"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert (done.returncode, done.stdout, done.stderr) == (0, "3\n", "")


def test_xlsx_formulas_without_a_saved_value_are_named_not_dropped(tmp_path: Path) -> None:
    # openpyxl writes formulas without computing them (its docs: "openpyxl never evaluates
    # formula"), as scripts do; the answers in those cells must not vanish silently.
    path = write_xlsx(tmp_path / "scripted.xlsx", {"Answers": [
        ["respondent", "answer"],
        ["R1", EN_1],
        ["R2", '=CONCAT("Good ", "yield")'],
        ["R3", "=B2"],
    ]})  # fmt: skip
    expected = r"'scripted.xlsx', sheet 'Answers': the formulas in B3, B4 have no saved value"
    with pytest.raises(InputError, match=expected):
        read(path)
