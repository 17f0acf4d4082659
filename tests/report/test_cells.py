"""Tests of extractor.report.cells: user text stays text, never a formula or an error code.

The risky first characters are those OWASP lists for "CSV Injection" (=, +, -, @, tab,
carriage return); ECMA-376 stores a string cell with type "s" (shared or inline string)
and a formula in an ``<f>`` element.
"""

from __future__ import annotations

from pathlib import Path

import openpyxl
import pandas as pd
import pytest
from openpyxl import Workbook

from extractor.report.cells import EXCEL_MAX_CHARS, append_row, safe_text, write_table

RISKY = ['=HYPERLINK("http://x","y")', "+1 cooks fast", "-weevils", "@SUM(A1)", "\tcooks", "#N/A"]
RISKY_IDS = ["equals-formula", "plus", "minus", "at", "tab", "error-code"]


def _reload(wb: Workbook, tmp_path: Path) -> openpyxl.worksheet.worksheet.Worksheet:
    path = tmp_path / "cells.xlsx"
    wb.save(path)
    return openpyxl.load_workbook(path).active


@pytest.mark.parametrize("text", RISKY, ids=RISKY_IDS)
def test_append_row_keeps_text(text: str, tmp_path: Path) -> None:
    wb = Workbook()
    append_row(wb.active, [text, 3, None])
    ws = _reload(wb, tmp_path)
    assert (ws["A1"].data_type, ws["A1"].value, ws["B1"].value, ws["C1"].value) == (
        "s",
        text,
        3,
        None,
    )


def test_safe_text_drops_control_characters_and_cuts_to_excel_limit() -> None:
    # Excel's cell limit is 32,767 characters (Microsoft, "Excel specifications and limits").
    assert EXCEL_MAX_CHARS == 32767
    assert safe_text("cooks\x01 fast") == "cooks fast"
    assert len(safe_text("x" * 40000)) == 32767


def test_write_table_header_filter_and_freeze(tmp_path: Path) -> None:
    wb = Workbook()
    frame = pd.DataFrame({"Respondent": ["W1", "W2"], "Share": [0.25, float("nan")]})
    write_table(wb.active, frame, notes=["A note."], freeze_columns=1)
    ws = _reload(wb, tmp_path)
    assert [c.value for c in ws[3]] == ["Respondent", "Share"]
    assert ws["A3"].font.b
    assert ws.auto_filter.ref == "A3:B5" and ws.freeze_panes == "B4"
    assert ws["B4"].number_format == "0.0%" and ws["B5"].value is None
