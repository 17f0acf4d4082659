import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest

from extractor.ingest.review import (
    KEYS_SHEET,
    LISTS_SHEET,
    REVIEW_SHEET,
    Col,
    RowKey,
    read_review,
    sentence_digest,
)
from extractor.report.cells import EXCEL_MAX_CHARS
from extractor.report.review import ReviewLine, write_review_workbook
from tests.review_study import header

HOSTILE = [
    '=HYPERLINK("http://example.invalid","click")',
    "+1 bag gave 30 kg",
    "@SUM(A1:A3)",
    "#N/A",
    "-2 degrees and the beans rot",
    "long answer " * 4000,  # 48,000 characters: more than a cell holds
]


def _write(path: Path, texts: list[str]) -> None:
    lines = [
        ReviewLine(
            key=RowKey(f"S{k}", k, None, None, sentence_digest(text), "none", None, None),
            respondent=text[:20],
            question=text,
            sentence=text,
            words="",
            concept_label=None,
            confidence=None,
        )
        for k, text in enumerate(texts, start=1)
    ]
    meta = {"Workspace": "w", "Workspace ID": "x", "Model version": "none", "Selection": "all"}
    write_review_workbook(path, lines, [("BTX:0001", "=cooking time")], meta)


def _cells(path: Path) -> list[openpyxl.cell.cell.Cell]:
    ws = openpyxl.load_workbook(path)[REVIEW_SHEET]
    top, cols = header(ws)
    return [row[cols[Col.SENTENCE] - 1] for row in ws.iter_rows(min_row=top + 1)]


def test_review_workbook_hostile_cells_stay_text(tmp_path: Path) -> None:
    # OWASP "CSV Injection": a cell starting with = + - @ must not become a formula.
    path = tmp_path / "review.xlsx"
    _write(path, HOSTILE)
    cells = _cells(path)
    assert [c.data_type for c in cells] == ["s"] * len(HOSTILE)
    assert [c.value for c in cells[:-1]] == HOSTILE[:-1]
    # Excel's limit of 32,767 characters per cell (Microsoft, "Excel specifications and limits").
    assert cells[-1].value == HOSTILE[-1][:EXCEL_MAX_CHARS]


def test_review_workbook_has_drop_downs_and_hidden_sheets(tmp_path: Path) -> None:
    path = tmp_path / "review.xlsx"
    _write(path, ["It cooks fast."])
    wb = openpyxl.load_workbook(path)
    assert wb[KEYS_SHEET].sheet_state == "hidden"
    assert wb[LISTS_SHEET].sheet_state == "hidden"
    ws = wb[REVIEW_SHEET]
    top, cols = header(ws)
    lists = {str(dv.sqref).split(":")[0]: dv.formula1 for dv in ws.data_validations.dataValidation}
    verdict = openpyxl.utils.get_column_letter(cols[Col.VERDICT]) + str(top + 1)
    assert lists[verdict] == f"={LISTS_SHEET}!$C$2:$C$4"
    assert [c.value for c in wb[LISTS_SHEET]["C"][1:4]] == ["correct", "wrong", "fix"]
    # the concept drop-down's entry is text too, though the label starts with "="
    assert wb[LISTS_SHEET]["A2"].data_type == "s"


def test_review_workbook_hostile_cells_survive_libreoffice(tmp_path: Path) -> None:
    # Outside check: LibreOffice Calc opens the file and writes it again; text stays text.
    soffice = shutil.which("soffice") or shutil.which("libreoffice")
    if soffice is None:
        pytest.skip(
            "LibreOffice (soffice) is not installed: apt-get install libreoffice-calc-nogui"
        )
    path = tmp_path / "review.xlsx"
    _write(path, HOSTILE[:-1])
    out = tmp_path / "lo"
    subprocess.run(
        [
            soffice,
            f"-env:UserInstallation=file://{tmp_path / 'profile'}",
            "--headless",
            "--convert-to",
            "xlsx",
            "--outdir",
            str(out),
            str(path),
        ],
        check=True,
        capture_output=True,
        timeout=180,
    )
    cells = _cells(out / path.name)
    assert [c.value for c in cells] == HOSTILE[:-1]
    assert all(c.data_type != "f" for c in cells)
    assert read_review(out / path.name, {"BTX:0001": "=cooking time"}).keys.keys() == {
        "S1",
        "S2",
        "S3",
        "S4",
        "S5",
    }
