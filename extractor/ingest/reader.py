"""One entry point for interview files: check the path, dispatch on the suffix, add languages.

Every reader returns the same row dicts (see :func:`read_interviews`), so the store
never needs to know which kind of file an answer came from.
"""

from __future__ import annotations

from collections.abc import Collection, Sequence
from pathlib import Path
from typing import Any, NamedTuple

from extractor.errors import InputError
from extractor.ingest.columns import MAPPING_KEYS
from extractor.ingest.decode import bom_encoding
from extractor.ingest.language import detect_languages, normalise_tag
from extractor.ingest.sheets import WORKBOOK_SUFFIXES
from extractor.ingest.tables import read_delimited, read_workbook
from extractor.ingest.transcripts import docx_lines, parse_transcript, text_lines
from extractor.types import AnswerRow

SUFFIXES = (".xlsx", ".xls", ".ods", ".csv", ".tsv", ".txt", ".docx")
"""File suffixes :func:`read_interviews` can read."""


class ReadResult(NamedTuple):
    """The answers read from one interview file (see :func:`read_interviews`)."""

    rows: list[AnswerRow]
    kind: str
    layout: str
    encoding: str | None
    warnings: list[str]


def _check_mapping(mapping: dict[str, Any] | None) -> None:
    """Reject mapping keys that mean nothing, naming the allowed ones."""
    for key, value in (mapping or {}).items():
        if key not in MAPPING_KEYS:
            raise InputError(
                f"The column mapping has an unknown key {key!r}; "
                f"allowed keys are {', '.join(MAPPING_KEYS)}."
            )
        if key == "questions" and (isinstance(value, str) or not isinstance(value, Sequence)):
            raise InputError(
                f"The column mapping's 'questions' must be a list of column headers, got {value!r}."
            )


def _setting_tag(tag: str, setting: str) -> str:
    """Normalise a language tag given as a setting, naming the setting when it is wrong."""
    try:
        return normalise_tag(tag)
    except InputError as err:
        raise InputError(f"The setting {setting!r} is wrong: {err}") from err


def read_interviews(
    path: Path,
    *,
    sheet: str | None = None,
    mapping: dict[str, Any] | None = None,
    default_lang: str = "en",
    languages: Sequence[str] | None = None,
    coded: Collection[str] = (),
) -> ReadResult:
    """Read the answers of one interview file.

    Args:
        path: An .xlsx, .xls, .ods, .csv, .tsv, .txt or .docx file.
        sheet: For a workbook, the only sheet to read; by default every visible sheet.
        mapping: Explicit column roles overriding header recognition, e.g.
            ``{"respondent": "Code", "answer": "Verbatim", "question": ...,
            "language": ..., "variety": ..., "group": ...}``, or
            ``{"respondent": "Code", "questions": ["Why?", ...]}`` for a wide table.
        default_lang: The language of answers whose language is neither given nor
            detectable.
        languages: The workspace's languages, the candidates of detection.
        coded: The question keys of the workspace's question codebook: a wide table's
            column with one of these headers is a question column, however short its
            answers.

    Returns:
        A :class:`ReadResult` of :class:`~extractor.types.AnswerRow`; ``row`` is the
        spreadsheet row (header = 1) or the transcript line (the paragraph in .docx).

    Raises:
        InputError: For a missing, empty, unreadable or unrecognisable file, a bad
            mapping or setting, or a bad row; the message names the file and place.
    """
    path = Path(path)
    suffix = _check_path(path)
    _check_mapping(mapping)
    default = _setting_tag(default_lang, "default language")
    candidates = [_setting_tag(t, "languages") for t in languages] if languages else None
    data = _read_bytes(path)
    rows, layout, encoding, warnings = _read_rows(path, suffix, data, sheet, mapping, coded)
    warnings += metadata_conflicts(path, rows, {})
    _fill_languages(rows, candidates, default)
    answers = [AnswerRow(**row) for row in rows]
    return ReadResult(answers, suffix.lstrip("."), layout, encoding, warnings)


def _check_path(path: Path) -> str:
    """Return the file's lower-case suffix, refusing one no reader reads or a missing file."""
    suffix = path.suffix.lower()
    if suffix not in SUFFIXES:
        raise InputError(
            f"File '{path.name}' has the suffix {suffix or '(none)'!r}, which cannot be read; "
            f"allowed are {', '.join(SUFFIXES)} (save an older .doc file as .docx)."
        )
    if not path.is_file():
        raise InputError(
            f"File '{path}' does not exist or is not a file; check the path and the spelling."
        )
    return suffix


def _read_bytes(path: Path) -> bytes:
    """Return the file's bytes, refusing an unreadable or empty file by name."""
    try:
        data = path.read_bytes()
    except OSError as err:
        raise InputError(
            f"File '{path.name}' cannot be read ({err.strerror}); check that it is not open "
            "elsewhere and that you may read it."
        ) from err
    marked = bom_encoding(data)
    if not (data if marked is None else marked[1]).strip():
        raise InputError(f"File '{path.name}' is empty; check that it is the right file.")
    return data


def _read_rows(
    path: Path,
    suffix: str,
    data: bytes,
    sheet: str | None,
    mapping: dict[str, Any] | None,
    coded: Collection[str],
) -> tuple[list[dict[str, Any]], str, str | None, list[str]]:
    """Read the rows with the reader of the suffix; return rows, layout, encoding, warnings."""
    encoding: str | None = None
    if suffix in (".csv", ".tsv"):
        rows, layout, encoding, warnings = read_delimited(path, data, mapping, coded)
        if sheet is not None:
            warnings.append(f"File '{path.name}' has no sheets; the sheet {sheet!r} was ignored.")
    elif suffix in WORKBOOK_SUFFIXES:
        rows, layout, warnings = read_workbook(path, data, sheet, mapping, coded)
    else:
        if suffix == ".txt":
            lines, encoding, warnings = text_lines(path, data)
        else:
            lines, warnings = docx_lines(path, data)
        rows, layout = parse_transcript(path, lines), "transcript"
        if not rows:
            warnings.append(f"File '{path.name}' has no respondent turns.")
    return rows, layout, encoding, warnings


def row_place(path: Path, row: dict[str, Any]) -> str:
    """Return where an answer row is in its file: ``row 3``, ``sheet 'A', row 3``, ``line 3``."""
    if path.suffix.lower() in (".txt", ".docx"):  # a transcript's row is its line (paragraph)
        return f"line {row['row']}"
    return f"sheet {row['sheet']!r}, row {row['row']}" if row.get("sheet") else f"row {row['row']}"


def metadata_conflicts(
    path: Path,
    rows: Sequence[dict[str, Any]],
    known: dict[tuple[str, str], tuple[str, str]],
    *,
    within: bool = True,
) -> list[str]:
    """Warn, by file and row, where a respondent's metadata differs from an earlier value.

    Args:
        path: The file the rows come from.
        rows: Answer rows (``respondent``, ``metadata``, ``row``, ``sheet``).
        known: ``(respondent, key) -> (value, where)`` seen before, e.g. stored values;
            the first value is the one kept (the store adds new keys only).
        within: Whether to compare the rows with each other too, not only with ``known``.
    """
    warnings = []
    told = set()
    for row in rows:
        for key, value in row["metadata"].items():
            here = f"File '{path.name}', {row_place(path, row)}"
            pair = (row["respondent"], key)
            if pair not in known and not within:
                continue
            first, where = known.setdefault(pair, (value, row_place(path, row)))
            if first != value and (*pair, value) not in told:
                told.add((*pair, value))
                warnings.append(
                    f"{here}: respondent {row['respondent']!r} has {key} {value!r}, but "
                    f"{first!r} in {where}; {first!r} is kept, so correct the file if it is wrong."
                )
    return warnings


def _fill_languages(
    rows: list[dict[str, Any]], languages: Sequence[str] | None, default_lang: str
) -> None:
    """Detect the language of every row whose ``lang`` is still ``None``, in one batch."""
    pending = [row for row in rows if row["lang"] is None]
    found = detect_languages([row["answer"] for row in pending], languages, default_lang)
    for row, (tag, origin) in zip(pending, found, strict=True):
        row["lang"], row["lang_origin"] = tag, origin
