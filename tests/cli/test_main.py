"""The ``traits`` command: exit codes and one-sentence messages, store unchanged on bad input."""

from __future__ import annotations

import codecs
import io
import json
from pathlib import Path

import pytest
from rich.console import Console

from extractor.cli.main import main
from tests.ingest.interview_files import write_ods


def run(*argv: str) -> tuple[int, str]:
    """Run the command with a captured console; return (exit code, output)."""
    buffer = io.StringIO()
    code = main(list(argv), console=Console(file=buffer, width=200, force_terminal=False))
    return code, buffer.getvalue()


def status(ws: Path) -> dict:
    code, out = run("-w", str(ws), "status", "--json")
    assert code == 0
    return json.loads(out)


@pytest.fixture
def ws(tmp_path: Path) -> Path:
    root = tmp_path / "ws"
    assert run("init", str(root))[0] == 0
    return root


def _csv(tmp_path: Path, name: str = "a.csv", text: str | None = None) -> Path:
    path = tmp_path / name
    path.write_text(
        text
        or (
            "respondent,gender,question,answer\n"
            "KA-01,woman,Why do you grow it?,It cooks fast. The broth is thick.\n"
            "KA-02,man,Why do you grow it?,Les grains sont trop petits.\n"
        ),
        encoding="utf-8",
    )
    return path


def test_add_then_readd_changes_nothing(ws: Path, tmp_path: Path) -> None:
    path = _csv(tmp_path)
    assert run("-w", str(ws), "add", str(path))[0] == 0
    first = status(ws)
    code, out = run("-w", str(ws), "add", str(path))
    assert code == 0 and "unchanged" in out
    assert status(ws) == first
    assert first["respondents"] == 2 and first["sentences"] == 3


def test_changed_file_adds_only_new_answers(ws: Path, tmp_path: Path) -> None:
    path = _csv(tmp_path)
    run("-w", str(ws), "add", str(path))
    path.write_text(
        path.read_text(encoding="utf-8") + "KA-03,woman,Why do you grow it?,Good yield.\n",
        encoding="utf-8",
    )
    run("-w", str(ws), "add", str(path))
    counts = status(ws)
    assert counts["answers"] == 3 and counts["respondents"] == 3


@pytest.mark.parametrize(
    ("name", "content", "message"),
    [
        ("missing.csv", None, "does not exist"),
        ("empty.csv", b"", "empty"),
        ("broken.xlsx", b"PK\x03\x04 not really a workbook", "broken.xlsx"),
        ("locked.docx", b"\xd0\xcf\x11\xe0" + b"\0" * 600, "password"),
        ("noanswer.csv", b"gender,district\nwoman,Kalindi\n", "noanswer.csv"),
        ("broken.ods", b"PK\x03\x04 not really a workbook", "'broken.ods' is not a valid .ods"),
        ("broken.xls", b"respondent,answer\nKA-9,Sweet\n", "'broken.xls' is not a valid .xls"),
    ],
    ids=[
        "missing-path",
        "empty-file",
        "bad-xlsx",
        "encrypted-docx",
        "no-answer-column",
        "bad-ods",
        "bad-xls",
    ],
)
def test_bad_interview_files_fail_with_one_sentence(
    ws: Path, tmp_path: Path, name: str, content: bytes | None, message: str
) -> None:
    good = _csv(tmp_path, "good.csv")
    run("-w", str(ws), "add", str(good))
    before = status(ws)
    path = tmp_path / name
    if content is not None:
        path.write_bytes(content)
    code, out = run("-w", str(ws), "add", str(path))
    assert code == 1
    assert message.lower() in out.lower()
    assert "Traceback" not in out
    assert status(ws) == before


def test_a_bad_file_among_good_ones_stores_nothing(ws: Path, tmp_path: Path) -> None:
    good = _csv(tmp_path)
    bad = tmp_path / "bad.xlsx"
    bad.write_bytes(b"junk")
    before = status(ws)
    assert run("-w", str(ws), "add", str(good), str(bad))[0] == 1
    assert status(ws) == before


def test_command_outside_a_workspace_says_what_to_do(tmp_path: Path) -> None:
    code, out = run("-w", str(tmp_path), "status")
    assert code == 1 and "traits init" in out


def test_concepts_import_rejects_conflicting_ids(ws: Path, tmp_path: Path) -> None:
    path = tmp_path / "c.csv"
    path.write_text("id,label,lang\nBTX:1,taste,en\nBTX:1,flavour,en\n", encoding="utf-8")
    code, out = run("-w", str(ws), "concepts", "import", str(path))
    assert code == 1 and "two labels" in out
    assert status(ws)["concepts"] == 0


def test_concepts_import_unknown_language(ws: Path, tmp_path: Path) -> None:
    path = tmp_path / "c.csv"
    path.write_text("id,label,lang\nBTX:1,taste,xq-zz-1\n", encoding="utf-8")
    code, out = run("-w", str(ws), "concepts", "import", str(path))
    assert code == 1 and "language tag" in out


def test_output_in_a_missing_folder_is_one_sentence(tmp_path: Path) -> None:
    pool = tmp_path / "pool.jsonl"
    pool.write_text(
        '{"respondent": "A", "sentence": "It cooks fast.", "lang": "en", '
        '"mentions": [{"start": 3, "end": 13}]}\n',
        encoding="utf-8",
    )
    code, out = run(
        "simulate",
        "--pool",
        str(pool),
        "--test",
        str(pool),
        "--budgets",
        "0",
        "--repeats",
        "1",
        "--strategies",
        "random",
        "--out",
        str(tmp_path / "missing" / "results.json"),
    )
    assert code == 1
    assert "missing" in out and "Traceback" not in out


def test_simulate_writes_results_and_the_paired_gain(tmp_path: Path) -> None:
    traits = ["soft grain", "short cooking", "sweet taste", "big seeds"]
    lines = []
    for i in range(36):
        trait = traits[i % 4]
        text = f"In Vesk village {i} we like the {trait} of Zanobi."
        start = text.index(trait)
        lines.append(
            json.dumps(
                {
                    "respondent": f"R{i % 6}",
                    "sentence": text,
                    "lang": "en",
                    "mentions": [{"start": start, "end": start + len(trait)}],
                }
            )
        )
    pool = tmp_path / "pool.jsonl"
    pool.write_text("\n".join(lines[:28]) + "\n", encoding="utf-8")
    test = tmp_path / "test.jsonl"
    test.write_text("\n".join(lines[28:]) + "\n", encoding="utf-8")
    out_file = tmp_path / "results.json"
    code, out = run(
        "simulate",
        "--pool",
        str(pool),
        "--test",
        str(test),
        "--budgets",
        "10,15",
        "--repeats",
        "2",
        "--model",
        "tagger",
        "--out",
        str(out_file),
    )
    assert code == 0, out
    runs = json.loads(out_file.read_text(encoding="utf-8"))["runs"]
    assert {(r["strategy"], r["budget"]) for r in runs} == {
        (s, b) for s in ("default", "random") for b in (10, 15)
    }
    assert len(runs) == 2 * 2 * 2  # strategies x budgets x repeats
    assert "gain over random" in out and "/2" in out  # wins out of 2 repeats


def test_simulate_refuses_budgets_that_are_not_numbers(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    with pytest.raises(SystemExit) as caught:
        main(
            ["simulate", "--pool", "p.jsonl", "--test", "t.jsonl", "--budgets", "10,x"],
            console=Console(file=io.StringIO()),
        )
    assert caught.value.code == 2
    assert "budgets must be whole numbers" in capsys.readouterr().err


def test_add_reads_ods_xls_and_utf16_text(ws: Path, tmp_path: Path) -> None:
    # An .ods written by odfpy; Excel's "Unicode text" (UTF-16 LE with the BOM of
    # Python's codecs.BOM_UTF16_LE, tab separated) named .csv; and a real Excel 97-2003
    # .xls that statsmodels ships, whose columns are named by the mapping options.
    statsmodels = pytest.importorskip("statsmodels")
    xls = Path(statsmodels.__file__).parent.joinpath(
        "tsa/statespace/tests/results/frbny_nowcast/Nowcasting/test_spec.xls"
    )
    if not xls.is_file():
        pytest.skip("statsmodels was installed without its test files")
    ods = write_ods(tmp_path / "kibali.ods", {"Kibali": [
        ["respondent", "answer"], ["KA-01", "It cooks fast."], ["KA-02", "Too small."],
    ]})  # fmt: skip
    unicode_text = tmp_path / "lowa.csv"
    unicode_text.write_bytes(
        codecs.BOM_UTF16_LE
        + "respondent\tanswer\r\nLO-01\tLa bouillie est sucrée, épaisse.\r\n".encode("utf-16-le")
    )
    assert run("-w", str(ws), "add", str(ods), str(unicode_text))[0] == 0
    assert status(ws)["respondents"] == 3
    code, out = run(
        "-w", str(ws), "add", str(xls),
        "--respondent-column", "SeriesID", "--answer-column", "SeriesName",
    )  # fmt: skip
    assert code == 0, out
    assert status(ws)["respondents"] == 3 + 5  # the five series rows of the sheet
