"""Spreadsheet readers (.xlsx, .xls, .ods, .csv, .tsv): long and wide layouts to answer rows.

A *long* table has a row per answer (respondent, question, answer); a *wide* table has
a row per respondent and a column per question, whose header is the question. Which
column plays which role is :mod:`extractor.ingest.columns`' job; decoding the bytes is
:mod:`extractor.ingest.decode`'s, and reading workbook sheets :mod:`extractor.ingest.sheets`'.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Collection, Mapping
from pathlib import Path
from typing import Any, NamedTuple

from extractor.errors import InputError
from extractor.ingest.columns import (
    Columns,
    Grid,
    LayoutError,
    answer_like_metadata,
    is_blank,
    is_yes,
    language_of_cell,
    resolve_columns,
    snake_key,
    unique_headers,
)
from extractor.ingest.decode import decode_text, sniff_delimiter
from extractor.ingest.sheets import Sheet, drop_empty, read_sheets


def _cell(cells: list[str | None], index: int | None) -> str | None:
    """Return a cell by index, ``None`` when the row is short or no column has the role."""
    if index is None or index >= len(cells):
        return None
    return cells[index]


def _overflow_warnings(body: Grid, width: int, where: str) -> list[str]:
    """Warn once about rows with filled cells beyond the header row's width."""
    overflow = [n for n, cells in body if any(not is_blank(c) for c in cells[width:])]
    if not overflow:
        return []
    which = (f"row {overflow[0]} has" if len(overflow) == 1
             else f"rows {', '.join(map(str, overflow[:5]))} have")  # fmt: skip
    return [
        f"{where}: {which} more cells than the header row; the extra cells were ignored "
        "(in a CSV, quote text that contains the delimiter)."
    ]


class _Table(NamedTuple):
    """One table's headers and column roles, and where it is (for messages and rows)."""

    headers: list[str]
    cols: Columns
    where: str
    sheet: str | None

    @property
    def layout(self) -> str:
        return "long" if "answer" in self.cols.roles else "wide"


def _row_answers(table: _Table, number: int, cells: list[str | None]) -> list[dict[str, Any]]:
    """Turn one body row into its answer rows (none when it holds no answer)."""
    headers, roles = table.headers, table.cols.roles
    wide = table.layout == "wide"
    answer_columns = table.cols.questions if wide else [roles["answer"]]
    answers = [(i, _cell(cells, i)) for i in answer_columns]
    answers = [(i, a) for i, a in answers if a is not None and not is_blank(a)]
    if not answers:
        return []
    at = f"{table.where}, row {number}"
    respondent = _cell(cells, roles["respondent"])
    if is_blank(respondent):
        raise InputError(
            f"{at}: there is an answer but no respondent ID in column "
            f"{headers[roles['respondent']]!r}; fill in the ID or delete the row."
        )
    lang_col = roles.get("language")
    lang, origin = language_of_cell(
        _cell(cells, lang_col), at, headers[lang_col] if lang_col is not None else ""
    )
    variety = _cell(cells, roles.get("variety"))
    metadata = {
        snake_key(headers[i]) or f"column_{i + 1}": str(v).strip()
        for i in table.cols.metadata
        for v in [_cell(cells, i)]
        if not is_blank(v)
    }
    question_cell = _cell(cells, roles.get("question"))
    asked = None if is_blank(question_cell) else str(question_cell).strip()
    return [
        {
            "respondent": str(respondent).strip(),
            "question": headers[i] if wide else asked,
            "answer": answer,
            "lang": lang,
            "lang_origin": origin,
            "variety": None if is_blank(variety) else str(variety).strip(),
            "metadata": dict(metadata),
            "sheet": table.sheet,
            "row": number,
            "is_group": is_yes(_cell(cells, roles.get("group"))),
        }
        for i, answer in answers
    ]


def _repeated_respondents(rows: list[dict[str, Any]], where: str) -> list[str]:
    """Warn once when a wide table gives one respondent ID on more than one row.

    A wide table has a row per respondent, so a repeated ID is stored as one respondent
    with the answers of all its rows: right for a respondent continued on a second row,
    wrong for a row entered twice or an ID typed twice, which only the user can tell.
    (Rows whose metadata differ are named besides, by ``metadata_conflicts``.)
    """
    numbers: dict[str, list[int]] = {}
    for row in rows:
        found = numbers.setdefault(row["respondent"], [])
        if row["row"] not in found:
            found.append(row["row"])
    repeated = [(rid, found) for rid, found in numbers.items() if len(found) > 1]
    if not repeated:
        return []
    shown = "; ".join(
        f"{rid!r} on rows {', '.join(map(str, found[:-1]))} and {found[-1]}"
        for rid, found in repeated[:3]
    )
    more = f" (and {len(repeated) - 3} more IDs)" if len(repeated) > 3 else ""
    return [
        f"{where}: a respondent ID is repeated ({shown}{more}), so those rows were stored as "
        "one respondent with the answers of every row; if a row was entered twice or two "
        "people share an ID, correct the file and add it to a new workspace (this one keeps "
        "what it stored)."
    ]


def table_rows(
    grid: Grid,
    mapping: Mapping[str, Any] | None,
    where: str,
    sheet: str | None,
    coded: Collection[str] = (),
) -> tuple[list[dict[str, Any]], str, list[str]]:
    """Turn one table (header row first) into answer rows; return rows, layout and warnings.

    ``coded`` are the question codebook's keys: a wide table's columns so headed are
    questions (see :func:`~extractor.ingest.columns.resolve_columns`).

    Raises:
        InputError: For unusable columns, a bad language cell or an answer without a
            respondent ID (naming the row).
    """
    (_, header_cells), body = grid[0], grid[1:]
    headers = unique_headers(header_cells)
    cols = resolve_columns(headers, body, mapping, where, coded)
    table = _Table(headers, cols, where, sheet)
    warnings = _overflow_warnings(body, len(headers), where)
    rows = [row for number, cells in body for row in _row_answers(table, number, cells)]
    if table.layout == "wide":
        if not (mapping or {}).get("questions"):  # columns named by the user are not guessed
            warnings += answer_like_metadata(headers, body, cols, where)
        warnings += _repeated_respondents(rows, where)
    return rows, table.layout, warnings


def read_delimited(
    path: Path, data: bytes, mapping: Mapping[str, Any] | None, coded: Collection[str] = ()
) -> tuple[list[dict[str, Any]], str, str, list[str]]:
    """Read a .csv or .tsv file; return ``(rows, layout, encoding, warnings)``.

    ``coded`` are the question codebook's keys (see :func:`table_rows`).
    """
    text, encoding, warnings = decode_text(data, path)
    delimiter = "\t" if path.suffix.lower() == ".tsv" else sniff_delimiter(text)
    grid = drop_empty(_records(path, text, delimiter))
    if not grid:
        raise InputError(f"File '{path.name}' has no rows; export the interviews into it again.")
    rows, layout, table_warnings = table_rows(grid, mapping, f"File '{path.name}'", None, coded)
    warnings += table_warnings
    if not rows:
        warnings.append(f"File '{path.name}' has a header but no answers.")
    return rows, layout, encoding, warnings


def _records(path: Path, text: str, delimiter: str) -> list[tuple[int, list[str | None]]]:
    """Parse delimited text into numbered records (header = 1), refusing broken quoting.

    Raises:
        InputError: A cell is longer than the csv module's field limit, or a quote left
            open swallows the rows after it (see :func:`_swallowed`); the row is named.
    """
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    records: list[tuple[int, list[str]]] = []
    try:
        for number, cells in enumerate(reader, start=1):
            records.append((number, cells))
    except csv.Error as err:
        row = len(records) + 1
        if "field limit" in str(err):
            raise InputError(
                f"File '{path.name}', row {row}: a cell is longer than "
                f"{csv.field_size_limit():,} characters, far more than a spreadsheet cell "
                "holds; a quote is probably not closed (close it), or, if it is one long "
                "answer, put it in a .txt transcript instead."
            ) from err
        raise InputError(
            f"File '{path.name}', row {row}: the table cannot be parsed ({err}); "
            "check the quotes on that row or save the file again from a spreadsheet."
        ) from err
    for number, cells in records:
        swallowed = _swallowed(cells, delimiter)
        if swallowed is not None:
            raise InputError(
                f"File '{path.name}', row {number}: a quote opened in this row is not closed "
                f"where the row ends, so the rows after it (from {swallowed[:30]!r}) would be "
                'read as part of one answer; close the quote (write a quote inside text as "") '
                "and try again."
            )
    return [(number, list[str | None](cells)) for number, cells in records]


_SHAPE = re.compile(r"([a-z]+)|([0-9]+)|(.)", re.IGNORECASE)


def _shape(cell: str) -> str:
    """The shape of an ID: letter runs as ``a``, digit runs as ``9`` (``KA-01`` -> ``a-9``)."""
    return "".join("a" if m[1] else "9" if m[2] else m[3] for m in _SHAPE.finditer(cell.strip()))


def _swallowed(cells: list[str], delimiter: str) -> str | None:
    """Return the first swallowed row inside a record's cells, or None.

    A quote left open makes the csv module read on, past the end of the row, until the
    next quote: the rows in between end up inside one cell, line by line. A line inside
    a cell that splits into cells and begins with a value of the record's own first
    cell's shape (``R2`` after ``R1``, ``KA-02`` after ``KA-01``) is such a row; a line
    of a real multi-line answer ("Also, the taste...") does not begin with an ID.
    """
    first = cells[0].strip() if cells else ""
    if not first or "\n" in first:
        return None
    shape = _shape(first)
    for cell in cells[1:]:
        for line in cell.split("\n")[1:]:
            parts = line.split(delimiter)
            if len(parts) > 1 and parts[0].strip() and _shape(parts[0]) == shape:
                return line
    return None


class _Sheets(NamedTuple):
    """What the sheets of one workbook gave: rows, layouts, warnings, skipped sheets."""

    rows: list[dict[str, Any]]
    layouts: set[str]
    warnings: list[str]
    skipped: list[LayoutError]


def _read_sheets(
    sheets: list[Sheet],
    path: Path,
    sheet: str | None,
    mapping: Mapping[str, Any] | None,
    coded: Collection[str],
) -> _Sheets:
    """Read the named sheet, or every visible one (skipping those without usable columns)."""
    read = _Sheets([], set(), [], [])
    for found in sheets:
        name = found.name
        if sheet is None and not found.visible:
            read.warnings.append(f"File '{path.name}': hidden sheet {name!r} was not read.")
            continue
        if not found.grid:
            continue
        where = f"File '{path.name}', sheet {name!r}"
        if found.uncomputed:
            cells = ", ".join(found.uncomputed[:6]) + (" ..." if len(found.uncomputed) > 6 else "")
            raise InputError(
                f"{where}: the formulas in {cells} have no saved value (the program that wrote "
                "the file did not compute them), so their text cannot be read; open the file in "
                "a spreadsheet programme, save it, and try again."
            )
        try:
            sheet_rows, layout, sheet_warnings = table_rows(found.grid, mapping, where, name, coded)
        except LayoutError as err:
            if sheet is not None:
                raise
            read.skipped.append(err)
            continue
        read.rows.extend(sheet_rows)
        read.warnings.extend(sheet_warnings)
        read.layouts.add(layout)
    return read


def read_workbook(
    path: Path,
    data: bytes,
    sheet: str | None,
    mapping: Mapping[str, Any] | None,
    coded: Collection[str] = (),
) -> tuple[list[dict[str, Any]], str, list[str]]:
    """Read every visible sheet of a workbook (or the one named); return rows, layout, warnings.

    The workbook is an .xlsx, .xls or .ods file (:mod:`extractor.ingest.sheets`). When
    reading all sheets, a sheet whose columns cannot be recognised (a codebook, a notes
    sheet) is skipped with a warning, unless no sheet can be read at all. ``coded`` are
    the question codebook's keys (see :func:`table_rows`).
    """
    read = _read_sheets(read_sheets(path, data, sheet), path, sheet, mapping, coded)
    if not read.layouts:
        if read.skipped:
            raise read.skipped[0]
        raise InputError(
            f"File '{path.name}' has no filled cells; check that it is the right file."
        )
    warnings = read.warnings + [f"Sheet skipped: {err}" for err in read.skipped]
    layout = read.layouts.pop() if len(read.layouts) == 1 else "mixed"
    return read.rows, layout, warnings
