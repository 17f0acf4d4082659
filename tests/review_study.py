"""The invented job-test study with fake model predictions, and a reviewer who edits cells.

No model is trained: a model version is recorded and every sentence gets predictions
where a known phrase of the study occurs (each liked, confidence 0.9, or 0.4 for
"taste"), so what the review workbook shows is known in advance. The reviewer edits
the workbook with openpyxl, cell by cell, as a person does in a spreadsheet program.
All people and trait IDs are invented.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import openpyxl

from extractor.ingest.intake import import_concepts
from extractor.ingest.review import REVIEW_SHEET, Col
from extractor.jobs.add import add_interviews
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from tests.jobs.study import PHRASES, make_study

VERSION = "v001-fake"


def review_study(root: Path) -> Path:
    """Return a workspace with the study's answers, concepts and fake predictions."""
    make_study(root)
    with Workspace.open(root) as ws:
        add_interviews(ws, [root / "interviews" / "survey.csv"])
        import_concepts(ws, root / "concepts.csv")
        store.add_model(ws.conn, VERSION, str(root / "models" / VERSION), {})
        rows = []
        for sentence in store.sentences(ws.conn):
            mentions: list[dict[str, Any]] = []
            for phrase, concept in PHRASES.items():
                for found in re.finditer(re.escape(phrase), sentence.text):
                    mentions.append(
                        {
                            "start": found.start(),
                            "end": found.end(),
                            "concept": concept,
                            "stance": "liked",
                            "confidence": 0.4 if phrase == "taste" else 0.9,
                        }
                    )
            mentions.sort(key=lambda m: m["start"])
            rows.append({"sentence_id": sentence.id, "path_prob": 0.5, "mentions": mentions})
        store.store_predictions(ws.conn, VERSION, rows)
    return root


def header(ws: Any) -> tuple[int, dict[str, int]]:
    """Return the review sheet's header row and column numbers by name."""
    for row in ws.iter_rows(min_row=1, max_row=30):
        names = {c.value: c.column for c in row if c.value}
        if Col.KEY in names:
            return row[0].row, names
    raise AssertionError("no header row")


def edit(
    path: Path, changes: Mapping[tuple[str, str], str | None], out: Path | None = None
) -> None:
    """Set cells of the review sheet: (words found or row key, column) -> value.

    A row is picked by its row key, or by the words found on it when they are unique.
    """
    wb = openpyxl.load_workbook(path)
    ws = wb[REVIEW_SHEET]
    top, cols = header(ws)
    rows = list(ws.iter_rows(min_row=top + 1))
    for (which, column), value in changes.items():
        hits = [
            r
            for r in rows
            if r[cols[Col.KEY] - 1].value == which or r[cols[Col.WORDS] - 1].value == which
        ]
        assert len(hits) == 1, f"{which!r} picks {len(hits)} rows"
        ws.cell(row=hits[0][0].row, column=cols[column]).value = value  # None clears it
    wb.save(out or path)


def row_of(path: Path, which: str) -> int:
    """Return the sheet row of the row with this key or these words found."""
    wb = openpyxl.load_workbook(path)
    ws = wb[REVIEW_SHEET]
    top, cols = header(ws)
    for r in ws.iter_rows(min_row=top + 1):
        if which in (r[cols[Col.KEY] - 1].value, r[cols[Col.WORDS] - 1].value):
            return int(r[0].row)
    raise AssertionError(f"no row {which!r}")
