"""Interview files built by hand for the reader tests: workbooks, documents, one reader call.

Respondents, places and varieties are invented (Kibali, Lowa, Tamu Njano, Minde).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import docx
import openpyxl

from extractor.ingest import ReadResult, read_interviews

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
