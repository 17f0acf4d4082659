"""File bytes to text: encodings, CSV delimiters and Office archives.

Shared by the interview readers (:mod:`extractor.ingest.tables`,
:mod:`extractor.ingest.transcripts`) and the concept-list reader
(:mod:`extractor.ingest.concepts`), so every file kind is decoded the same way.
"""

from __future__ import annotations

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
