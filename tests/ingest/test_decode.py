"""File bytes to text (extractor.ingest.decode): encodings, delimiters, Office archives.

Outside references: Python's codecs write the bytes of each encoding (Windows-1252 and
ISO 8859-1 code pages), Python's ``csv.Sniffer`` is the reference delimiter guess, and
the file signatures come from [MS-CFB] (OLE compound files) and PKWARE's APPNOTE (zip).
"""

from __future__ import annotations

import codecs
import csv
import io
import zipfile
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.decode import check_office_archive, decode_text, sniff_delimiter
from tests.ingest.interview_files import (
    EN_1,
    ES_1,
    read,
)


@pytest.mark.parametrize(
    ("encoding", "expected_encoding", "warns"),
    [("utf-8", "utf-8", False), ("utf-8-sig", "utf-8-sig", False), ("cp1252", "cp1252", True)],
    ids=["utf8", "utf8-bom", "cp1252"],
)
def test_read_csv_decodes_encodings(
    tmp_path: Path, encoding: str, expected_encoding: str, warns: bool
) -> None:
    # Windows-1252 encodes "é" as 0xE9 and "’" as 0x92 (code page table, from memory);
    # Python's codec writes the bytes, and the reader must give the same text back.
    answer = "La variété de Minde n’est pas sucrée, mais elle résiste bien à la sécheresse."
    path = tmp_path / "survey.csv"
    path.write_bytes(f'Répondant,Réponse\nR1,"{answer}"\n'.encode(encoding))
    if encoding == "cp1252":
        assert b"\xe9" in path.read_bytes() and b"\x92" in path.read_bytes()
    if encoding == "utf-8-sig":
        assert path.read_bytes().startswith(b"\xef\xbb\xbf")  # the Unicode UTF-8 BOM
    result = read(path)
    assert result.encoding == expected_encoding
    assert result.rows[0].answer == answer
    assert result.rows[0].respondent == "R1"
    assert any("cp1252" in w for w in result.warnings) == warns


def test_read_csv_refuses_bytes_windows_1252_lacks_naming_the_line(tmp_path: Path) -> None:
    # 0x81 is unassigned in Windows-1252 and a C1 control code in ISO 8859-1 (from memory):
    # no text holds it, so reading the file as Latin-1 would store a control code.
    path = tmp_path / "survey.csv"
    path.write_bytes(b"Respondent,Answer\nR1,caf\xe9 \x81 " + EN_1.encode() + b"\n")
    with pytest.raises(InputError, match=r"'survey.csv', line 2: .* save it as UTF-8"):
        read(path)


def test_read_csv_sniffs_semicolon(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_text(f"Encuestado;Sexo;Respuesta\nE-01;mujer;{ES_1}\n", encoding="utf-8")
    row = read(path).rows[0]
    assert (row.respondent, row.answer, row.metadata) == ("E-01", ES_1, {"sexo": "mujer"})
    assert (row.lang, row.lang_origin) == ("es", "detected")


def test_read_tsv_splits_on_tabs(tmp_path: Path) -> None:
    path = tmp_path / "survey.tsv"
    answer = "Too small, too hard; we sell it cheaply"
    path.write_text(f"participant\tverbatim\nP1\t{answer}\n", encoding="utf-8")
    result = read(path)
    assert result.kind == "tsv"
    assert [(r.respondent, r.answer) for r in result.rows] == [("P1", answer)]


# Encrypted Office files are OLE compound files; the header signature
# D0 CF 11 E0 A1 B1 1A E1 is from [MS-CFB] section 2.2 (from memory).
OLE_HEADER = bytes.fromhex("d0cf11e0a1b11ae1") + b"\x00" * 504


@pytest.mark.parametrize("suffix", [".docx", ".xlsx"], ids=["docx", "xlsx"])
def test_read_encrypted_office_file_says_password_protected(tmp_path: Path, suffix: str) -> None:
    path = tmp_path / f"locked{suffix}"
    path.write_bytes(OLE_HEADER)
    with pytest.raises(InputError, match=rf"'locked\{suffix}' is password-protected"):
        read(path)


# Plain fields: Python's csv.Sniffer gives up on tables whose quoted text holds the
# delimiter, so the agreement is checked where the reference gives an answer.
SNIFF_ROWS = [
    ["Respondent", "Gender", "Answer"],
    ["R1", "female", "It cooks fast and the porridge is sweet."],
    ["R2", "male", "Too small. The birds eat it before harvest."],
    ["R3", "female", "We sell it at Lowa market"],
]


@pytest.mark.parametrize("delimiter", [",", ";"], ids=["comma", "semicolon"])
def test_sniff_delimiter_agrees_with_python_csv_sniffer(delimiter: str) -> None:
    buffer = io.StringIO()
    csv.writer(buffer, delimiter=delimiter).writerows(SNIFF_ROWS)
    text = buffer.getvalue()
    reference = csv.Sniffer().sniff(text, delimiters=",;").delimiter
    assert sniff_delimiter(text) == reference == delimiter


@pytest.mark.parametrize(
    ("encoding", "warns"),
    [("utf-8", False), ("cp1252", True)],
    ids=["utf8", "cp1252"],
)
def test_decode_text_gives_back_what_python_codecs_encoded(encoding: str, warns: bool) -> None:
    text = "Réponse: la variété résiste à la sécheresse – et se vend bien."
    decoded, used, warnings = decode_text(text.encode(encoding), Path("survey.csv"))
    assert (decoded, used, bool(warnings)) == (text, encoding, warns)


def test_decode_text_drops_the_utf8_byte_order_mark() -> None:
    # Python's "utf-8-sig" codec writes the BOM EF BB BF (Unicode section 23.8).
    decoded, used, _ = decode_text("Répondant".encode("utf-8-sig"), Path("survey.csv"))
    assert (decoded, used) == ("Répondant", "utf-8-sig")


def test_check_office_archive_accepts_a_zip_archive(tmp_path: Path) -> None:
    # PKWARE APPNOTE 4.3.7: a zip starts with the local file header signature 0x04034b50,
    # written little-endian as "PK\x03\x04"; Python's zipfile writes a real one here.
    path = tmp_path / "book.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
    data = path.read_bytes()
    assert data[:4] == (0x04034B50).to_bytes(4, "little")
    check_office_archive(path, data, "spreadsheet programme")


def test_check_office_archive_tells_a_non_archive_by_bad_zip(tmp_path: Path) -> None:
    with pytest.raises(zipfile.BadZipFile):
        check_office_archive(tmp_path / "book.xlsx", b"Respondent,Answer\n", "spreadsheet")


# Excel's "Unicode text" export is UTF-16 little-endian with a byte order mark, and tab
# separated. The BOM bytes are Python's codecs.BOM_UTF16_LE / BOM_UTF16_BE / BOM_UTF8,
# the signatures the Unicode FAQ "UTF-8, UTF-16, UTF-32 & BOM" lists for each encoding.
@pytest.mark.parametrize(
    ("bom", "codec"),
    [
        (codecs.BOM_UTF16_LE, "utf-16-le"),
        (codecs.BOM_UTF16_BE, "utf-16-be"),
        (codecs.BOM_UTF8, "utf-8"),
    ],
    ids=["utf16-le", "utf16-be", "utf8"],
)
def test_read_csv_with_a_byte_order_mark_decodes_by_it(
    tmp_path: Path, bom: bytes, codec: str
) -> None:
    answer = "La variété de Minde résiste bien à la sécheresse, et se vend vite."
    path = tmp_path / "unicode_text.csv"
    path.write_bytes(bom + f"Répondant\tRéponse\r\nR1\t{answer}\r\n".encode(codec))
    result = read(path)
    assert [(r.respondent, r.answer) for r in result.rows] == [("R1", answer)]
    assert result.warnings == []


@pytest.mark.parametrize(
    ("data", "expected"),
    [
        (codecs.BOM_UTF16_LE + "Répondant".encode("utf-16-le"), ("Répondant", "utf-16-le")),
        (codecs.BOM_UTF16_BE + "Répondant".encode("utf-16-be"), ("Répondant", "utf-16-be")),
        ("Répondant".encode("utf-16"), ("Répondant", "utf-16-le")),  # Python writes LE + BOM
    ],
    ids=["le", "be", "python-utf16"],
)
def test_decode_text_follows_a_utf16_byte_order_mark(
    data: bytes, expected: tuple[str, str]
) -> None:
    if data.startswith(codecs.BOM_UTF16_BE):
        assert data[:2] == b"\xfe\xff"  # the Unicode FAQ's UTF-16 BE signature
    decoded, used, warnings = decode_text(data, Path("survey.csv"))
    assert (decoded, used, warnings) == (*expected, [])


@pytest.mark.parametrize(
    "delimiter", [",", ";", "\t", "|"], ids=["comma", "semicolon", "tab", "pipe"]
)
def test_sniff_delimiter_agrees_with_python_csv_sniffer_on_all_four(delimiter: str) -> None:
    buffer = io.StringIO()
    csv.writer(buffer, delimiter=delimiter).writerows(SNIFF_ROWS)
    text = buffer.getvalue()
    # Python's csv.Sniffer, restricted to the same four candidates, is the reference.
    reference = csv.Sniffer().sniff(text, delimiters=",;\t|").delimiter
    assert sniff_delimiter(text) == reference == delimiter


@pytest.mark.parametrize("delimiter", ["\t", "|"], ids=["tab", "pipe"])
def test_read_csv_with_tab_or_pipe_delimiters_splits_columns(
    tmp_path: Path, delimiter: str
) -> None:
    # Answers hold commas and semicolons, which must stay inside the answer cell.
    answer = "Too small, too hard; we sell it cheaply at Lowa market"
    path = tmp_path / "survey.csv"
    rows = [["Respondent", "Gender", "Answer"], ["R1", "female", answer]]
    path.write_text("\n".join(delimiter.join(r) for r in rows) + "\n", encoding="utf-8")
    row = read(path).rows[0]
    assert (row.respondent, row.answer, row.metadata) == ("R1", answer, {"gender": "female"})


# The encoding evidence (issue 18, item 10): Python's codecs write each file, so the
# bytes are what those encodings are, and the reader must give the text back or refuse.
LINES = ["Respondent: R1", "", "Farmer: Ça cuit très vite.", "Farmer: Não gosto – é duro."]


@pytest.mark.parametrize("encoding", ["utf-16-le", "utf-16-be"])
def test_decode_text_reads_utf16_without_a_byte_order_mark(encoding: str) -> None:
    text = "\n".join(LINES) + "\n"
    decoded, used, warnings = decode_text(text.encode(encoding), Path("notes.txt"))
    assert (decoded, used, warnings) == (text, encoding, [])


def test_decode_text_reads_mixed_utf8_and_cp1252_line_by_line() -> None:
    data = b"\n".join([LINES[0].encode(), b"", LINES[2].encode("utf-8"), LINES[3].encode("cp1252")])
    decoded, used, warnings = decode_text(data, Path("notes.txt"))
    assert decoded.split("\n") == LINES
    assert used == "utf-8, cp1252"
    assert warnings == [
        "File 'notes.txt': line 4 is not UTF-8 and was read as Windows-1252 (cp1252); "
        "check the accented letters there, or save the file as UTF-8."
    ]


@pytest.mark.parametrize(
    ("encoding", "line"),
    [("shift_jis", 2), ("euc-kr", 2), ("gbk", 2), ("cp1251", 2)],
    ids=["shift-jis", "euc-kr", "gbk", "cyrillic-cp1251"],
)
def test_decode_text_refuses_other_encodings_naming_the_line(encoding: str, line: int) -> None:
    answers = {
        "shift_jis": "この豆は早く煮えるので好きです。",
        "euc-kr": "이 콩은 빨리 익어요.",
        "gbk": "这个豆子煮得很快。",
        "cp1251": "Эти бобы быстро варятся.",
    }
    data = f"Respondent: R1\nFarmer: {answers[encoding]}\n".encode(encoding)
    with pytest.raises(InputError, match=rf"'notes.txt', line {line}: .*save it as UTF-8"):
        decode_text(data, Path("notes.txt"))


@pytest.mark.parametrize(
    "data",
    [
        bytes(range(256)) * 8,
        b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(200),
        b"a,b\n\x00\x01\x02",
    ],
    ids=["random", "png", "nul-bytes"],
)
def test_decode_text_refuses_binary(data: bytes) -> None:
    with pytest.raises(InputError, match=r"File 'notes.txt' is not text"):
        decode_text(data, Path("notes.txt"))


def test_decode_text_refuses_a_cut_utf16_file() -> None:
    data = "respondent,answer\n".encode("utf-16-le") + b"\x00"
    with pytest.raises(InputError, match=r"UTF-16-LE text but is damaged at byte 36"):
        decode_text(data, Path("notes.txt"))


def test_read_utf16_csv_without_a_mark_finds_its_columns(tmp_path: Path) -> None:
    path = tmp_path / "survey.csv"
    path.write_bytes(f"respondent,answer\nR1,{EN_1}\n".encode("utf-16-le"))
    result = read(path)
    assert [(r.respondent, r.answer) for r in result.rows] == [("R1", EN_1)]
