"""Loading and validating a concept list (traits or varieties) from CSV, TSV or a workbook.

A concept list has the columns ``id, label, lang, synonyms, parent, definition``
(``lang``, ``synonyms``, ``parent``, ``definition`` optional; an optional ``hidden``
column holds hidden labels such as common misspellings, as in SKOS). There may be
several rows per concept, one per language. Synonyms are separated by ``|`` or ``;``.

The label of a row becomes the concept's preferred alias in that language, synonyms
become alternative aliases, hidden labels hidden aliases (SKOS prefLabel, altLabel,
hiddenLabel).
"""

from __future__ import annotations

import hashlib
import io
import re
import zipfile
from collections import defaultdict
from collections.abc import Iterable
from pathlib import Path
from typing import Any, NamedTuple

import pandas as pd

from extractor.errors import InputError
from extractor.ingest.decode import (
    check_office_archive,
    decode_text,
    sniff_delimiter,
    strip_formula_guard,
)
from extractor.ingest.language import normalise_tag
from extractor.ingest.sheets import WORKBOOK_SUFFIXES, read_sheets
from extractor.types import AliasEntry, ConceptEntry

REQUIRED = ("id", "label")
OPTIONAL = ("lang", "synonyms", "hidden", "parent", "definition")
_SPLIT = re.compile(r"\s*[|;]\s*")


class ConceptList(NamedTuple):
    """A validated concept list, ready for the store."""

    concepts: list[ConceptEntry]
    aliases: list[AliasEntry]
    sha256: str
    warnings: list[str]


def file_sha256(path: Path) -> str:
    """Return the SHA-256 of a file's bytes."""
    digest = hashlib.sha256()
    with path.open("rb") as handle:
        for block in iter(lambda: handle.read(1 << 16), b""):
            digest.update(block)
    return digest.hexdigest()


def read_table(path: Path) -> pd.DataFrame:
    """Read a CSV or TSV file, or the first sheet of an XLSX, XLS or ODS workbook, as strings.

    Text files are decoded as the interview readers decode them (by their byte order
    mark, else UTF-8, then cp1252 or latin-1), with the same delimiter choice; workbooks
    are read as the interview readers read them (:mod:`extractor.ingest.sheets`).
    """
    if not path.exists():
        raise InputError(f"{path} does not exist; check the path.")
    suffix = path.suffix.lower()
    if suffix not in (".csv", ".tsv", *WORKBOOK_SUFFIXES):
        raise InputError(
            f"{path} has suffix {suffix!r}; a concept list must be .csv, .tsv, .xlsx, .xls or .ods."
        )
    data = path.read_bytes()
    if not data.strip():
        raise InputError(f"{path} is empty; give a file with a header row and concepts.")
    try:
        if suffix == ".xlsx":
            check_office_archive(path, data, "spreadsheet programme")
            return pd.read_excel(io.BytesIO(data), dtype=str, keep_default_na=False)
        if suffix in WORKBOOK_SUFFIXES:
            return _first_sheet(path, data)
        text, _, _ = decode_text(data, path)
        sep = "\t" if suffix == ".tsv" else sniff_delimiter(text)
        return pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False, sep=sep)
    except pd.errors.EmptyDataError as exc:
        raise InputError(f"{path} is empty; give a file with a header row and concepts.") from exc
    except (zipfile.BadZipFile, ValueError, OSError, KeyError) as exc:
        raise InputError(
            f"{path} could not be read as a {suffix} table ({exc}); save it again as CSV or XLSX."
        ) from exc


def _first_sheet(path: Path, data: bytes) -> pd.DataFrame:
    """Return the first sheet of an .xls or .ods workbook: its first row is the header."""
    sheets = read_sheets(path, data)
    grid = sheets[0].grid if sheets else []
    if not grid:
        raise pd.errors.EmptyDataError("the first sheet has no filled cells")
    (_, header), body = grid[0], [cells for _, cells in grid[1:]]
    width = max(len(header), *(len(cells) for cells in body)) if body else len(header)
    columns = [str(h or "").strip() or f"column_{i + 1}" for i, h in enumerate(header)]
    columns += [f"column_{i + 1}" for i in range(len(columns), width)]
    rows = [[c or "" for c in cells] + [""] * (width - len(cells)) for cells in body]
    return pd.DataFrame(rows, columns=columns, dtype=str)


def split_synonyms(cell: str) -> list[str]:
    """Split a synonyms cell on ``|`` or ``;`` and drop empty parts."""
    return [part.strip() for part in _SPLIT.split(cell or "") if part.strip()]


def load_concept_list(path: Path, *, default_lang: str = "en") -> ConceptList:
    """Read and validate a concept list.

    Raises:
        InputError: a required column is missing, an ID is empty, one ID has two
            different labels in one language, or a language tag is unknown.
    """
    # The concept export quotes formula-like cells for spreadsheets; drop that quote.
    frame = read_table(path).map(strip_formula_guard)
    frame.columns = [str(c).strip().lower() for c in frame.columns]
    missing = [c for c in REQUIRED if c not in frame.columns]
    if missing:
        raise InputError(
            f"{path} has no {' or '.join(repr(c) for c in missing)} column; a concept list "
            f"needs the columns id, label (and optionally {', '.join(OPTIONAL)}); "
            f"found {', '.join(map(repr, frame.columns))}."
        )
    if frame.empty:
        raise InputError(f"{path} has a header but no concepts; add one row per concept.")

    concepts: dict[str, dict[str, Any]] = {}
    labels: dict[tuple[str, str], tuple[str, int]] = {}
    aliases: dict[tuple[str, str, str], AliasEntry] = {}
    for index, row in frame.iterrows():
        line = int(str(index)) + 2  # the header is row 1, as a spreadsheet user counts
        cid = str(row["id"]).strip()
        label = str(row["label"]).strip()
        if not cid:
            raise InputError(f"{path}, row {line}: the id is empty; give every concept an ID.")
        if not label:
            raise InputError(f"{path}, row {line}: concept {cid} has no label; add one.")
        lang = _row_language(row, default_lang, path, line)
        seen = labels.get((cid, lang))
        if seen is not None and seen[0] != label:
            raise InputError(
                f"{path}, rows {seen[1]} and {line}: concept {cid} has two labels in {lang} "
                f"({seen[0]!r} and {label!r}); keep one and move the other to synonyms."
            )
        labels[(cid, lang)] = (label, line)
        concept = concepts.setdefault(cid, {"id": cid, "parent": None, "definition": None})
        for column in ("parent", "definition"):
            value = str(row.get(column, "") or "").strip()
            if value and not concept[column]:
                concept[column] = value
        for text, kind in _row_forms(row, label):
            key = (cid, text.casefold(), lang)
            if key not in aliases or kind == "preferred":
                aliases[key] = AliasEntry(cid, text, lang, kind)

    warnings = _shared_alias_warnings(path, aliases.values())
    warnings += [
        f"{path}: concept {c['id']} names parent {c['parent']}, which is not in the list."
        for c in concepts.values()
        if c["parent"] and c["parent"] not in concepts
    ]
    entries = [ConceptEntry(c["id"], c["parent"], c["definition"]) for c in concepts.values()]
    return ConceptList(entries, list(aliases.values()), file_sha256(path), warnings)


def _row_language(row: pd.Series, default_lang: str, path: Path, line: int) -> str:
    """Return the row's language tag, normalised; the default when the cell is empty."""
    raw_lang = str(row.get("lang", "") or "").strip() or default_lang
    try:
        return normalise_tag(raw_lang)
    except InputError as exc:
        raise InputError(
            f"{path}, row {line}: {raw_lang!r} is not a known language tag; use a BCP 47 "
            "tag such as en, fr, es-419 or sw."
        ) from exc


def _row_forms(row: pd.Series, label: str) -> list[tuple[str, str]]:
    """Return the row's written forms with their SKOS kind: preferred, alternative, hidden."""
    forms = [(label, "preferred")]
    forms += [(s, "alternative") for s in split_synonyms(str(row.get("synonyms", "") or ""))]
    forms += [(s, "hidden") for s in split_synonyms(str(row.get("hidden", "") or ""))]
    return forms


def _shared_alias_warnings(path: Path, aliases: Iterable[AliasEntry]) -> list[str]:
    """Warn about alias texts that two different concepts share in one language."""
    owners: dict[tuple[str, str], set[str]] = defaultdict(set)
    for alias in aliases:
        owners[(alias.text.casefold(), alias.lang)].add(alias.concept_id)
    return [
        f"{path}: {text!r} ({lang}) is a synonym of {', '.join(sorted(ids))}; the dictionary "
        "will not link it to either until a label decides."
        for (text, lang), ids in sorted(owners.items())
        if len(ids) > 1
    ]
