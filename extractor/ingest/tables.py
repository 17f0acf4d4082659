"""Spreadsheet readers (.xlsx, .csv, .tsv): long and wide layouts to answer rows.

A *long* table has a row per answer (respondent, question, answer); a *wide* table has
a row per respondent and a column per question, whose header is the question. Column
roles are recognised from typical English, French and Spanish headers, or named by an
explicit mapping. This module also holds the helpers the transcript reader shares:
:class:`ReadResult`, text decoding, key folding and language filling.
"""

from __future__ import annotations

import csv
import io
import itertools
import math
import re
import zipfile
from collections.abc import Iterable, Sequence
from datetime import date, datetime, time
from pathlib import Path
from typing import Any, NamedTuple

import openpyxl
from openpyxl.utils import get_column_letter
from openpyxl.utils.exceptions import InvalidFileException

from extractor.errors import InputError
from extractor.ingest.language import detect_languages, tag_from_value
from extractor.nlp.fold import fold

OLE_MAGIC = b"\xd0\xcf\x11\xe0"
"""First bytes of an OLE compound file: how Office stores password-protected files."""

ZIP_MAGIC = b"PK\x03\x04"

_ROLE_HEADERS: dict[str, frozenset[str]] = {
    "respondent": frozenset({
        "respondent", "respondent id", "respondent code", "respondent no", "respondent number",
        "id", "code", "participant", "participant id", "participant code", "interviewee",
        "encuestado", "id encuestado", "codigo encuestado", "codigo", "participante",
        "entrevistado", "repondant", "id repondant", "code repondant", "enquete", "participant e",
    }),
    "question": frozenset({
        "question", "question text", "pregunta", "item", "prompt", "texte de la question",
    }),
    "answer": frozenset({
        "answer", "response", "verbatim", "text", "answer text", "reponse", "respuesta",
        "texte", "texto", "verbatim answer",
    }),
    "language": frozenset({"language", "lang", "langue", "idioma", "lengua", "language code"}),
    "variety": frozenset({"variety", "variete", "variedad", "cultivar", "variety name"}),
    "group": frozenset({
        "focus group", "group", "fg", "grupo focal", "groupe focal", "is group",
    }),
}  # fmt: skip

_METADATA_HEADERS = frozenset({
    "gender", "sex", "role", "occupation", "district", "region", "village", "age", "age group",
    "country", "county", "province", "community", "location", "site", "date", "interviewer",
    "enumerator", "marital status", "education", "household head", "sexe", "genre", "metier",
    "profession", "tranche d age", "groupe d age", "pays", "commune", "sexo", "genero", "rol",
    "ocupacion", "distrito", "comunidad", "edad", "grupo de edad", "pais", "municipio",
})  # fmt: skip

MAPPING_KEYS = ("respondent", "question", "answer", "language", "variety", "group", "questions")
"""Keys an explicit column mapping may hold; ``questions`` is a list of wide-layout columns."""

_YES = frozenset({"yes", "y", "true", "1", "oui", "si", "x", "fg", "focus group"})
_MISSING = frozenset({"nan", "na", "n/a", "#n/a", "null"})
# A wide-layout column is free text when its answers are this long on average and
# mostly distinct (common practice: categorical codes are short and repeat).
_FREE_TEXT_MEAN_CHARS = 20
_FREE_TEXT_DISTINCT = 0.5


class ReadResult(NamedTuple):
    """The answers read from one interview file."""

    rows: list[dict[str, Any]]
    kind: str
    layout: str
    encoding: str | None
    warnings: list[str]


Grid = list[tuple[int, list[str | None]]]
"""Spreadsheet rows as ``(row number, cells)``; cells are text or ``None`` when blank."""


def fold_header(text: str) -> str:
    """Fold a header for matching: lower case, no accents, separators as single spaces."""
    return " ".join(re.sub(r"[\W_]+", " ", fold(text)).split())


def snake_key(header: str) -> str:
    """Return a metadata key for a header: ``"Age group"`` -> ``"age_group"``."""
    return fold_header(header).replace(" ", "_")


def is_yes(value: str | None) -> bool:
    """Return whether a flag cell says yes (en/fr/es, ``1``, ``true``, ``x``)."""
    return value is not None and fold_header(value) in _YES


def is_blank(value: str | None) -> bool:
    """Return whether a cell counts as empty: blank, whitespace or a missing-value marker."""
    return value is None or not value.strip() or value.strip().lower() in _MISSING


def cell_text(value: object) -> str | None:
    """Turn a spreadsheet cell value into text, ``None`` when empty; ``7.0`` becomes ``"7"``."""
    if value is None:
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


def decode_text(data: bytes, path: Path) -> tuple[str, str, list[str]]:
    """Decode file bytes: UTF-8 (with or without BOM), else cp1252, else latin-1.

    Returns:
        ``(text, encoding, warnings)``; a warning names the fallback encoding used.
    """
    if data.startswith(b"\xef\xbb\xbf"):
        return data[3:].decode("utf-8", errors="replace"), "utf-8-sig", []
    try:
        return data.decode("utf-8"), "utf-8", []
    except UnicodeDecodeError:
        pass
    for encoding in ("cp1252", "latin-1"):
        try:
            text = data.decode(encoding)
        except UnicodeDecodeError:
            continue
        warning = (
            f"File '{path.name}' is not UTF-8; it was read as {encoding}. "
            "Check accented letters, or save the file as UTF-8."
        )
        return text, encoding, [warning]
    raise InputError(f"File '{path.name}' could not be decoded; save it as UTF-8 text.")


def fill_languages(
    rows: list[dict[str, Any]], languages: Sequence[str] | None, default_lang: str
) -> None:
    """Detect the language of every row whose ``lang`` is still ``None``, in one batch."""
    pending = [row for row in rows if row["lang"] is None]
    found = detect_languages([row["answer"] for row in pending], languages, default_lang)
    for row, (tag, origin) in zip(pending, found, strict=True):
        row["lang"], row["lang_origin"] = tag, origin


def language_of_cell(value: str | None, where: str, header: str) -> tuple[str | None, str | None]:
    """Return ``(tag, "column")`` for a language cell, ``(None, None)`` when it is blank.

    Raises:
        InputError: Naming the row and column when the cell holds an unknown tag.
    """
    if is_blank(value):
        return None, None
    try:
        return tag_from_value(str(value)), "column"
    except InputError as err:
        raise InputError(
            f"{where}, column {header!r}: the language {value!r} is not recognised; "
            "write a BCP 47 tag such as 'en', 'fr' or 'es-419', or leave it blank to detect it."
        ) from err


def _unique_headers(cells: Sequence[str | None]) -> list[str]:
    """Name the header cells: blank ones by column letter, repeats with a counter."""
    out: list[str] = []
    for i, cell in enumerate(cells):
        name = (cell or "").strip() or f"column {get_column_letter(i + 1)}"
        base, n = name, 2
        while name in out:
            name, n = f"{base} ({n})", n + 1
        out.append(name)
    return out


class LayoutError(InputError):
    """The columns of a table cannot be given roles (raised before any row is read)."""


class _Columns(NamedTuple):
    """Which column index plays which role in one table."""

    roles: dict[str, int]
    questions: list[int]
    metadata: list[int]


def _find_column(headers: list[str], name: str, key: str, where: str) -> int:
    """Return the index of the mapped column, matching exactly and then folded."""
    if name in headers:
        return headers.index(name)
    folded = [fold_header(h) for h in headers]
    if fold_header(name) in folded:
        return folded.index(fold_header(name))
    raise LayoutError(
        f"{where}: the mapping names column {name!r} for {key!r}, but the headers are "
        f"{', '.join(repr(h) for h in headers)}; correct the mapping to one of these."
    )


def _is_free_text(values: list[str]) -> bool:
    """Return whether a column's values look like answers rather than categories."""
    if not values:
        return False
    mean = sum(len(v) for v in values) / len(values)
    return mean >= _FREE_TEXT_MEAN_CHARS and len(set(values)) / len(values) >= _FREE_TEXT_DISTINCT


def _column_values(body: Grid, index: int) -> list[str]:
    """Return the non-blank values of one column."""
    return [str(c) for _, cells in body for c in cells[index : index + 1] if not is_blank(c)]


def _infer_questions(headers: list[str], body: Grid, taken: set[int]) -> list[int]:
    """Pick the wide-layout question columns: a header ending in ``?`` or free-text values.

    Columns already given a role and known categorical headers (gender, district...)
    are never questions.
    """
    return [
        i
        for i, header in enumerate(headers)
        if i not in taken
        and fold_header(header) not in _METADATA_HEADERS
        and (header.rstrip().endswith("?") or _is_free_text(_column_values(body, i)))
    ]


def resolve_columns(
    headers: list[str], body: Grid, mapping: dict[str, Any] | None, where: str
) -> _Columns:
    """Assign each column a role; long layout when an answer column exists, else wide.

    Raises:
        LayoutError: For a mapping naming a missing column, no answer or free-text
            column, or no respondent column.
    """
    mapping = mapping or {}
    roles: dict[str, int] = {}
    for key in ("respondent", "question", "answer", "language", "variety", "group"):
        if mapping.get(key):
            roles[key] = _find_column(headers, str(mapping[key]), key, where)
    for i, header in enumerate(headers):
        for key, names in _ROLE_HEADERS.items():
            if key not in roles and i not in roles.values() and fold_header(header) in names:
                roles[key] = i
    taken = set(roles.values())
    questions: list[int] = []
    if "answer" not in roles:
        if mapping.get("questions"):
            questions = [_find_column(headers, str(q), "questions", where)
                         for q in mapping["questions"]]  # fmt: skip
        else:
            questions = _infer_questions(headers, body, taken)
        if not questions:
            raise LayoutError(
                f"{where}: no answer column was recognised and no column holds free text "
                f"(headers found: {', '.join(repr(h) for h in headers)}); name the answer "
                "column with the mapping, e.g. {'answer': '<header>'}."
            )
    if "respondent" not in roles:
        raise LayoutError(
            f"{where}: no respondent ID column was recognised (headers found: "
            f"{', '.join(repr(h) for h in headers)}); name it with the mapping, "
            "e.g. {'respondent': '<header>'}."
        )
    taken |= set(questions)
    metadata = [i for i in range(len(headers)) if i not in taken]
    return _Columns(roles, questions, metadata)


def _cell(cells: list[str | None], index: int | None) -> str | None:
    """Return a cell by index, ``None`` when the row is short or no column has the role."""
    if index is None or index >= len(cells):
        return None
    return cells[index]


def table_rows(
    grid: Grid, mapping: dict[str, Any] | None, where: str, sheet: str | None
) -> tuple[list[dict[str, Any]], str, list[str]]:
    """Turn one table (header row first) into answer rows; return rows, layout and warnings.

    Raises:
        InputError: For unusable columns, a bad language cell or an answer without a
            respondent ID (naming the row).
    """
    (_, header_cells), body = grid[0], grid[1:]
    headers = _unique_headers(header_cells)
    cols = resolve_columns(headers, body, mapping, where)
    roles = cols.roles
    layout = "long" if "answer" in roles else "wide"
    answer_columns = [roles["answer"]] if layout == "long" else cols.questions
    rows: list[dict[str, Any]] = []
    overflow = [n for n, cells in body if any(not is_blank(c) for c in cells[len(headers) :])]
    warnings = []
    if overflow:
        which = (f"row {overflow[0]} has" if len(overflow) == 1
                 else f"rows {', '.join(map(str, overflow[:5]))} have")  # fmt: skip
        warnings.append(
            f"{where}: {which} more cells than the header row; the extra cells were ignored "
            "(in a CSV, quote text that contains the delimiter)."
        )
    for number, cells in body:
        at = f"{where}, row {number}"
        answers = [(i, _cell(cells, i)) for i in answer_columns]
        answers = [(i, a) for i, a in answers if a is not None and not is_blank(a)]
        if not answers:
            continue
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
            for i in cols.metadata
            for v in [_cell(cells, i)]
            if not is_blank(v)
        }
        question_cell = _cell(cells, roles.get("question"))
        for i, answer in answers:
            if layout == "wide":
                question: str | None = headers[i]
            else:
                question = None if is_blank(question_cell) else str(question_cell).strip()
            rows.append({
                "respondent": str(respondent).strip(),
                "question": question,
                "answer": answer,
                "lang": lang,
                "lang_origin": origin,
                "variety": None if is_blank(variety) else str(variety).strip(),
                "metadata": dict(metadata),
                "sheet": sheet,
                "row": number,
                "is_group": is_yes(_cell(cells, roles.get("group"))),
            })  # fmt: skip
    return rows, layout, warnings


def _drop_empty(records: Iterable[tuple[int, list[str | None]]]) -> Grid:
    """Keep the rows that have at least one non-blank cell."""
    return [(n, cells) for n, cells in records if any(c is not None and c.strip() for c in cells)]


def sniff_delimiter(text: str) -> str:
    """Choose ``,`` or ``;``: the one giving a multi-column, consistently wide header."""
    best, best_score = ",", (False, -1, -1)
    for delimiter in (",", ";"):
        records = list(itertools.islice(csv.reader(io.StringIO(text, newline=""),
                                                   delimiter=delimiter), 50))  # fmt: skip
        records = [r for r in records if any(c.strip() for c in r)]
        if not records:
            continue
        width = len(records[0])
        score = (width > 1, sum(len(r) == width for r in records), width)
        if score > best_score:
            best, best_score = delimiter, score
    return best


def read_delimited(
    path: Path, data: bytes, mapping: dict[str, Any] | None
) -> tuple[list[dict[str, Any]], str, str, list[str]]:
    """Read a .csv or .tsv file; return ``(rows, layout, encoding, warnings)``."""
    text, encoding, warnings = decode_text(data, path)
    delimiter = "\t" if path.suffix.lower() == ".tsv" else sniff_delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    try:
        grid = _drop_empty((n, list(cells)) for n, cells in enumerate(reader, start=1))
    except csv.Error as err:
        raise InputError(
            f"File '{path.name}', row {reader.line_num}: the table cannot be parsed ({err}); "
            "check the quotes on that row or save the file again from a spreadsheet."
        ) from err
    if not grid:
        raise InputError(f"File '{path.name}' has no rows; export the interviews into it again.")
    rows, layout, table_warnings = table_rows(grid, mapping, f"File '{path.name}'", None)
    warnings += table_warnings
    if not rows:
        warnings.append(f"File '{path.name}' has a header but no answers.")
    return rows, layout, encoding, warnings


def check_office_archive(path: Path, data: bytes, program: str) -> None:
    """Refuse an encrypted Office file by name, and raise BadZipFile for a non-archive.

    Encrypted .xlsx and .docx files are OLE compound files, not zip archives, so their
    first bytes tell them apart from a merely corrupt file.

    Raises:
        InputError: The file is password-protected.
        zipfile.BadZipFile: The file is not a zip archive (the caller words the error).
    """
    if data.startswith(OLE_MAGIC):
        raise InputError(
            f"File '{path.name}' is password-protected (an encrypted Office file); "
            f"remove the password in the {program} and save it again."
        )
    if not data.startswith(ZIP_MAGIC):
        raise zipfile.BadZipFile("not a zip archive")


def _open_workbook(path: Path, data: bytes) -> Any:
    """Open a workbook read-only, turning every failure into one InputError."""
    try:
        check_office_archive(path, data, "spreadsheet programme")
        return openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except (zipfile.BadZipFile, InvalidFileException, KeyError, ValueError, OSError) as err:
        raise InputError(
            f"File '{path.name}' is not a valid .xlsx workbook ({type(err).__name__}); "
            "open it in a spreadsheet programme and save it as .xlsx again."
        ) from err


def read_workbook(
    path: Path, data: bytes, sheet: str | None, mapping: dict[str, Any] | None
) -> tuple[list[dict[str, Any]], str, list[str]]:
    """Read every visible sheet of an .xlsx file (or the one named); return rows, layout, warnings.

    When reading all sheets, a sheet whose columns cannot be recognised (a codebook, a
    notes sheet) is skipped with a warning, unless no sheet can be read at all.
    """
    workbook = _open_workbook(path, data)
    rows: list[dict[str, Any]] = []
    layouts: set[str] = set()
    warnings: list[str] = []
    skipped: list[LayoutError] = []
    try:
        if sheet is not None and sheet not in workbook.sheetnames:
            raise InputError(
                f"File '{path.name}' has no sheet {sheet!r}; the sheets are "
                f"{', '.join(repr(s) for s in workbook.sheetnames)}."
            )
        names = [sheet] if sheet is not None else workbook.sheetnames
        for name in names:
            ws = workbook[name]
            if sheet is None and ws.sheet_state != "visible":
                warnings.append(f"File '{path.name}': hidden sheet {name!r} was not read.")
                continue
            grid = _drop_empty(
                (n, [cell_text(v) for v in values])
                for n, values in enumerate(
                    ws.iter_rows(min_row=1, min_col=1, values_only=True), start=1
                )  # fmt: skip
            )
            if not grid:
                continue
            where = f"File '{path.name}', sheet {name!r}"
            try:
                sheet_rows, layout, sheet_warnings = table_rows(grid, mapping, where, name)
            except LayoutError as err:
                if sheet is not None:
                    raise
                skipped.append(err)
                continue
            rows += sheet_rows
            warnings += sheet_warnings
            layouts.add(layout)
    finally:
        workbook.close()
    if not layouts:
        if skipped:
            raise skipped[0]
        raise InputError(
            f"File '{path.name}' has no filled cells; check that it is the right file."
        )
    warnings += [f"Sheet skipped: {err}" for err in skipped]
    return rows, layouts.pop() if len(layouts) == 1 else "mixed", warnings
