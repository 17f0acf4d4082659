"""Column recognition: which column of a table holds the respondent, the answer, and so on.

Column roles are recognised from typical English, French and Spanish headers, or named
by an explicit mapping. A *long* table has an answer column; a *wide* table has a
column per question instead, recognised by a header ending in ``?`` or by free-text
values. The cell helpers here (blank, yes/no, language) read cells by their role, for
tables and transcript headers alike.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from typing import Any, NamedTuple

from openpyxl.utils import get_column_letter

from extractor.errors import InputError
from extractor.ingest.language import tag_from_value
from extractor.nlp.fold import fold

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


def unique_headers(cells: Sequence[str | None]) -> list[str]:
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


class Columns(NamedTuple):
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
        f"{where}: the {key} column was named {name!r}, but the headers are "
        f"{', '.join(repr(h) for h in headers)}; name one of these with "
        f"{_how_to_name(key, 'HEADER')}."
    )


def _how_to_name(key: str, header: str) -> str:
    """Return how a user names a column: the option of ``traits add``, the setting."""
    setting = f'{key} = "{header}" under [columns] in traits.toml'
    if key == "questions":
        return f'questions = ["{header}", ...] under [columns] in traits.toml'
    if key == "group":
        return setting
    return f'`traits add FILE --{key}-column "{header}"` or {setting}'


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


def _roles(headers: list[str], mapping: Mapping[str, Any], where: str) -> dict[str, int]:
    """Give roles to columns: the mapped ones first, then by recognised headers."""
    roles: dict[str, int] = {}
    for key in ("respondent", "question", "answer", "language", "variety", "group"):
        if mapping.get(key):
            roles[key] = _find_column(headers, str(mapping[key]), key, where)
    for i, header in enumerate(headers):
        for key, names in _ROLE_HEADERS.items():
            if key not in roles and i not in roles.values() and fold_header(header) in names:
                roles[key] = i
    return roles


def _question_columns(
    headers: list[str], body: Grid, mapping: Mapping[str, Any], taken: set[int], where: str
) -> list[int]:
    """Return the wide layout's question columns: the mapped ones, else inferred ones."""
    if mapping.get("questions"):
        questions = [_find_column(headers, str(q), "questions", where)
                     for q in mapping["questions"]]  # fmt: skip
    else:
        questions = _infer_questions(headers, body, taken)
    if not questions:
        raise LayoutError(
            f"{where}: no answer column was recognised and no column holds free text "
            f"(headers found: {', '.join(repr(h) for h in headers)}); name the answer "
            f"column with {_how_to_name('answer', 'HEADER')}."
        )
    return questions


def resolve_columns(
    headers: list[str], body: Grid, mapping: Mapping[str, Any] | None, where: str
) -> Columns:
    """Assign each column a role; long layout when an answer column exists, else wide.

    Raises:
        LayoutError: For a mapping naming a missing column, no answer or free-text
            column, or no respondent column.
    """
    mapping = mapping or {}
    roles = _roles(headers, mapping, where)
    questions: list[int] = []
    if "answer" not in roles:
        questions = _question_columns(headers, body, mapping, set(roles.values()), where)
    if "respondent" not in roles:
        raise LayoutError(
            f"{where}: no respondent ID column was recognised (headers found: "
            f"{', '.join(repr(h) for h in headers)}); add a column of respondent IDs, or "
            f"name the column that holds them with {_how_to_name('respondent', 'HEADER')}."
        )
    taken = set(roles.values()) | set(questions)
    metadata = [i for i in range(len(headers)) if i not in taken]
    return Columns(roles, questions, metadata)
