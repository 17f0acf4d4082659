"""Safe cells and sheet craft for openpyxl: user text stays text, never a formula.

Interview answers can start with "=", "+", "-" or "@" or read like an error code; a
spreadsheet must show them as typed, not evaluate them (OWASP, "CSV Injection").
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

import pandas as pd
from openpyxl.cell.cell import ERROR_CODES, ILLEGAL_CHARACTERS_RE, Cell
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet

from extractor.ingest.decode import FORMULA_TRIGGERS
from extractor.report.inputs import plain_value

RISKY_FIRST = FORMULA_TRIGGERS
EXCEL_MAX_CHARS = 32767

HEADER_FONT = Font(bold=True)
HEADER_FILL = PatternFill("solid", fgColor="DDE4EE")
NOTE_FONT = Font(italic=True)
WRAP = Alignment(wrap_text=True, vertical="top")
WRAPPED_COLUMNS = {
    "Sentence",
    "Examples",
    "Question",
    "Liked",
    "Disliked",
    "Wanted",
    "Value",
    "Meaning",
    "Quote",
    "Caution",
    "Neutral",
}
PERCENT_COLUMNS = {"Share", "95% CI low", "95% CI high"}
P_VALUE_COLUMNS = {"p", "p (BH-adjusted)"}
P_VALUE_FORMAT = '[<0.001]"< 0.001";0.000'
"""p-values as people read them: three decimals, and "< 0.001" below that (APA style)."""
PROBABILITY_COLUMNS = {
    *P_VALUE_COLUMNS,
    "Link probability",
    "Stance probability",
    "Tagger confidence",
    "Statistic",
}


def safe_text(value: str) -> str:
    """Return text Excel can hold: no control characters, at most 32,767 characters."""
    cleaned = ILLEGAL_CHARACTERS_RE.sub("", value)
    return cleaned[:EXCEL_MAX_CHARS]


def _force_text(cell: Cell) -> None:
    """Make the cell an inline string whatever its text starts with.

    openpyxl infers a formula from a leading "=" and an error from "#N/A"; setting
    ``data_type`` after the value overrides that. The quote prefix keeps Excel from
    re-reading the text as a formula when someone edits the cell.
    """
    cell.data_type = "s"
    if isinstance(cell.value, str) and cell.value.startswith(RISKY_FIRST):
        cell.quotePrefix = True


def _needs_forcing(value: Any) -> bool:
    """Return whether openpyxl would store this string as something other than text."""
    return isinstance(value, str) and (value.startswith(RISKY_FIRST) or value in ERROR_CODES)


def append_row(ws: Worksheet, values: Iterable[Any]) -> None:
    """Append one row of values; strings always as text, never as a formula or error code.

    ``ws.append`` is several times faster than cell-by-cell writing; only the
    strings openpyxl would misread are fixed afterwards.
    """
    plain = [plain_value(v) for v in values]
    plain = [safe_text(v) if isinstance(v, str) else v for v in plain]
    ws.append(plain)
    row = ws._current_row
    for j, v in enumerate(plain, start=1):
        if _needs_forcing(v):
            cell = ws.cell(row=row, column=j)
            cell.value = v
            _force_text(cell)


def _write_header(ws: Worksheet, columns: Sequence[str]) -> int:
    """Append the bold, shaded header row and return its row number."""
    append_row(ws, columns)
    header: int = ws._current_row
    for j in range(1, len(columns) + 1):
        ws.cell(row=header, column=j).font = HEADER_FONT
        ws.cell(row=header, column=j).fill = HEADER_FILL
    return header


def _format_column(ws: Worksheet, j: int, name: str, header: int, n_rows: int) -> None:
    """Wrap text columns and give shares and probabilities their number format."""
    wrapped = name in WRAPPED_COLUMNS
    if not (wrapped or name in PERCENT_COLUMNS or name in PROBABILITY_COLUMNS):
        return
    fmt = "0.0%" if name in PERCENT_COLUMNS else "0.00"
    if name in P_VALUE_COLUMNS:
        fmt = P_VALUE_FORMAT
    for (cell,) in ws.iter_rows(min_row=header + 1, max_row=header + n_rows, min_col=j, max_col=j):
        if wrapped:
            cell.alignment = WRAP
        elif isinstance(cell.value, float):
            cell.number_format = fmt


def write_table(
    ws: Worksheet, frame: pd.DataFrame, *, notes: Sequence[str] = (), freeze_columns: int = 1
) -> None:
    """Write notes, a bold header and the rows of ``frame``, with filter, freeze and widths.

    The sheet must be empty: rows are appended.
    """
    for note in notes:
        append_row(ws, [note])
        ws.cell(row=ws._current_row, column=1).font = NOTE_FONT
    if notes:
        ws.append([])
    columns = [str(c) for c in frame.columns]
    header = _write_header(ws, columns)
    values = frame.to_numpy(dtype=object)
    for record in values:
        append_row(ws, record)
    last_row = header + max(len(frame), 1)
    if columns:
        ws.auto_filter.ref = f"A{header}:{get_column_letter(len(columns))}{last_row}"
        ws.freeze_panes = ws.cell(row=header + 1, column=min(freeze_columns, len(columns)) + 1)
    for j, name in enumerate(columns, start=1):
        sample = [len(str(v)) for v in values[:200, j - 1] if plain_value(v) is not None]
        width = max([len(name), *sample]) + 2
        limit = 60 if name in WRAPPED_COLUMNS else 40
        ws.column_dimensions[get_column_letter(j)].width = min(limit, max(8, width))
        _format_column(ws, j, name, header, len(frame))
