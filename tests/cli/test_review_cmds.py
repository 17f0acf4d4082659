import json
import shutil
from pathlib import Path

import openpyxl

from extractor.ingest.review import DRAWN, KEYS_SHEET, Col
from extractor.report.results import run_facts
from extractor.workspace.folder import Workspace
from tests.jobs.study import run
from tests.review_study import VERSION, edit, review_study


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


def _drop_drawn(path: Path) -> None:
    """Make the workbook look like one exported before it recorded the respondents drawn."""
    wb = openpyxl.load_workbook(path)
    keys = wb[KEYS_SHEET]
    row = next(r[0].row for r in keys.iter_rows() if r[0].value == DRAWN)
    keys.delete_rows(row)
    wb.save(path)


def test_review_import_says_how_many_drawn_respondents_were_reviewed(tmp_path: Path) -> None:
    # The sample of tests/jobs/test_review_import.py: 6 respondents drawn, and the edits
    # review 5 of them (KA-04 is left blank), so the reviewed ones are no longer the
    # random draw and the import must say so, on screen and on the About sheet.
    from tests.jobs.test_review_import import EDITS

    root = review_study(tmp_path / "study")
    code, out = run("review", "export", "--sample", "6", "--seed", "1", "-w", str(root))
    assert code == 0, out
    path = root / "exports" / "review.xlsx"
    edit(path, EDITS)
    old = tmp_path / "old.xlsx"
    shutil.copy(path, old)
    code, out = run("review", "import", str(path), "--reviewer", "Amina", "-w", str(root))
    assert code == 0, out
    flat = " ".join(out.split())
    assert "measured on 5 reviewed respondents of the 6 drawn" in flat, out
    assert "Only 5 of the 6 respondents drawn were reviewed" in flat, out
    assert "the 1 left out were not chosen for a reason" in flat, out
    with Workspace.open(root) as ws:
        facts = run_facts(ws, VERSION)
    assert facts.quality_reviewed_sample is not None
    assert facts.quality_reviewed_sample["measured on"].startswith(
        "5 reviewed respondents of the 6 drawn"
    )
    assert "Only 5 of the 6" in facts.quality_reviewed_sample["caution"]
    # A workbook from before the draw was recorded: the figure as it always read, no caution.
    _drop_drawn(old)
    code, out = run("review", "import", str(old), "--reviewer", "Baraka", "-w", str(root))
    assert code == 0, out
    flat = " ".join(out.split())
    assert "measured on 5 reviewed respondents (" in flat, out
    assert "drawn" not in flat, out


def test_review_import_of_every_drawn_respondent_has_no_caution(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    code, out = run("review", "export", "--sample", "2", "--seed", "3", "-w", str(root))
    assert code == 0, out
    path = root / "exports" / "review.xlsx"
    wb = openpyxl.load_workbook(path)
    sheet = wb["Review"]
    header = next(r for r in sheet.iter_rows() if any(c.value == Col.VERDICT for c in r))
    verdict = next(c.column for c in header if c.value == Col.VERDICT)
    for r in range(header[0].row + 1, sheet.max_row + 1):
        if sheet.cell(r, 1).value:
            sheet.cell(r, verdict).value = "correct"
    wb.save(path)
    code, out = run("review", "import", str(path), "--reviewer", "Amina", "-w", str(root))
    assert code == 0, out
    flat = " ".join(out.split())
    assert "measured on 2 reviewed respondents of the 2 drawn" in flat, out
    assert "Only" not in flat, out
