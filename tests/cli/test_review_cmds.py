import json
from pathlib import Path

from extractor.ingest.review import Col
from tests.jobs.study import run
from tests.review_study import edit, review_study


def test_review_commands_export_import_and_agreement(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    code, out = run("review", "export", "--sample", "3", "-w", str(root))
    assert code == 0, out
    assert "3 respondents" in out
    path = root / "exports" / "review.xlsx"
    code, out = run("review", "export", "-w", str(root), "--out", str(path))
    assert code == 0, out
    for name, stance in (("Amina", "liked"), ("Baraka", "disliked")):
        copy = tmp_path / f"{name}.xlsx"
        edit(path, {("S1-1", Col.VERDICT): "fix", ("S1-1", Col.STANCE): stance}, out=copy)
        edit(copy, {("S1-2", Col.VERDICT): "correct"})
        code, out = run("review", "import", str(copy), "--reviewer", name, "-w", str(root))
        assert code == 0, out
    code, out = run("agreement", "-w", str(root), "--json")
    assert code == 0, out
    report = json.loads(out)["report"]
    assert report["sentences"] == 1
    assert report["disagreements"] == [1]
    code, out = run("agreement", "-w", str(root))
    assert "Krippendorff's alpha, concept" in out
    assert "disagreements.xlsx" in out


def test_review_import_bad_rows_print_one_sentence_each(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    run("review", "export", "-w", str(root))
    path = root / "exports" / "review.xlsx"
    edit(path, {("S1-1", Col.VERDICT): "maybe", ("S12-1", Col.CONCEPT): "moon (BTX:0999)"})
    code, out = run("review", "import", str(path), "--reviewer", "Amina", "-w", str(root))
    assert code == 1
    assert "Traceback" not in out
    lines = [line for line in out.splitlines() if line.startswith("review.xlsx, sheet Review")]
    assert len(lines) == 2
    assert "nothing was" in out


def test_review_import_shows_precision_with_stance(tmp_path: Path) -> None:
    # The same sample and edits as tests/jobs/test_review_import.py, whose counts were
    # worked out by hand: stance kept for 2 of the 6 found mentions. The About sheet shows
    # that figure; the import's table must too.
    from tests.jobs.test_review_import import EDITS

    root = review_study(tmp_path / "study")
    code, out = run("review", "export", "--sample", "6", "--seed", "1", "-w", str(root))
    assert code == 0, out
    path = root / "exports" / "review.xlsx"
    edit(path, EDITS)
    code, out = run("review", "import", str(path), "--reviewer", "Amina", "-w", str(root))
    assert code == 0, out
    row = next(line for line in out.splitlines() if "words, concept and stance" in line)
    assert "2 of 6" in row, row
