"""The review workbook's layout, and reading a reviewed workbook back as typed rows.

The workbook has a visible sheet of rows to review and two hidden sheets: the drop-down
lists, and the keys that match every row back to its stored sentence (sentence ID,
offsets, a digest of the sentence text, and what was proposed). The writer lives in
:mod:`extractor.report.review`; both sides use the names defined here.

Reading checks only what the file alone can tell (known verdicts, stances and concepts,
a key on every row); whether the words are in the sentence and whether the sentence
changed is checked against the store by the import job. Problems are collected, not
raised, so every bad row can be reported at once, each as one sentence naming the
sheet, row and column.
"""

from __future__ import annotations

import hashlib
import re
import zipfile
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any, NamedTuple

import openpyxl
from openpyxl.utils.exceptions import InvalidFileException
from openpyxl.worksheet.worksheet import Worksheet

from extractor.errors import InputError
from extractor.types import STANCES

REVIEW_SHEET = "Review"
LISTS_SHEET = "Lists"
KEYS_SHEET = "Keys"
FORMAT = "trait-extractor review 1"
"""Written in the keys sheet; a workbook without it is not a review workbook."""

VERDICTS = ("correct", "wrong", "fix")
"""correct: keep as found; wrong: not a trait mention; fix: change the concept or stance."""


class Col:
    """The review sheet's column headers."""

    RESPONDENT = "Respondent"
    QUESTION = "Question"
    SENTENCE = "Sentence"
    WORDS = "Words found"
    FOUND_CONCEPT = "Concept found"
    FOUND_STANCE = "Stance found"
    CONFIDENCE = "Confidence"
    FOUND_BY = "Found by"
    VERDICT = "Verdict"
    CONCEPT = "Right concept"
    STANCE = "Right stance"
    MISSED_WORDS = "Missed trait: words"
    MISSED_CONCEPT = "Missed trait: concept"
    MISSED_STANCE = "Missed trait: stance"
    COMMENT = "Comment"
    KEY = "Row key"


COLUMNS = (
    Col.RESPONDENT,
    Col.QUESTION,
    Col.SENTENCE,
    Col.WORDS,
    Col.FOUND_CONCEPT,
    Col.FOUND_STANCE,
    Col.CONFIDENCE,
    Col.FOUND_BY,
    Col.VERDICT,
    Col.CONCEPT,
    Col.STANCE,
    Col.MISSED_WORDS,
    Col.MISSED_CONCEPT,
    Col.MISSED_STANCE,
    Col.COMMENT,
    Col.KEY,
)
EDITABLE = (
    Col.VERDICT,
    Col.CONCEPT,
    Col.STANCE,
    Col.MISSED_WORDS,
    Col.MISSED_CONCEPT,
    Col.MISSED_STANCE,
    Col.COMMENT,
)
KEY_COLUMNS = (
    "Row key",
    "Sentence ID",
    "Start",
    "End",
    "Sentence SHA-256",
    "Origin",
    "Concept",
    "Stance",
)
"""The keys sheet's table: one row per review row key."""
META_ITEMS = (
    "Format",
    "Workspace",
    "Workspace ID",
    "Model version",
    "Selection",
    "Respondents drawn",
    "Exported",
)
"""Facts of the export in the keys sheet. ``Respondents drawn`` (how many respondents of a
random sample the workbook holds) is absent from workbooks written before it was added."""
DRAWN = "Respondents drawn"
IMPLIED = "implied"
"""The origin of a row showing a trait a person's label states without words."""
MODEL_IMPLIED = "model implied"
"""The origin of a row showing a trait the model finds stated without words."""
ORIGINS = ("model", "person", "none", IMPLIED, MODEL_IMPLIED)
"""What a row shows: a model's mention, a person's labeled mention, no mention, or a
trait a person's label (or the model) finds stated without words (start and end are
then blank)."""


def sentence_digest(text: str) -> str:
    """Return the digest of a sentence's text that tells whether it changed since export."""
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def concept_choice(concept_id: str, label: str) -> str:
    """Return how a concept reads in the drop-down: ``label (ID)``."""
    return f"{label} ({concept_id})" if label and label != concept_id else concept_id


class RowKey(NamedTuple):
    """What a review row stands for: a mention (or no mention) of a stored sentence."""

    key: str
    sentence_id: int
    start: int | None
    end: int | None
    digest: str
    origin: str
    concept: str | None
    stance: str | None


class Added(NamedTuple):
    """A trait the reviewer added: the words typed (empty: implied), concept, stance."""

    words: str
    concept: str
    stance: str


class ReviewEntry(NamedTuple):
    """One reviewed row: its place in the file, its key and what the reviewer decided.

    ``concept`` and ``stance`` are the cells of the right concept and stance (None when
    blank); ``added`` the missed trait the row adds, if any.
    """

    row: int
    key: str
    verdict: str | None
    concept: str | None
    stance: str | None
    added: Added | None


class Problem(NamedTuple):
    """A bad row: its key (None when it has none), one sentence saying what is wrong, its row."""

    key: str | None
    text: str
    row: int = 0


class ReviewFile(NamedTuple):
    """A review workbook read back: facts of the export, keys, reviewed rows, problems."""

    meta: dict[str, str]
    keys: dict[str, RowKey]
    entries: list[ReviewEntry]
    problems: list[Problem]
    rows: dict[str, int]
    """Row key -> the first sheet row that carries it."""


def _open(path: Path) -> Any:
    if path.suffix.lower() != ".xlsx":
        raise InputError(f"{path.name} is not an .xlsx review workbook; give the file exported.")
    if not path.is_file():
        raise InputError(f"{path} does not exist; give the review workbook's path.")
    try:
        return openpyxl.load_workbook(path)
    except (InvalidFileException, zipfile.BadZipFile, KeyError, OSError) as exc:
        raise InputError(
            f"{path.name} cannot be read as a workbook ({exc}); save it as .xlsx and try again."
        ) from exc


def _text(value: Any) -> str | None:
    """Return a cell's value as text, or None when blank; a formula stays its text."""
    if value is None:
        return None
    text = str(value).strip()
    return text or None


def _meta_and_keys(wb: Any, name: str) -> tuple[dict[str, str], dict[str, RowKey]]:
    if KEYS_SHEET not in wb.sheetnames or REVIEW_SHEET not in wb.sheetnames:
        raise InputError(
            f"{name} has no {REVIEW_SHEET!r} and hidden {KEYS_SHEET!r} sheets, so it is not a "
            "review workbook; export one with `traits review export`."
        )
    rows = list(wb[KEYS_SHEET].iter_rows(values_only=True))
    meta = {str(r[0]): str(r[1]) for r in rows if r and r[0] in META_ITEMS and r[1] is not None}
    if meta.get("Format") != FORMAT:
        raise InputError(
            f"{name}: the hidden {KEYS_SHEET!r} sheet does not name the format {FORMAT!r}; "
            "export the review workbook again with `traits review export`."
        )
    start = next(i for i, r in enumerate(rows) if r and r[0] == KEY_COLUMNS[0]) + 1
    keys = {}
    for r in rows[start:]:
        if not r or r[0] is None:
            continue
        key, sid, begin, end, digest, origin, concept, stance = (list(r) + [None] * 8)[:8]
        keys[str(key)] = RowKey(
            str(key),
            int(sid),
            None if begin is None else int(begin),
            None if end is None else int(end),
            str(digest),
            str(origin),
            _text(concept),
            _text(stance),
        )
    return meta, keys


def _header(ws: Worksheet) -> tuple[int, dict[str, int]]:
    for row in ws.iter_rows(min_row=1, max_row=30):
        names = {_text(c.value): c.column for c in row if _text(c.value)}
        if Col.KEY in names and Col.VERDICT in names:
            return row[0].row, {str(k): v for k, v in names.items()}
    raise InputError(
        f"The {REVIEW_SHEET!r} sheet has no header row with {Col.VERDICT!r} and {Col.KEY!r}; "
        "restore the header row or export the workbook again."
    )


class ConceptNames:
    """Reads a concept cell: ``label (ID)`` from the drop-down, an ID, or a label."""

    def __init__(self, labels: Mapping[str, str]) -> None:
        self.labels = labels

    def read(self, text: str) -> str | None:
        """Return the concept ID a cell names, or None when it names no known concept."""
        if text in self.labels:
            return text
        found = re.search(r"\(([^()]+)\)\s*$", text)
        if found and found.group(1).strip() in self.labels:
            return found.group(1).strip()
        folded = text.casefold()
        matches = [cid for cid, label in self.labels.items() if label.casefold() == folded]
        return matches[0] if len(matches) == 1 else None


class _RowReader:
    """Reads one review row's cells; problems name the sheet, row and column."""

    def __init__(self, source: str, row: int, cells: dict[str, str | None]) -> None:
        self.source, self.row, self.cells, self.problems = source, row, cells, list[str]()

    def problem(self, column: str, what: str) -> None:
        self.problems.append(
            f"{self.source}, sheet {REVIEW_SHEET}, row {self.row}, column {column!r}: {what}."
        )

    def choice(self, column: str, allowed: Iterable[str]) -> str | None:
        value = self.cells.get(column)
        if value is None:
            return None
        allowed = tuple(allowed)
        if value.casefold() not in allowed:
            self.problem(
                column, f"{value!r} is not one of {', '.join(allowed)}; pick from the list"
            )
            return None
        return value.casefold()

    def concept(self, column: str, names: ConceptNames) -> str | None:
        value = self.cells.get(column)
        if value is None:
            return None
        found = names.read(value)
        if found is None:
            self.problem(
                column,
                f"{value!r} is not a concept of the workspace's list; pick one from the list",
            )
        return found


def _entry(reader: _RowReader, names: ConceptNames) -> ReviewEntry | None:
    """Return the row's decision, or None when the reviewer left it untouched."""
    key = reader.cells.get(Col.KEY)
    if not any(reader.cells.get(c) for c in EDITABLE if c != Col.COMMENT):
        return None
    if key is None:
        reader.problem(Col.KEY, "the row key is empty; copy the row with its key or undo the edit")
        return None
    verdict = reader.choice(Col.VERDICT, VERDICTS)
    concept = reader.concept(Col.CONCEPT, names)
    stance = reader.choice(Col.STANCE, STANCES)
    words = reader.cells.get(Col.MISSED_WORDS) or ""
    added_concept = reader.concept(Col.MISSED_CONCEPT, names)
    added_stance = reader.choice(Col.MISSED_STANCE, STANCES)
    added = None
    if words or reader.cells.get(Col.MISSED_CONCEPT) or reader.cells.get(Col.MISSED_STANCE):
        for column, value in (
            (Col.MISSED_CONCEPT, added_concept),
            (Col.MISSED_STANCE, added_stance),
        ):
            if value is None and reader.cells.get(column) is None:
                reader.problem(
                    column, "a missed trait needs its concept and its stance; fill it in"
                )
        if added_concept and added_stance:
            added = Added(words, added_concept, added_stance)
    return ReviewEntry(reader.row, key, verdict, concept, stance, added)


def read_review(path: Path, concept_labels: Mapping[str, str]) -> ReviewFile:
    """Read a review workbook: its export facts, row keys and every reviewed row.

    Args:
        path: The ``.xlsx`` file, as exported and then edited (in any spreadsheet program).
        concept_labels: Concept ID -> display label of the workspace's concept list.

    Raises:
        InputError: The file is not a review workbook this tool wrote.
    """
    wb = _open(path)
    meta, keys = _meta_and_keys(wb, path.name)
    ws = wb[REVIEW_SHEET]
    header, columns = _header(ws)
    names = ConceptNames(concept_labels)
    entries: list[ReviewEntry] = []
    problems: list[Problem] = []
    rows: dict[str, int] = {}
    for row in ws.iter_rows(min_row=header + 1):
        cells = {name: _text(row[j - 1].value) for name, j in columns.items() if j <= len(row)}
        if cells.get(Col.KEY):
            rows.setdefault(str(cells[Col.KEY]), row[0].row)
        reader = _RowReader(path.name, row[0].row, cells)
        entry = _entry(reader, names)
        if entry is not None and entry.key not in keys:
            reader.problem(Col.KEY, f"the key {entry.key!r} is not one this file was exported with")
            entry = None
        key = cells.get(Col.KEY)
        problems.extend(
            Problem(key if key in keys else None, text, reader.row) for text in reader.problems
        )
        if entry is not None and not reader.problems:
            entries.append(entry)
    return ReviewFile(meta, keys, entries, problems, rows)
