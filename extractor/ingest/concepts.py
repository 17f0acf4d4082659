"""Loading and validating a concept list (traits or varieties): tables, OBO and SKOS files.

:func:`load_concept_list` dispatches on the suffix: ``.obo`` (:mod:`extractor.ingest.obo`),
``.ttl``, ``.rdf``, ``.skos``, ``.xml`` (:mod:`extractor.ingest.skos`), else a table
(CSV, TSV or a workbook's first sheet), read here.

A table has the columns ``id, label, lang, synonyms, parent, definition`` (``lang``,
``synonyms``, ``parent``, ``definition`` optional; an optional ``hidden`` column holds
hidden labels such as common misspellings, as in SKOS), or any columns named by a
:class:`~extractor.workspace.settings.ConceptListSettings` (``--id-column`` and the
like). There may be several rows per concept, one per language. Synonyms (and several
parents) are separated by ``|`` or ``;``, or by the separator given.

The label of a row becomes the concept's preferred alias in that language, synonyms
become alternative aliases, hidden labels hidden aliases (SKOS prefLabel, altLabel,
hiddenLabel).
"""

from __future__ import annotations

import csv
import io
import re
import zipfile
from pathlib import Path
from typing import Any, NamedTuple

import pandas as pd

from extractor.errors import InputError
from extractor.ingest.concept_list import ConceptList, file_sha256, finish
from extractor.ingest.decode import (
    check_office_archive,
    decode_text,
    sniff_delimiter,
    strip_formula_guard,
)
from extractor.ingest.language import normalise_tag
from extractor.ingest.obo import load_obo
from extractor.ingest.sheets import WORKBOOK_SUFFIXES, read_sheets
from extractor.ingest.skos import FORMATS as SKOS_FORMATS
from extractor.ingest.skos import load_skos
from extractor.types import AliasEntry, ConceptEntry
from extractor.workspace.settings import ConceptListSettings

__all__ = ["ConceptList", "file_sha256", "load_concept_list", "read_table", "split_synonyms"]

REQUIRED = ("id", "label")
OPTIONAL = ("lang", "synonyms", "hidden", "parent", "definition")
TABLE_SUFFIXES = (".csv", ".tsv", *WORKBOOK_SUFFIXES)
_SPLIT = re.compile(r"\s*[|;]\s*")


class _Columns(NamedTuple):
    """The table's header names that hold each part of a concept (None: not in the table)."""

    id: str
    label: str
    lang: str | None
    synonyms: tuple[str, ...]
    hidden: str | None
    parent: str | None
    definition: str | None


def read_table(path: Path) -> pd.DataFrame:
    """Read a CSV or TSV file, or the first sheet of an XLSX, XLS or ODS workbook, as strings.

    Text files are decoded as the interview readers decode them (by their byte order
    mark, else UTF-8, then cp1252 or latin-1), with the same delimiter choice; workbooks
    are read as the interview readers read them (:mod:`extractor.ingest.sheets`). The
    first row is the header: two columns with one name, or a row with more filled cells
    than the header, is refused, naming the row.
    """
    suffix = path.suffix.lower()
    data = path.read_bytes()
    if not data.strip():
        raise InputError(f"{path} is empty; give a file with a header row and concepts.")
    try:
        if suffix == ".xlsx":
            check_office_archive(path, data, "spreadsheet programme")
            raw = pd.read_excel(io.BytesIO(data), dtype=str, keep_default_na=False, header=None)
            grid = [[str(c) for c in row] for row in raw.itertuples(index=False)]
        elif suffix in WORKBOOK_SUFFIXES:
            sheets = read_sheets(path, data)
            grid = [[c or "" for c in cells] for _, cells in (sheets[0].grid if sheets else [])]
        else:
            text, _, _ = decode_text(data, path)
            sep = "\t" if suffix == ".tsv" else sniff_delimiter(text)
            grid = list(csv.reader(io.StringIO(text, newline=""), delimiter=sep))
    except (zipfile.BadZipFile, ValueError, OSError, KeyError, csv.Error) as exc:
        raise InputError(
            f"{path} could not be read as a {suffix} table ({exc}); save it again as CSV or XLSX."
        ) from exc
    return _frame(path, grid)


def _frame(path: Path, grid: list[list[str]]) -> pd.DataFrame:
    """Return the grid as a frame under its first row, checking names and widths."""
    numbered = [(n, row) for n, row in enumerate(grid, start=1) if any(c.strip() for c in row)]
    if not numbered:
        raise InputError(f"{path} is empty; give a file with a header row and concepts.")
    (_, header), body = numbered[0], numbered[1:]
    names = [h.strip() or f"column_{i + 1}" for i, h in enumerate(header)]
    while names and names[-1].startswith("column_") and not header[len(names) - 1].strip():
        names.pop()  # trailing empty header cells are no columns
    first: dict[str, int] = {}
    for i, name in enumerate(names, start=1):
        if name.casefold() in first:
            raise InputError(
                f"{path}: the header names {name!r} twice (columns {first[name.casefold()]} "
                f"and {i}); rename or delete one of them and import again."
            )
        first[name.casefold()] = i
    rows = []
    for number, cells in body:
        extra = [c for c in cells[len(names) :] if c.strip()]
        if extra:
            raise InputError(
                f"{path}, row {number}: {len(names) + len(extra)} filled cells but the header "
                f"names {len(names)} columns (first extra cell {extra[0]!r}); add a header for "
                "it or remove it."
            )
        padded = [*cells[: len(names)], *[""] * (len(names) - len(cells))]
        rows.append([strip_formula_guard(c) for c in padded])
    frame = pd.DataFrame(rows, columns=names, dtype=str)
    frame.index = pd.Index([number for number, _ in body])
    return frame


def split_synonyms(cell: str, separator: str = "") -> list[str]:
    """Split a synonyms cell on ``separator`` (default ``|`` or ``;``); drop empty parts."""
    parts = cell.split(separator) if separator else _SPLIT.split(cell or "")
    return [part.strip() for part in parts if part.strip()]


def load_concept_list(
    path: Path,
    *,
    default_lang: str = "en",
    options: ConceptListSettings | None = None,
) -> ConceptList:
    """Read and validate a concept list: a table, an OBO file or a SKOS file.

    Args:
        path: The file.
        default_lang: The language of labels that name none.
        options: Which columns of a table hold what (tables only), and which branch of
            the hierarchy to import (every kind of file).

    Raises:
        InputError: The file is missing, of an unknown kind or broken; a required column
            is missing, an ID is empty, one ID has two different labels in one language,
            a language tag is unknown, the parent links form a cycle, or a root or
            excluded ID is not in the list.
    """
    options = options or ConceptListSettings()
    if not path.is_file():
        raise InputError(f"{path} does not exist; check the path.")
    suffix = path.suffix.lower()
    branch = {"roots": options.roots, "exclude": options.exclude}
    if suffix == ".obo":
        return load_obo(path, default_lang=default_lang, **branch)
    if suffix in SKOS_FORMATS:
        return load_skos(path, default_lang=default_lang, **branch)
    if suffix not in TABLE_SUFFIXES:
        raise InputError(
            f"{path} has suffix {suffix!r}; a concept list must be a table (.csv, .tsv, "
            ".xlsx, .xls, .ods), an OBO file (.obo) or SKOS (.ttl, .rdf, .skos)."
        )
    frame = read_table(path)
    columns = _columns(path, frame, options)
    if frame.empty:
        raise InputError(f"{path} has a header but no concepts; add one row per concept.")
    concepts, aliases = _table_concepts(path, frame, columns, default_lang, options)
    return finish(path, concepts, aliases, **branch)


def _find(path: Path, frame: pd.DataFrame, given: str, default: str, option: str) -> str | None:
    """Return the header a role is read from: the one given (it must exist), else the default."""
    by_fold = {str(c).casefold(): str(c) for c in frame.columns}
    if given:
        found = by_fold.get(given.strip().casefold())
        if found is None:
            raise InputError(
                f"{path} has no column {given!r} (given with {option}); the columns are "
                f"{', '.join(map(repr, frame.columns))}."
            )
        return found
    return by_fold.get(default)


def _columns(path: Path, frame: pd.DataFrame, o: ConceptListSettings) -> _Columns:
    """Resolve which header holds each part, or explain how to name them."""
    cid = _find(path, frame, o.id_column, "id", "--id-column")
    label = _find(path, frame, o.label_column, "label", "--label-column")
    if cid is None or label is None:
        raise InputError(_unrecognised(path, frame, cid is None, label is None))
    given_syn = [_find(path, frame, c, "", "--synonyms-column") for c in o.synonyms_columns]
    default_syn = _find(path, frame, "", "synonyms", "")
    return _Columns(
        cid,
        label,
        _find(path, frame, o.lang_column, "lang", "--lang-column"),
        tuple(c for c in given_syn if c) or ((default_syn,) if default_syn else ()),
        _find(path, frame, "", "hidden", ""),
        _find(path, frame, o.parent_column, "parent", "--parent-column"),
        _find(path, frame, o.definition_column, "definition", "--definition-column"),
    )


def _unrecognised(path: Path, frame: pd.DataFrame, no_id: bool, no_label: bool) -> str:
    """Return the sentence for a table whose ID or label column is not known."""
    names = [str(c) for c in frame.columns]
    guess_id = next((c for c in names if re.search(r"id\b", c.casefold())), names[0])
    others = [c for c in names if c != guess_id] or names
    guess_label = next(
        (c for word in ("label", "name", "trait") for c in others if word in c.casefold()),
        others[0],
    )
    missing = " or ".join(repr(r) for r, m in (("id", no_id), ("label", no_label)) if m)
    return (
        f"{path} has no {missing} column (columns found: {', '.join(map(repr, names))}); "
        f"name the columns to read, for example `traits concepts import {path.name} "
        f"--id-column {guess_id!r} --label-column {guess_label!r}` (also --synonyms-column, "
        "--lang-column or --lang, --parent-column, --definition-column), or set them under "
        "[concept_list] in traits.toml."
    )


def _table_concepts(
    path: Path,
    frame: pd.DataFrame,
    cols: _Columns,
    default_lang: str,
    options: ConceptListSettings,
) -> tuple[list[ConceptEntry], list[AliasEntry]]:
    """Return the concepts and aliases of a table's rows, checking each row."""
    fallback = options.lang or default_lang
    concepts: dict[str, dict[str, Any]] = {}
    labels: dict[tuple[str, str], tuple[str, int]] = {}
    aliases: dict[tuple[str, str, str], AliasEntry] = {}
    for line, row in frame.iterrows():
        cell = {name: str(row[name]).strip() for name in frame.columns}
        cid, label = cell[cols.id], cell[cols.label]
        if not cid:
            raise InputError(f"{path}, row {line}: the id is empty; give every concept an ID.")
        if not label:
            raise InputError(f"{path}, row {line}: concept {cid} has no label; add one.")
        lang = _row_language(cell.get(cols.lang or "", ""), fallback, path, int(str(line)))
        seen = labels.get((cid, lang))
        if seen is not None and seen[0] != label:
            raise InputError(
                f"{path}, rows {seen[1]} and {line}: concept {cid} has two labels in {lang} "
                f"({seen[0]!r} and {label!r}); keep one and move the other to synonyms."
            )
        labels[(cid, lang)] = (label, int(str(line)))
        concept = concepts.setdefault(cid, {"parents": [], "definition": None})
        for parent in split_synonyms(cell.get(cols.parent or "", ""), options.split):
            if parent not in concept["parents"]:
                concept["parents"].append(parent)
        concept["definition"] = concept["definition"] or cell.get(cols.definition or "") or None
        forms = [(label, "preferred")]
        for column in cols.synonyms:
            forms += [(s, "alternative") for s in split_synonyms(cell[column], options.split)]
        forms += [(s, "hidden") for s in split_synonyms(cell.get(cols.hidden or "", ""))]
        for text, kind in forms:
            key = (cid, text.casefold(), lang)
            if key not in aliases or kind == "preferred":
                aliases[key] = AliasEntry(cid, text, lang, kind)
    entries = [
        ConceptEntry(
            cid,
            c["parents"][0] if c["parents"] else None,
            c["definition"],
            more_parents=tuple(c["parents"][1:]),
        )
        for cid, c in concepts.items()
    ]
    return entries, list(aliases.values())


def _row_language(raw: str, default_lang: str, path: Path, line: int) -> str:
    """Return the row's language tag, normalised; the default when the cell is empty."""
    raw_lang = raw or default_lang
    try:
        return normalise_tag(raw_lang)
    except InputError as exc:
        raise InputError(
            f"{path}, row {line}: {raw_lang!r} is not a known language tag; use a BCP 47 "
            "tag such as en, fr, es-419 or sw."
        ) from exc
