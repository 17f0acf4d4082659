"""File bytes to text: encodings, CSV delimiters and Office archives.

Shared by the interview readers (:mod:`extractor.ingest.tables`,
:mod:`extractor.ingest.transcripts`) and the concept-list reader
(:mod:`extractor.ingest.concepts`), so every file kind is decoded the same way. It also
holds the formula guard of CSV cells (:data:`FORMULA_TRIGGERS`): the exports add it and
the concept-list reader takes it off again, so both sides share one definition.
"""

from __future__ import annotations

import codecs
import csv
import io
import itertools
import zipfile
from pathlib import Path

from extractor.errors import InputError

OLE_MAGIC = b"\xd0\xcf\x11\xe0"
"""First bytes of an OLE compound file: how Office stores password-protected files."""

ZIP_MAGIC = b"PK\x03\x04"
"""First bytes of a zip archive, which .xlsx and .docx files are."""

BYTE_ORDER_MARKS = (
    (codecs.BOM_UTF32_LE, "utf-32-le"),
    (codecs.BOM_UTF32_BE, "utf-32-be"),
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16-le"),
    (codecs.BOM_UTF16_BE, "utf-16-be"),
)
"""Byte order marks and the encoding each announces, as the Unicode FAQ "UTF-8, UTF-16,
UTF-32 & BOM" tabulates them. UTF-32 LE comes first because its mark begins with UTF-16
LE's. Excel's "Unicode text" export is UTF-16 LE with a mark."""

FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
"""First characters that make a spreadsheet read a text cell as a formula (OWASP, "CSV
Injection"); exports put :data:`FORMULA_GUARD` before such a cell."""

FORMULA_GUARD = "'"
"""The single quote OWASP's "CSV Injection" guidance puts before a formula-like cell."""

DELIMITERS = (",", ";", "\t", "|")
"""The CSV delimiters :func:`sniff_delimiter` chooses among (ties go to the earlier one)."""


def bom_encoding(data: bytes) -> tuple[str, bytes] | None:
    """Return the encoding a byte order mark announces and the bytes after it, if any."""
    for bom, encoding in BYTE_ORDER_MARKS:
        if data.startswith(bom):
            return encoding, data[len(bom) :]
    return None


def decode_text(data: bytes, path: Path) -> tuple[str, str, list[str]]:
    """Decode file bytes: by their byte order mark, else UTF-8, else cp1252, else latin-1.

    Returns:
        ``(text, encoding, warnings)``; a warning names the fallback encoding used.
    """
    marked = bom_encoding(data)
    if marked is not None:
        encoding, body = marked
        codec = "utf-8" if encoding == "utf-8-sig" else encoding
        return body.decode(codec, errors="replace"), encoding, []
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


def sniff_delimiter(text: str) -> str:
    """Choose among :data:`DELIMITERS` the one giving a multi-column, consistently wide header.

    Unlike ``csv.Sniffer``, which gives up on tables whose quoted text holds the
    delimiter, this always answers (a comma when nothing splits the header).
    """
    best, best_score = ",", (False, -1, -1)
    for delimiter in DELIMITERS:
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


def strip_formula_guard(cell: str) -> str:
    """Undo the quote an export put before a formula-like cell, so a list re-imports as it was.

    Only a quote followed by one of :data:`FORMULA_TRIGGERS` is dropped: that is exactly
    what the exports add, and a label never needs it.
    """
    if cell.startswith(FORMULA_GUARD) and cell[1:2] and cell[1] in FORMULA_TRIGGERS:
        return cell[1:]
    return cell


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
