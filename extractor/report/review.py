"""The review workbook: rows a person checks in a spreadsheet, with drop-down lists.

One row per mention (found by a model or labeled by a person) and one per sentence
with none, grouped by respondent and answer. The reviewer fills in the verdict, the
right concept and stance, and any missed trait, choosing from drop-down lists (openpyxl
data validation, which Excel and LibreOffice both show). Hidden sheets hold the lists
and the keys that match each row back to its stored sentence; the layout is defined in
:mod:`extractor.ingest.review`, which reads the file back. Every cell of user text is
written as text, never as a formula (:mod:`extractor.report.cells`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import NamedTuple

import pandas as pd
from openpyxl import Workbook
from openpyxl.styles import PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation
from openpyxl.worksheet.worksheet import Worksheet

from extractor.errors import InputError
from extractor.ingest.review import (
    COLUMNS,
    EDITABLE,
    FORMAT,
    KEY_COLUMNS,
    KEYS_SHEET,
    LISTS_SHEET,
    REVIEW_SHEET,
    VERDICTS,
    Col,
    RowKey,
    concept_choice,
)
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.cells import HEADER_FONT, append_row, write_table
from extractor.types import STANCES
from extractor.workspace.files import atomic_path

EDIT_FILL = PatternFill("solid", fgColor="FFF2CC")
SPARE_ROWS = 200
"""Rows below the last one that keep the drop-downs, for rows a reviewer copies there."""
HOW_TO = (
    "Verdict: correct (keep as found), wrong (not a trait mention: it is dropped), fix (pick "
    "the right concept and/or stance in the next two columns). On a row without a mention, "
    "correct means: no trait in this sentence.",
    "A trait the tool missed: type its words exactly as in the sentence and pick its concept "
    "and stance; leave the words empty for a trait the sentence implies without naming it. "
    "To add more than one, copy the row (with its row key) below.",
    "A sentence counts as reviewed when any of its rows is filled in; then give every mention "
    "of it a verdict. Rows left blank are ignored. Do not edit the row key.",
)


class ReviewLine(NamedTuple):
    """One row of the review sheet: its key and what the reviewer sees."""

    key: RowKey
    respondent: str
    question: str | None
    sentence: str
    words: str
    concept_label: str | None
    confidence: float | None
    found_by: str = ""
    """Who found the mention, when not the key's origin (e.g. the annotators who marked it)."""


def _frame(lines: Sequence[ReviewLine]) -> pd.DataFrame:
    by = {"model": "model", "person": "person", "none": ""}
    rows = [
        {
            Col.RESPONDENT: line.respondent,
            Col.QUESTION: line.question,
            Col.SENTENCE: line.sentence,
            Col.WORDS: line.words,
            Col.FOUND_CONCEPT: line.concept_label,
            Col.FOUND_STANCE: line.key.stance,
            Col.CONFIDENCE: None if line.confidence is None else round(line.confidence, 3),
            Col.FOUND_BY: line.found_by or by.get(line.key.origin, line.key.origin),
            Col.KEY: line.key.key,
        }
        for line in lines
    ]
    return pd.DataFrame(rows, columns=list(COLUMNS))


def _lists_sheet(wb: Workbook, choices: Sequence[str]) -> dict[str, str]:
    """Write the drop-down lists on a hidden sheet; return column name -> list formula."""
    ws = wb.create_sheet(LISTS_SHEET)
    lists = {"Concepts": list(choices), "Stances": list(STANCES), "Verdicts": list(VERDICTS)}
    width = max(len(v) for v in lists.values())
    append_row(ws, list(lists))
    for k in range(width):
        append_row(ws, [values[k] if k < len(values) else None for values in lists.values()])
    ws.sheet_state = "hidden"
    ref = {
        name: f"{LISTS_SHEET}!${get_column_letter(j)}$2:${get_column_letter(j)}${len(values) + 1}"
        for j, (name, values) in enumerate(lists.items(), start=1)
    }
    return {
        Col.VERDICT: ref["Verdicts"],
        Col.CONCEPT: ref["Concepts"],
        Col.STANCE: ref["Stances"],
        Col.MISSED_CONCEPT: ref["Concepts"],
        Col.MISSED_STANCE: ref["Stances"],
    }


def _validate(ws: Worksheet, header: int, n_rows: int, lists: Mapping[str, str]) -> None:
    """Give the editable columns their drop-downs and a colour that says "fill me in"."""
    last = header + n_rows + SPARE_ROWS
    for j, name in enumerate(COLUMNS, start=1):
        letter = get_column_letter(j)
        if name in EDITABLE:
            ws.cell(row=header, column=j).fill = EDIT_FILL
        if name not in lists:
            continue
        check = DataValidation(
            type="list",
            formula1=f"={lists[name]}",
            allow_blank=True,
            showErrorMessage=True,
            errorTitle=name,
            error=f"Pick the {name.lower()} from the list.",
        )
        check.add(f"{letter}{header + 1}:{letter}{last}")
        ws.add_data_validation(check)


def _keys_sheet(wb: Workbook, lines: Sequence[ReviewLine], meta: Mapping[str, str]) -> None:
    ws = wb.create_sheet(KEYS_SHEET)
    append_row(ws, ["Format", FORMAT])
    for item, value in meta.items():
        append_row(ws, [item, value])
    ws.append([])
    append_row(ws, KEY_COLUMNS)
    for line in lines:
        append_row(ws, list(line.key))
    ws.sheet_state = "hidden"


def write_review_workbook(
    path: Path,
    lines: Sequence[ReviewLine],
    concepts: Sequence[tuple[str, str]],
    meta: Mapping[str, str],
) -> int:
    """Write the review workbook and return how many rows it holds.

    Args:
        path: The ``.xlsx`` to write; its folder must exist.
        lines: The rows, in the order shown (by respondent, answer and sentence).
        concepts: ``(concept ID, label)`` of the concept list, for the drop-down.
        meta: Facts of the export for the hidden keys sheet (workspace, model version,
            selection, time).

    Raises:
        InputError: The path is not an ``.xlsx`` file in an existing folder, or cannot
            be written (the previous file is then kept).
    """
    if path.suffix.lower() != ".xlsx" or not path.parent.is_dir():
        raise InputError(
            f"The review workbook must be an .xlsx file in an existing folder; got {str(path)!r}."
        )
    wb = Workbook()
    ws = wb.active
    ws.title = REVIEW_SHEET
    write_table(ws, _frame(lines), notes=[REVIEW_CAUTION, *HOW_TO], freeze_columns=1)
    header = len(HOW_TO) + 3  # the caution and how-to notes, a blank row, then the header
    ws.cell(row=1, column=1).font = HEADER_FONT
    lists = _lists_sheet(wb, [concept_choice(cid, label) for cid, label in concepts])
    _validate(ws, header, len(lines), lists)
    _keys_sheet(wb, lines, meta)
    with atomic_path(path) as temp:  # a kill or a full disk keeps the previous file
        wb.save(temp)
    return len(lines)
