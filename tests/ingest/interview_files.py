"""Interview files built by hand for the reader tests: workbooks, documents, one reader call.

Respondents, places and varieties are invented (Kibali, Lowa, Tamu Njano, Minde).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import docx
import openpyxl
from odf.opendocument import OpenDocumentSpreadsheet
from odf.table import Table, TableCell, TableRow
from odf.text import P

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


def write_ods(path: Path, sheets: dict[str, list[list[Any]]]) -> Path:
    """Write an OpenDocument spreadsheet with odfpy: one table per entry, rows as given.

    Numbers become ``float`` cells and text ``string`` cells (OpenDocument 1.2, part 1,
    section 19.385 office:value-type, from memory); ``None`` is an empty cell.
    """
    document = OpenDocumentSpreadsheet()
    for name, rows in sheets.items():
        table = Table(name=name)
        for values in rows:
            row = TableRow()
            for value in values:
                if value is None:
                    cell = TableCell()
                elif isinstance(value, (int, float)):
                    cell = TableCell(valuetype="float", value=value)
                    cell.addElement(P(text=str(value)))
                else:
                    cell = TableCell(valuetype="string")
                    cell.addElement(P(text=str(value)))
                row.addElement(cell)
            table.addElement(row)
        document.spreadsheet.addElement(table)
    document.save(str(path))
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
