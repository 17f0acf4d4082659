"""Column recognition: which column of a table holds the respondent, the answer, and so on.

Column roles are recognised from typical English, French and Spanish headers, or named
by an explicit mapping. A *long* table has an answer column; a *wide* table has a
column per question instead, recognised by a header the question codebook names, a
header ending in ``?`` or free-text values; a column left as metadata whose values read
like sentences is named in a warning (:func:`answer_like_metadata`). The cell helpers
here (blank, yes/no, language) read cells by their role, for tables and transcript
headers alike.
"""

from __future__ import annotations

import re
from collections.abc import Collection, Mapping, Sequence
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
# A value reads like a sentence when it ends in sentence punctuation after two words or
# more, or holds four words or more; a metadata column warns when half its values read so
# (unpunctuated ones only when half are distinct too, as categories repeat: common
# practice). Checked to stay silent on the demo's and the maize survey's metadata.
_SENTENCE_END = re.compile(r"[.!?\u2026]['\"\u2019\u201d)\]]*$")
_WORD = re.compile(r"[^\W\d_]+")
_SENTENCE_WORDS = 4
_SENTENCE_SHARE = 0.5

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


def _infer_questions(
    headers: list[str], body: Grid, taken: set[int], coded: Collection[str]
) -> list[int]:
    """Pick the wide-layout question columns.

    A column is a question when the question codebook names its header (``coded``,
    exactly as the stance model looks questions up), whatever the length of its
    answers; else when its header ends in ``?`` or its values are free text, unless
    its header is a known categorical one (gender, district...). Columns already given
    a role are never questions.
    """
    return [
        i
        for i, header in enumerate(headers)
        if i not in taken
        and (
            header in coded
            or fold_header(header) not in _METADATA_HEADERS
            and (header.rstrip().endswith("?") or _is_free_text(_column_values(body, i)))
        )
    ]


def _words(value: str) -> int:
    """Return how many words (runs of letters) a cell holds: digits and signs are none."""
    return len(_WORD.findall(value))


def _sentence_like(values: list[str]) -> bool:
    """Return whether a column's values read like sentences rather than categories.

    Half the values or more end in sentence punctuation after two words or more; or,
    among three values or more, half or more hold four words or more and half or more
    are distinct. Village names, "farmer and trader", age groups and dates do neither.
    """
    share = _SENTENCE_SHARE * len(values)
    ended = sum(_words(v) >= 2 and _SENTENCE_END.search(v) is not None for v in values)
    long = sum(_words(v) >= _SENTENCE_WORDS for v in values)
    if values and ended >= share:
        return True
    return len(values) >= 3 and long >= share and len(set(values)) >= share


def answer_like_metadata(headers: list[str], body: Grid, cols: Columns, where: str) -> list[str]:
    """Warn about each metadata column of a wide table whose values read like answers.

    Such a column (short answers such as "Low price.", too short to count as free
    text) is stored as respondent metadata, where it would be grouped by and shown
    unmasked; the warning names it, shows a value and says how to make it a question.
    Known categorical headers (gender, district...) are not checked.
    """
    warnings = []
    for i in cols.metadata:
        values = [v.strip() for v in _column_values(body, i)]
        if fold_header(headers[i]) in _METADATA_HEADERS or not _sentence_like(values):
            continue
        shown = max(values, key=_words)
        warnings.append(
            f"{where}, column {headers[i]!r}: its values read like answers (such as "
            f"{shown[:60]!r}) but were not taken for answers, so the column was stored as "
            "respondent information; if it holds answers, give it a row in the question "
            "codebook (questions.csv, or a line under [codebook] in traits.toml) or name every "
            f"question column with {_how_to_name('questions', headers[i])}, and add the file "
            "to a new workspace (this one keeps what it stored)."
        )
    return warnings


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
    headers: list[str],
    body: Grid,
    mapping: Mapping[str, Any],
    taken: set[int],
    coded: Collection[str],
    where: str,
) -> list[int]:
    """Return the wide layout's question columns: the mapped ones, else inferred ones."""
    if mapping.get("questions"):
        return [_find_column(headers, str(q), "questions", where) for q in mapping["questions"]]
    return _infer_questions(headers, body, taken, coded)


def _missing_columns(headers: list[str], respondent: bool, answers: bool, where: str) -> str:
    """Return the one sentence naming what a table lacks: respondent IDs, answers or both."""
    found = f"(headers found: {', '.join(repr(h) for h in headers)})"
    id_how = f"name the column of respondent IDs with {_how_to_name('respondent', 'HEADER')}"
    answer_how = (
        f"name the answer column with {_how_to_name('answer', 'HEADER')}, or, with one "
        "column per question, list the question columns in the question codebook "
        "(questions.csv, or [codebook] in traits.toml)"
    )
    if not respondent and not answers:
        # Both named in one sentence, the IDs first: the short options only, to keep it short.
        return (
            f"{where}: no respondent ID column was recognised, nor any answer column {found}; "
            'add a column of respondent IDs or name it with --respondent-column "HEADER", and '
            'name the answer column with --answer-column "HEADER" or, with one column per '
            "question, list the question columns in the question codebook (questions.csv)."
        )
    if not respondent:
        return (
            f"{where}: no respondent ID column was recognised {found}; add a column of "
            f"respondent IDs, or {id_how}."
        )
    return (
        f"{where}: no answer column was recognised and no column holds free text {found}; "
        f"{answer_how}."
    )


def resolve_columns(
    headers: list[str],
    body: Grid,
    mapping: Mapping[str, Any] | None,
    where: str,
    coded: Collection[str] = (),
) -> Columns:
    """Assign each column a role; long layout when an answer column exists, else wide.

    Args:
        headers: The table's headers (see :func:`unique_headers`).
        body: The rows below the header.
        mapping: Explicit columns by role (see :data:`MAPPING_KEYS`).
        where: The file (and sheet), for messages.
        coded: The question keys of the workspace's question codebook: a wide table's
            column with one of these headers is a question column.

    Raises:
        LayoutError: For a mapping naming a missing column, or no respondent column,
            or no answer column, free-text column or codebook question (one sentence
            naming both when both are missing).
    """
    mapping = mapping or {}
    roles = _roles(headers, mapping, where)
    questions: list[int] = []
    if "answer" not in roles:
        questions = _question_columns(headers, body, mapping, set(roles.values()), coded, where)
    answers = "answer" in roles or bool(questions)
    if "respondent" not in roles or not answers:
        raise LayoutError(_missing_columns(headers, "respondent" in roles, answers, where))
    taken = set(roles.values()) | set(questions)
    metadata = [i for i in range(len(headers)) if i not in taken]
    return Columns(roles, questions, metadata)
