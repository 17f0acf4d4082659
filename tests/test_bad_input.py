"""Bad input over every command that reads a file: one sentence, non-zero exit, store unchanged.

Each case gives one command a broken file (an interview file, a concept list, a label
file, ``traits.toml``, the store, a model folder, the labeling screen's pipe) or a
broken disk, and checks what the project's rules promise for every bad input: the
command exits non-zero, prints no traceback, prints one ``error:`` line naming the
place (the file, row, setting or model version), and leaves the store exactly as it
was (its SQL dump is identical before and after).

The workspace is the invented study of ``tests/jobs/study.py``, run once for the module
(interviews, concept list, one model version); each case works on a copy of it.
"""

from __future__ import annotations

import codecs
import errno
import hashlib
import io
import os
import shutil
import sqlite3
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

import pytest
from rich.console import Console

from extractor.cli.main import main
from extractor.nlp import clusters
from extractor.workspace.store import _schema
from tests.ingest.interview_files import write_docx, write_xlsx
from tests.jobs.study import make_study

GOOD_CSV = "respondent,answer\nR1,It cooks fast.\nR2,The grains are small.\n"
RANDOM = bytes(range(256)) * 8  # 2 KB of every byte value: binary, not text
JAPANESE = "Respondent: R1\n\nFarmer: この豆は早く煮えるので好きです。味も良いです。\n"


def run(argv: list[str]) -> tuple[int, str]:
    """Run the command in-process with a captured console; return (exit code, output)."""
    buffer = io.StringIO()
    code = main(argv, console=Console(file=buffer, width=120, force_terminal=False))
    return code, buffer.getvalue()


def snapshot(root: Path) -> list[str] | str:
    """The store's SQL dump, or the digest of its bytes when it cannot be read."""
    path = root / "traits.sqlite"
    try:
        conn = sqlite3.connect(path)
        try:
            return list(conn.iterdump())
        finally:
            conn.close()
    except sqlite3.DatabaseError:
        return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture(scope="module")
def base(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The study after `traits run`: interviews, concept list and one model version."""
    root = make_study(tmp_path_factory.mktemp("bad") / "study")
    code, out = run(["run", "-w", str(root)])
    assert code == 0, out
    return root


@pytest.fixture
def ws(base: Path, tmp_path: Path) -> Path:
    """A copy of the study for one case."""
    return Path(shutil.copytree(base, tmp_path / "ws"))


# --------------------------------------------------------------------------- the cases

Case = Callable[[Path, Path, pytest.MonkeyPatch], tuple[list[str], str]]
"""Given the workspace, a scratch folder and monkeypatch: the argv and the place to name."""

CASES: dict[str, Case] = {}


def case(name: str) -> Callable[[Case], Case]:
    def register(make: Case) -> Case:
        CASES[name] = make
        return make

    return register


def put(folder: Path, name: str, data: bytes | str) -> Path:
    path = folder / name
    path.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
    return path


def add_case(name: str, file_name: str, data: bytes | str, place: str = "") -> None:
    """Register `traits add` of one file whose message must name ``place`` (the file)."""

    @case(name)
    def make(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
        path = put(tmp, file_name, data)
        return ["add", "-w", str(ws), str(path)], place or file_name


# add: delimited tables
add_case("csv-1mb-cell", "big.csv", 'respondent,answer\nR1,"' + "beans " * 180_000 + '"\n')
add_case("tsv-1mb-cell", "big.tsv", "respondent\tanswer\nR1\t" + "beans " * 180_000 + "\n")
add_case("csv-random-bytes", "noise.csv", RANDOM)
add_case("tsv-random-bytes", "noise.tsv", RANDOM)
add_case("csv-nul-bytes", "nul.csv", GOOD_CSV.encode() + b"\x00" * 64 + b"R3,more\n")
add_case(
    "csv-shift-jis", "sjis.csv", "respondent,answer\nR1,この豆は早く煮える。\n".encode("shift_jis")
)
add_case(
    "csv-unclosed-quote",
    "quote.csv",
    'respondent,answer\nR1,"It cooks fast.\nR2,The grains are small.\nR3,Good yield.\n',
    "row 2",
)
add_case("csv-empty", "empty.csv", "")
add_case("csv-bom-only", "bom.csv", codecs.BOM_UTF8)
add_case("csv-no-answer-column", "cols.csv", "respondent,age\nR1,34\nR2,51\n")
add_case(
    "csv-answer-without-respondent",
    "norespondent.csv",
    "respondent,answer\nR1,It cooks fast.\n,The grains are small.\n",
    "row 3",
)
add_case(
    "csv-bad-language",
    "lang.csv",
    "respondent,language,answer\nR1,klingon!!,It cooks fast.\n",
    "row 2",
)
add_case("csv-utf16-odd-bytes", "odd16.csv", "respondent,answer\n".encode("utf-16-le") + b"\x00")
add_case("csv-bracket-name", "survey [round 2].csv", "respondent,age\nR1,34\n")
# add: transcripts
add_case("txt-random-bytes", "noise.txt", RANDOM)
add_case("txt-shift-jis", "sjis.txt", JAPANESE.encode("shift_jis"))
add_case(
    "txt-euc-kr", "euckr.txt", "Respondent: R1\n\nFarmer: 이 콩은 빨리 익어요.\n".encode("euc-kr")
)
add_case("txt-empty", "empty.txt", "\n\n  \n")
add_case(
    "txt-bad-language",
    "lang.txt",
    "Respondent: R1\nLanguage: klingon!!\n\nFarmer: It cooks fast.\n",
    "line 2",
)
add_case("txt-png", "picture.txt", b"\x89PNG\r\n\x1a\n" + RANDOM)
add_case("docx-not-zip", "notes.docx", GOOD_CSV)
add_case("docx-encrypted", "locked.docx", b"\xd0\xcf\x11\xe0" + bytes(600))
add_case("docx-truncated-zip", "cut.docx", b"PK\x03\x04" + RANDOM[:300])
# add: workbooks
add_case("xlsx-not-zip", "sheet.xlsx", GOOD_CSV)
add_case("xlsx-encrypted", "locked.xlsx", b"\xd0\xcf\x11\xe0" + bytes(600))
add_case("xlsx-truncated-zip", "cut.xlsx", b"PK\x03\x04" + RANDOM[:300])
add_case("xls-random", "old.xls", b"\xd0\xcf\x11\xe0" + RANDOM)
add_case("ods-random", "calc.ods", RANDOM)
# add: paths
add_case("pdf-suffix", "report.pdf", "%PDF-1.4\n")
add_case("no-suffix", "README", GOOD_CSV)


@case("xlsx-formula-without-value")
def _formula(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    # openpyxl writes formulas without a computed value, as scripts do
    path = write_xlsx(
        tmp / "scripted.xlsx",
        {
            "Answers": [
                ["respondent", "answer"],
                ["R1", "It cooks fast."],
                ["R2", '=CONCAT("Good ", "yield")'],
            ]
        },
    )
    return ["add", "-w", str(ws), str(path)], "B3"


@case("xlsx-no-such-sheet")
def _sheet(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = write_xlsx(tmp / "ok.xlsx", {"Answers": [["respondent", "answer"], ["R1", "Fast."]]})
    return ["add", "-w", str(ws), str(path), "--sheet", "Round 9"], "Round 9"


@case("xls-that-is-xlsx")
def _xls(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = write_xlsx(tmp / "renamed.xls", {"A": [["respondent", "answer"], ["R1", "Fast."]]})
    return ["add", "-w", str(ws), str(path)], "renamed.xls"


@case("docx-with-bad-language")
def _docx(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = write_docx(tmp / "lang.docx", ["Respondent: R1", "Language: xx-!!", "", "Farmer: Ok."])
    return ["add", "-w", str(ws), str(path)], "lang.docx"


@case("missing-file")
def _missing(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    return ["add", "-w", str(ws), str(tmp / "nowhere.csv")], "nowhere.csv"


@case("missing-file-markup-name")
def _markup(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    return ["add", "-w", str(ws), "x[/]y.csv"], "x[/]y.csv"


@case("folder-not-file")
def _folder(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    (tmp / "round [2]").mkdir()
    return ["add", "-w", str(ws), str(tmp / "round [2]")], "round [2]"


@case("one-bad-file-of-two")
def _two(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    good = put(tmp, "good.csv", "respondent,answer\nR7,It cooks fast.\n")
    bad = put(tmp, "bad.txt", RANDOM)
    return ["add", "-w", str(ws), str(good), str(bad)], "bad.txt"


# concepts import
def concepts_case(name: str, file_name: str, data: bytes | str, place: str = "") -> None:
    @case(name)
    def make(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
        path = put(tmp, file_name, data)
        return ["concepts", "import", "-w", str(ws), str(path)], place or file_name


concepts_case("concepts-random-bytes", "list.csv", RANDOM)
concepts_case(
    "concepts-shift-jis", "list.csv", "id,label,lang\nBTX:0100,煮える時間,ja\n".encode("shift_jis")
)
concepts_case("concepts-empty", "list.csv", "")
concepts_case("concepts-no-id-column", "list.csv", "label,lang\ncooking time,en\n")
concepts_case("concepts-xlsx-not-zip", "list.xlsx", "id,label\nBTX:1,taste\n")
concepts_case("concepts-unknown-suffix", "list.pdf", "%PDF-1.4\n")
concepts_case(
    "concepts-longer-row", "list.csv", "id,label,lang\nBTX:0100,taste,en,extra\n", "row 2"
)
concepts_case("concepts-duplicate-header", "list.csv", "label,label,id\nnan,es-419,yes,\n", "label")
concepts_case("concepts-utf16-cut", "list.csv", "id,label\n".encode("utf-16-le") + b"\x00")


@case("concepts-missing")
def _concepts_missing(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    return ["concepts", "import", "-w", str(ws), str(tmp / "absent.csv")], "absent.csv"


# import-labels
def labels_case(name: str, file_name: str, data: bytes | str, place: str = "") -> None:
    @case(name)
    def make(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
        path = put(tmp, file_name, data)
        return ["import-labels", "-w", str(ws), str(path)], place or file_name


LABEL = (
    '{"respondent": "KA-01", "sentence": "It cooks fast and the broth is thick.", "lang": "en", '
    '"mentions": [{"start": 3, "end": 13, "concept": "%s", "stance": "liked"}]%s}\n'
)
labels_case("labels-random-bytes", "gold.jsonl", RANDOM)
labels_case(
    "labels-shift-jis",
    "gold.jsonl",
    '{"sentence": "この豆は早く煮える。", "lang": "ja", "mentions": []}\n'.encode("shift_jis"),
)
labels_case(
    "labels-bad-json", "gold.jsonl", LABEL % ("BTX:0001", "") + '{"sentence": "Oo', "line 2"
)
labels_case("labels-old-format", "gold.jsonl", '{"text": "It cooks fast.", "spans": []}\n')
labels_case("labels-empty", "gold.jsonl", "\n")
labels_case("labels-unknown-suffix", "gold.yaml", "- text: fast\n")
labels_case(
    "labels-span-outside-sentence",
    "gold.jsonl",
    LABEL.replace('"end": 13', '"end": 99') % ("BTX:0001", ""),
    "line 1",
)
labels_case("labels-unknown-concept", "gold.jsonl", LABEL % ("NOPE:9999", ""), "NOPE:9999")
labels_case(
    "labels-bad-language",
    "gold.jsonl",
    (LABEL % ("BTX:0001", "")).replace('"lang": "en"', '"lang": "klingon!!"'),
    "line 1",
)
labels_case("labels-conll-bad-tag", "gold.conll", "It\tO\ncooks\tX-TRAIT\nfast\tO\n", "line 2")


# traits.toml
def settings_case(name: str, data: bytes | str, place: str, command: str = "status") -> None:
    @case(name)
    def make(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
        put(ws, "traits.toml", data)
        extra = ["--annotator", "t"] if command == "label" else []
        return [command, "-w", str(ws), *extra], place

    return None


settings_case(
    "settings-cp1252", "[workspace]\ndefault_language = 'fr' # é\n".encode("cp1252"), "traits.toml"
)
settings_case("settings-random-bytes", RANDOM, "traits.toml")
settings_case("settings-utf16", "[workspace]\n".encode("utf-16"), "traits.toml")
settings_case("settings-not-toml", "[workspace\n", "traits.toml")
settings_case("settings-unknown-section", "[colour]\nx = 1\n", "[colour]")
settings_case("settings-bracket-section", "[active]\nbatch_size = 'five'\n", "[active]")
settings_case("settings-share-above-one", "[linking]\nthreshold = 2.5\n", "threshold")
settings_case("settings-strategy", "[active]\nstrategy = 'bogus'\n", "[active]", "label")
settings_case("settings-algorithm", "[tagger]\nalgorithm = 'bogus'\n", "[tagger]", "train")
settings_case("settings-silver-filter", "[tagger]\nsilver_filter = 'bogus'\n", "[tagger]", "train")


@case("settings-default-language")
def _default_language(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    put(ws, "traits.toml", "[workspace]\ndefault_language = 'klingon!!'\n")
    path = put(tmp, "new.csv", "respondent,answer\nR9,It cooks fast.\n")
    return ["add", "-w", str(ws), str(path)], "default language"


@case("names-file-binary")
def _names(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    put(ws, "names.txt", RANDOM)
    return [
        "export",
        "-w",
        str(ws),
        "--pseudonymise",
        "--names-file",
        str(ws / "names.txt"),
    ], "names.txt"


# the store
@case("store-random-bytes")
def _store_noise(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    put(ws, "traits.sqlite", RANDOM)
    return ["status", "-w", str(ws)], "traits.sqlite"


@case("store-corrupt-page")
def _store_page(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    # the pages of the predictions table, which export reads; the schema stays readable
    path = ws / "traits.sqlite"
    conn = sqlite3.connect(path)
    size = conn.execute("PRAGMA page_size").fetchone()[0]
    pages = [r[0] for r in conn.execute("SELECT pageno FROM dbstat WHERE name = 'predictions'")]
    conn.close()
    data = bytearray(path.read_bytes())
    for page in pages:
        start = (page - 1) * size
        data[start : start + size] = bytes(x ^ 0x5A for x in data[start : start + size])
    path.write_bytes(bytes(data))
    return ["export", "-w", str(ws)], "traits.sqlite"


@case("store-newer-schema")
def _store_newer(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    conn = sqlite3.connect(ws / "traits.sqlite")
    conn.execute("PRAGMA user_version = 99")
    conn.close()
    return ["status", "-w", str(ws)], "schema 99"


@case("store-bad-model-json")
def _store_json(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    conn = sqlite3.connect(ws / "traits.sqlite")
    version = conn.execute("SELECT version FROM models").fetchone()[0]
    conn.execute("UPDATE models SET meta = '{bad'")
    conn.commit()
    conn.close()
    return ["export", "-w", str(ws)], version


def read_only(mp: pytest.MonkeyPatch) -> None:
    """Open every store read-only, as SQLite does in a folder the user may not write."""
    real = sqlite3.connect

    def connect(path: object, **kwargs: Any) -> sqlite3.Connection:
        return real(f"file:{path}?mode=ro", uri=True, **kwargs)

    mp.setattr(_schema.sqlite3, "connect", connect)


def disk_full(mp: pytest.MonkeyPatch) -> None:
    """Make every write into the store fail with SQLite's own "database or disk is full".

    A temporary trigger on each table writes a large blob into a temporary table whose
    page limit is tiny, so SQLite raises SQLITE_FULL from inside the write, exactly as
    it does when the disk cannot take another page; the write is rolled back.
    """
    real = _schema.migrate

    def migrate(conn: sqlite3.Connection) -> int:
        version = real(conn)
        conn.execute("CREATE TEMP TABLE ballast (b BLOB)")
        tables = [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")]
        for table in tables:
            for event in ("INSERT", "UPDATE", "DELETE"):
                conn.execute(
                    f"CREATE TEMP TRIGGER full_{table}_{event} AFTER {event} ON main.{table} "
                    "BEGIN INSERT INTO ballast VALUES (zeroblob(100000)); END"
                )
        pages = conn.execute("PRAGMA temp.page_count").fetchone()[0]
        conn.execute(f"PRAGMA temp.max_page_count = {pages}")
        return version

    mp.setattr(_schema, "migrate", migrate)


@case("store-read-only-add")
def _ro_add(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = put(tmp, "new.csv", "respondent,answer\nR9,It cooks fast.\n")
    read_only(mp)
    return ["add", "-w", str(ws), str(path)], "read-only"


@case("disk-full-add")
def _full_add(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = put(tmp, "new.csv", "respondent,answer\nR9,It cooks fast.\n")
    disk_full(mp)
    return ["add", "-w", str(ws), str(path)], "disk"


@case("disk-full-import-labels")
def _full_labels(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    path = put(tmp, "gold.jsonl", LABEL % ("BTX:0001", ""))
    disk_full(mp)
    return ["import-labels", "-w", str(ws), str(path)], "disk"


@case("disk-full-label")
def _full_label(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    mp.setattr("sys.stdin", io.StringIO("n\nq\n"))
    disk_full(mp)
    return ["label", "-w", str(ws), "--annotator", "t"], "disk"


@case("disk-full-train")
def _full_train(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    def full(*args: object, **kwargs: object) -> None:
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))  # as numpy passes it: no file

    mp.setattr(clusters.np, "save", full)
    return ["train", "-w", str(ws)], "disk"


# model folders
def model_case(name: str, file_name: str, data: bytes | str) -> None:
    @case(name)
    def make(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
        version = next(p for p in (ws / "models").iterdir() if p.is_dir())
        put(version, file_name, data)
        return ["concepts", "suggest", "-w", str(ws)], version.name


model_case("model-aliases-object", "aliases.json", '{"a": 1}')
model_case("model-aliases-nested", "aliases.json", '[["BTX:0001", "fast", ["en"]]]')
model_case("model-meta-list", "meta.json", "[]")
model_case("model-meta-counts-list", "meta.json", '{"counts": []}')
model_case("model-vectors-random", "vectors.npy", RANDOM)
model_case(
    "model-vectors-object-array",
    "vectors.npy",
    b"\x93NUMPY\x01\x00v\x00{'descr': '|O', 'fortran_order': False, 'shape': (1,), }"
    + b" " * 43
    + b"\n"
    + RANDOM[:64],
)
model_case("model-clusters-random", "clusters.json", RANDOM)
model_case("model-tagger-random", "tagger.crfsuite", RANDOM)
model_case("model-tagger-json-list", "tagger.json", "[]")


@case("model-folder-missing")
def _model_gone(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    version = next(p for p in (ws / "models").iterdir() if p.is_dir())
    shutil.rmtree(version)
    return ["concepts", "suggest", "-w", str(ws)], version.name


# the labeling screen's pipe
@case("label-pipe-invalid-utf8")
def _pipe_surrogates(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    # Python reads a pipe in the C locale with surrogateescape: bad bytes become surrogates
    stream = io.TextIOWrapper(io.BytesIO(b"cooks \xff\xfe fast\nq\n"), errors="surrogateescape")
    mp.setattr("sys.stdin", stream)
    return ["label", "-w", str(ws), "--annotator", "t"], "Line 1"


@case("label-pipe-strict-decoding")
def _pipe_strict(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    stream = io.TextIOWrapper(io.BytesIO(b"\xff\xfe\xfd broken\nq\n"), encoding="utf-8")
    mp.setattr("sys.stdin", stream)
    return ["label", "-w", str(ws), "--annotator", "t"], "UTF-8"


@case("simulate-pool-binary")
def _simulate(ws: Path, tmp: Path, mp: pytest.MonkeyPatch) -> tuple[list[str], str]:
    pool = put(tmp, "pool.jsonl", RANDOM)
    test = put(tmp, "test.jsonl", LABEL % ("BTX:0001", ""))
    out = str(tmp / "sim.json")
    return ["simulate", "--pool", str(pool), "--test", str(test), "--out", out], "pool.jsonl"


# --------------------------------------------------------------------------- the checks


def test_there_are_at_least_sixty_kinds() -> None:
    assert len(CASES) >= 60


@pytest.fixture
def chdir_tmp(tmp_path: Path) -> Iterator[None]:
    here = Path.cwd()
    os.chdir(tmp_path)
    yield
    os.chdir(here)


@pytest.mark.parametrize("name", sorted(CASES), ids=str)
def test_bad_input_is_one_sentence_and_changes_nothing(
    name: str, ws: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch, chdir_tmp: None
) -> None:
    scratch = tmp_path / "files"
    scratch.mkdir()
    argv, place = CASES[name](ws, scratch, monkeypatch)
    before = snapshot(ws)
    code, out = run(argv)
    monkeypatch.undo()
    assert code != 0, out
    assert "Traceback" not in out
    errors = [line for line in out.splitlines() if line.startswith("error:")]
    assert len(errors) == 1, out
    assert place in errors[0], out
    assert errors[0].rstrip().endswith("."), out
    assert snapshot(ws) == before


@pytest.mark.parametrize(
    ("data", "options", "how"),
    [
        ("sex,Why do you grow it?\nF,It cooks fast.\n", [], "--respondent-column"),
        ("code,age\nR1,34\nR2,51\n", ["--respondent-column", "code"], "--answer-column"),
        ("code,answer\nR1,It cooks fast.\n", ["--respondent-column", "Code ID"], "'code'"),
    ],
    ids=["no-respondent-column", "no-answer-column", "named-column-missing"],
)
def test_unrecognised_columns_say_how_to_name_them(
    data: str, options: list[str], how: str, ws: Path, tmp_path: Path
) -> None:
    # The message names the option of `traits add` and the traits.toml setting a user
    # can type, never a Python dictionary.
    path = put(tmp_path, "survey.csv", data)
    code, out = run(["add", "-w", str(ws), *options, str(path)])
    message = " ".join(out.split())
    assert code != 0 and "Traceback" not in out
    assert how in message, message
    assert "under [columns] in traits.toml" in message, message
    assert "{'" not in message and "mapping" not in message, message
