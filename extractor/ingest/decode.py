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
    """Decode file bytes, deciding the encoding from evidence in the bytes.

    In order: a byte order mark; binary content (refused); UTF-16 without a mark, told
    by its zero bytes; strict UTF-8; then, line by line, UTF-8 where a line is UTF-8
    and Windows-1252 where it is not, but only where the Windows-1252 reading looks like
    Western text (see :func:`_looks_western`). Anything else (Shift-JIS, EUC-KR,
    Cyrillic code pages, damaged files) is refused by name, with the line, rather than
    stored as mojibake: the file says nothing that tells those encodings apart reliably.

    Returns:
        ``(text, encoding, warnings)``; a warning names the lines read as Windows-1252.

    Raises:
        InputError: The file is binary, damaged UTF-16/32, or not UTF-8 nor Windows-1252.
    """
    marked = bom_encoding(data)
    if marked is not None and marked[0] != "utf-8-sig":
        encoding, body = marked
        return _strict(body, encoding, path), encoding, []
    body = data if marked is None else marked[1]
    if _is_binary(body):
        raise InputError(
            f"File '{path.name}' is not text: it holds binary data (zero bytes or control "
            "codes), such as a picture or a program's own format; check that it is the right "
            "file, or export it again as text (UTF-8)."
        )
    utf16 = _utf16_without_mark(body)
    if utf16 is not None:
        return _strict(body, utf16, path), utf16, []
    encoding = "utf-8-sig" if marked is not None else "utf-8"
    try:
        return body.decode("utf-8"), encoding, []
    except UnicodeDecodeError:
        pass
    return _by_line(body, path)


SAVE_AS_UTF8 = (
    "open it and save it as UTF-8 (in Excel: CSV UTF-8; in a text editor: encoding UTF-8)"
)
"""What to do with a file whose encoding cannot be told."""


def _strict(body: bytes, encoding: str, path: Path) -> str:
    """Decode by an encoding the file itself shows, refusing bytes that break it."""
    try:
        return body.decode(encoding)
    except UnicodeDecodeError as err:
        raise InputError(
            f"File '{path.name}' looks like {encoding.upper()} text but is damaged at byte "
            f"{err.start}; {SAVE_AS_UTF8}, and try again."
        ) from err


_CONTROL = frozenset(range(32)) - {9, 10, 12, 13, 26}
"""Bytes of C0 control codes that text files do not hold (tab, line feed, form feed,
carriage return and the DOS end-of-file mark aside)."""


def _is_binary(body: bytes) -> bool:
    """Whether bytes are binary: control codes in more than 1% of the first 8 KB.

    Zero bytes count unless they make the UTF-16 pattern (see :func:`_utf16_without_mark`).
    The 1% share is common practice for telling text from binary.
    """
    head = body[:8192]
    if not head or _utf16_without_mark(head) is not None:
        return False
    controls = sum(1 for byte in head if byte in _CONTROL)
    return controls > len(head) / 100


def _utf16_without_mark(body: bytes) -> str | None:
    """Return ``utf-16-le`` or ``utf-16-be`` when zero bytes show it, else None.

    Text in the Latin scripts, written in UTF-16, has a zero byte in nearly every other
    position (the high byte of each ASCII character): at odd offsets in little-endian,
    at even ones in big-endian. Zero bytes at most of one parity and almost none of the
    other are that pattern; UTF-8 and the single-byte code pages never hold zero bytes.
    """
    half = min(len(body), 8192) // 2
    head = body[: 2 * half]  # a last odd byte (a file cut short) does not count
    if half < 2:
        return None
    even = head[0::2].count(0) / half
    odd = head[1::2].count(0) / half
    if odd > 0.4 and even < 0.1:
        return "utf-16-le"
    if even > 0.4 and odd < 0.1:
        return "utf-16-be"
    return None


def _by_line(body: bytes, path: Path) -> tuple[str, str, list[str]]:
    """Decode line by line: UTF-8 where a line is UTF-8, else Windows-1252 if it reads so."""
    lines = body.split(b"\n")
    texts: list[str] = []
    fallback: list[int] = []
    for number, line in enumerate(lines, start=1):
        try:
            texts.append(line.decode("utf-8"))
            continue
        except UnicodeDecodeError:
            pass
        try:
            text = line.decode("cp1252")
        except UnicodeDecodeError:
            text = None
        if text is None or not _looks_western(text):
            raise InputError(
                f"File '{path.name}', line {number}: the text is neither UTF-8 nor "
                f"Windows-1252 (it may be Shift-JIS, a Cyrillic code page or damaged); "
                f"{SAVE_AS_UTF8}, and try again."
            )
        texts.append(text)
        fallback.append(number)
    mixed = any(not line.isascii() for n, line in enumerate(lines, 1) if n not in fallback)
    which = (
        f"line {fallback[0]} is"
        if len(fallback) == 1
        else (f"lines {', '.join(map(str, fallback[:8]))}{' ...' if len(fallback) > 8 else ''} are")
    )
    warning = (
        f"File '{path.name}': {which} not UTF-8 and {'was' if len(fallback) == 1 else 'were'} "
        "read as Windows-1252 (cp1252); check the accented letters there, or save the file "
        "as UTF-8."
    )
    return "\n".join(texts), "utf-8, cp1252" if mixed else "cp1252", [warning]


def _looks_western(text: str) -> bool:
    """Whether a line read as Windows-1252 looks like text in a Latin-script language.

    Such text has its non-ASCII letters (accents, curly quotes, dashes) one or two at a
    time between ASCII letters. Text in a double-byte encoding (Shift-JIS, GBK, EUC-KR)
    or a Cyrillic or Greek code page read as Windows-1252 turns into runs of three or
    more non-ASCII characters, nearly every character of a word.
    """
    run = 0
    for char in text:
        if char.isascii():
            run = 0
            continue
        run += 1
        if run >= 3:
            return False
    return True


def sniff_delimiter(text: str) -> str:
    """Choose among :data:`DELIMITERS` the one giving a multi-column, consistently wide header.

    Unlike ``csv.Sniffer``, which gives up on tables whose quoted text holds the
    delimiter, this always answers (a comma when nothing splits the header).
    """
    best, best_score = ",", (False, -1, -1)
    for delimiter in DELIMITERS:
        try:
            records = list(itertools.islice(csv.reader(io.StringIO(text, newline=""),
                                                       delimiter=delimiter), 50))  # fmt: skip
        except csv.Error:  # e.g. a cell over the field limit; the reader words it
            continue
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
