"""Workbook sheets as numbered rows of cell text: .xlsx, .xls and .ods.

* ``.xlsx`` (Office Open XML) with openpyxl, read-only;
* ``.xls`` (the Excel 97-2003 binary format, BIFF8 in an OLE compound file) with xlrd,
  called directly because pandas deprecates its xlrd engine;
* ``.ods`` (OpenDocument spreadsheet) with pandas' ``odf`` engine (odfpy).

Every reader gives the same :class:`Sheet` values, rows numbered as the spreadsheet
numbers them (header = 1, blank rows counted), and turns any failure of a broken or
renamed file into one :class:`~extractor.errors.InputError` naming the file.
"""

from __future__ import annotations

import io
import math
import struct
import xml.sax
import zipfile
from collections.abc import Callable, Iterable, Sequence
from datetime import date, datetime, time
from pathlib import Path
from typing import Any, NamedTuple

import openpyxl
import pandas as pd
import xlrd
from openpyxl.utils.exceptions import InvalidFileException
from xlrd.compdoc import CompDocError

from extractor.errors import InputError
from extractor.ingest.columns import Grid
from extractor.ingest.decode import OLE_MAGIC, ZIP_MAGIC, check_office_archive

WORKBOOK_SUFFIXES = (".xlsx", ".xls", ".ods")
"""The workbook kinds :func:`read_sheets` reads."""

_SAVE_AS = "open it in a spreadsheet programme and save it as .xlsx again"


class Sheet(NamedTuple):
    """One sheet of a workbook: its name, whether it is shown, and its non-empty rows.

    ``uncomputed`` names the cells (``B3``) holding a formula without a saved value:
    their text cannot be read (files written by scripts, which do not compute formulas).
    """

    name: str
    visible: bool
    grid: Grid
    uncomputed: tuple[str, ...] = ()


def cell_text(value: object) -> str | None:
    """Turn a spreadsheet cell value into text, ``None`` when empty; ``7.0`` becomes ``"7"``."""
    if value is None or value is pd.NaT:
        return None
    if isinstance(value, float):
        if math.isnan(value):
            return None
        return str(int(value)) if value.is_integer() else repr(value)
    if isinstance(value, datetime) and value.time() == time(0):
        return value.date().isoformat()
    if isinstance(value, (date, time)):
        return value.isoformat()
    return str(value)


def drop_empty(records: Iterable[tuple[int, list[str | None]]]) -> Grid:
    """Keep the rows that have at least one non-blank cell."""
    return [(n, cells) for n, cells in records if any(c is not None and c.strip() for c in cells)]


def _numbered(rows: Iterable[Sequence[object]]) -> Grid:
    """Number rows from 1 as spreadsheets do, as cell text, dropping the empty ones."""
    return drop_empty((n, [cell_text(v) for v in row]) for n, row in enumerate(rows, start=1))


def _check_sheet(path: Path, names: list[str], only: str | None) -> list[str]:
    """Return the sheet names to read: the one asked for (which must exist), else all."""
    if only is None:
        return names
    if only not in names:
        raise InputError(
            f"File '{path.name}' has no sheet {only!r}; the sheets are "
            f"{', '.join(repr(s) for s in names)}."
        )
    return [only]


def _xlsx_sheets(path: Path, data: bytes, only: str | None) -> list[Sheet]:
    check_office_archive(path, data, "spreadsheet programme")
    workbook = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    formulas = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=False)
    try:
        sheets = []
        for name in _check_sheet(path, workbook.sheetnames, only):
            worksheet = workbook[name]
            visible = worksheet.sheet_state == "visible"
            if not (visible or only):
                sheets.append(Sheet(name, visible, []))
                continue
            rows = list(worksheet.iter_rows(min_row=1, min_col=1, values_only=True))
            missing = _uncomputed(formulas[name], rows)
            sheets.append(Sheet(name, visible, _numbered(rows), missing))
        return sheets
    finally:
        workbook.close()
        formulas.close()


def _uncomputed(worksheet: Any, values: list[tuple[object, ...]]) -> tuple[str, ...]:
    """Return the cells holding a formula whose saved value is missing.

    openpyxl reads the value a spreadsheet programme saved with a formula; a program
    that writes formulas without computing them (openpyxl itself, many scripts) saves
    none, so such a cell reads as empty although it is not.
    """
    missing = []
    for cells in worksheet.iter_rows(min_row=1, min_col=1):
        for cell in cells:
            if getattr(cell, "data_type", None) != "f":
                continue
            row, column = cell.row - 1, cell.column - 1
            value = values[row][column] if row < len(values) and column < len(values[row]) else None
            if value is None:
                missing.append(cell.coordinate)
    return tuple(missing)


def _xls_value(cell: Any, datemode: int) -> object:
    """Return an xlrd cell's value; dates (numbers in a date format) as datetimes."""
    if cell.ctype == xlrd.XL_CELL_DATE:
        return xlrd.xldate.xldate_as_datetime(cell.value, datemode)
    if cell.ctype == xlrd.XL_CELL_BOOLEAN:
        return bool(cell.value)
    if cell.ctype in (xlrd.XL_CELL_EMPTY, xlrd.XL_CELL_BLANK, xlrd.XL_CELL_ERROR):
        return None
    return cell.value


def _xls_sheets(path: Path, data: bytes, only: str | None) -> list[Sheet]:
    if data.startswith(ZIP_MAGIC):
        raise InputError(
            f"File '{path.name}' is a newer .xlsx (or .ods) workbook named .xls; "
            "rename it to .xlsx (or .ods) and add it again."
        )
    if not data.startswith(OLE_MAGIC):
        raise xlrd.XLRDError("not an OLE compound file")
    # xlrd writes its warnings to the stdout of import time; library code never prints.
    book = xlrd.open_workbook(file_contents=data, on_demand=True, logfile=io.StringIO())
    try:
        sheets = []
        for name in _check_sheet(path, book.sheet_names(), only):
            sheet = book.sheet_by_name(name)
            visible = sheet.visibility == 0  # 0 visible, 1 hidden, 2 very hidden (BIFF8)
            rows = (
                [_xls_value(c, book.datemode) for c in sheet.row(r)] for r in range(sheet.nrows)
            )
            sheets.append(Sheet(name, visible, _numbered(rows) if visible or only else []))
        return sheets
    finally:
        book.release_resources()


def _ods_sheets(path: Path, data: bytes, only: str | None) -> list[Sheet]:
    check_office_archive(path, data, "spreadsheet programme")
    frames = pd.read_excel(io.BytesIO(data), engine="odf", sheet_name=None, header=None)
    names = [str(name) for name in frames]
    return [
        Sheet(name, True, _numbered(frames[name].astype(object).values.tolist()))
        for name in _check_sheet(path, names, only)
    ]


_READERS: dict[str, Callable[[Path, bytes, str | None], list[Sheet]]] = {
    ".xlsx": _xlsx_sheets,
    ".xls": _xls_sheets,
    ".ods": _ods_sheets,
}

_BROKEN = (
    zipfile.BadZipFile,
    InvalidFileException,
    xlrd.XLRDError,
    CompDocError,
    xml.sax.SAXException,
    struct.error,
    KeyError,
    IndexError,
    ValueError,
    OSError,
)
"""What the three readers raise on a broken or misnamed file."""


def read_sheets(path: Path, data: bytes, only: str | None = None) -> list[Sheet]:
    """Return a workbook's sheets in order (only the named one when given).

    Hidden sheets come with ``visible=False`` and no rows, unless asked for by name.

    Raises:
        InputError: The file is broken, misnamed or password-protected, or has no sheet
            of that name; the message names the file and what to do.
    """
    suffix = path.suffix.lower()
    try:
        return _READERS[suffix](path, data, only)
    except InputError:
        raise
    except xlrd.XLRDError as err:
        if "encrypted" in str(err).lower():
            raise InputError(
                f"File '{path.name}' is password-protected; remove the password in the "
                "spreadsheet programme and save it again."
            ) from err
        raise _broken(path, suffix, err) from err
    except _BROKEN as err:
        raise _broken(path, suffix, err) from err


def _broken(path: Path, suffix: str, err: Exception) -> InputError:
    return InputError(
        f"File '{path.name}' is not a valid {suffix} workbook ({type(err).__name__}); {_SAVE_AS}."
    )
