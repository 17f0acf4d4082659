import shutil
import subprocess
from pathlib import Path

import openpyxl
import pytest

from extractor.ingest.review import KEYS_SHEET, Col
from extractor.jobs.review import ReviewSelection, export_review
from extractor.jobs.review_import import ReviewRowsError, import_review
from extractor.report.results import run_facts
from extractor.types import Implicit, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from tests.review_study import VERSION, edit, review_study, row_of

# What a reviewer does in the spreadsheet, and the labels it must give (worked out by hand
# from the sentences of tests/jobs/study.py).
EDITS = {
    ("S1-1", Col.VERDICT): "correct",
    ("S1-2", Col.VERDICT): "fix",
    ("S1-2", Col.STANCE): "disliked",
    ("S2-1", Col.VERDICT): "wrong",
    ("S3-1", Col.VERDICT): "fix",
    ("S3-1", Col.STANCE): "disliked",
    ("S5", Col.MISSED_WORDS): "cook fast",
    ("S5", Col.MISSED_CONCEPT): "cooking time (BTX:0001)",
    ("S5", Col.MISSED_STANCE): "disliked",
    ("S10", Col.VERDICT): "correct",
    ("S11-1", Col.VERDICT): "correct",
    ("S11-2", Col.VERDICT): "wrong",
}
INTENDED = {
    1: [Span(3, 13, "BTX:0001", "liked"), Span(22, 27, "BTX:0002", "disliked")],
    2: [],
    3: [Span(4, 10, "BTX:0004", "disliked")],
    5: [Span(12, 21, "BTX:0001", "disliked")],
    10: [],
    11: [Span(5, 10, "BTX:0005", "liked")],
}


@pytest.fixture
def reviewed(tmp_path: Path) -> tuple[Path, Path]:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
    edit(path, EDITS)
    return root, path


def _review_labels(root: Path, reviewer: str = "Amina") -> dict[int, list[Span]]:
    with Workspace.open(root) as ws:
        found = store.labels_by_annotator(ws.conn)
        mine = {sid: label for (sid, who), label in found.items() if who == reviewer}
        assert all(label.origin == "review" for label in mine.values())
        return {sid: label.spans for sid, label in mine.items()}


def test_review_round_trip_stores_intended_labels(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    with Workspace.open(root) as ws:
        result = import_review(ws, path, reviewer="Amina")
    assert result.stored == 6
    assert _review_labels(root) == INTENDED


def test_review_import_twice_changes_nothing(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    with Workspace.open(root) as ws:
        import_review(ws, path, reviewer="Amina")
        before = store.label_history(ws.conn)
        again = import_review(ws, path, reviewer="Amina")
        assert store.label_history(ws.conn) == before
    assert (again.stored, again.unchanged) == (0, 6)


def test_review_sentence_reviewed_again_gets_newer_label(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    with Workspace.open(root) as ws:
        import_review(ws, path, reviewer="Amina")
        edit(path, {("S11-2", Col.VERDICT): "correct"})
        assert import_review(ws, path, reviewer="Amina").stored == 1
        current = store.current_labels(ws.conn)[11]
    assert current.spans == [Span(5, 10, "BTX:0005", "liked"), Span(19, 26, "BTX:0008", "liked")]


def _soffice() -> str:
    found = shutil.which("soffice") or shutil.which("libreoffice")
    if found is None:
        pytest.skip(
            "LibreOffice (soffice) is not installed: apt-get install libreoffice-calc-nogui"
        )
    return found


def test_review_round_trip_through_libreoffice(reviewed: tuple[Path, Path], tmp_path: Path) -> None:
    # Outside check: LibreOffice Calc itself reads the edited workbook and writes it again
    # (its own xlsx writer: shared strings, its data validations, hidden sheets).
    soffice = _soffice()
    root, path = reviewed
    converted = tmp_path / "converted"
    subprocess.run(
        [
            soffice,
            f"-env:UserInstallation=file://{tmp_path / 'lo-profile'}",
            "--headless",
            "--convert-to",
            "xlsx",
            "--outdir",
            str(converted),
            str(path),
        ],
        check=True,
        capture_output=True,
        timeout=180,
    )
    saved = converted / path.name
    assert saved.is_file()
    wb = openpyxl.load_workbook(saved)
    assert wb[KEYS_SHEET].sheet_state == "hidden"
    with Workspace.open(root) as ws:
        import_review(ws, saved, reviewer="Amina")
    assert _review_labels(root) == INTENDED


BAD_ROWS = [
    pytest.param(
        ("S1-1", Col.CONCEPT), "moon phase (BTX:9999)", Col.CONCEPT, "not a concept", id="concept"
    ),
    pytest.param(
        ("S5", Col.MISSED_WORDS),
        "boils slowly",
        Col.MISSED_WORDS,
        "not in the sentence",
        id="words",
    ),
    pytest.param(("S1-1", Col.VERDICT), "fix", Col.CONCEPT, "fix needs", id="fix-without-fields"),
    pytest.param(("S1-1", Col.VERDICT), "maybe", Col.VERDICT, "not one of", id="verdict"),
    pytest.param(("S12-1", Col.VERDICT), "correct", Col.SENTENCE, "changed", id="sentence-changed"),
]


@pytest.mark.parametrize(("cell", "value", "column", "says"), BAD_ROWS)
def test_review_bad_row_gives_one_sentence_and_imports_nothing(
    reviewed: tuple[Path, Path], cell: tuple[str, str], value: str, column: str, says: str
) -> None:
    root, path = reviewed
    edit(path, {("S12-1", Col.VERDICT): "correct"} | {cell: value})
    with Workspace.open(root) as ws:
        if column == Col.SENTENCE:
            ws.conn.execute(
                "UPDATE answers SET text = ? WHERE id = 6",
                ("Good yield even in drought. It cooks slowly.",),
            )
        with pytest.raises(ReviewRowsError) as raised:
            import_review(ws, path, reviewer="Amina")
        assert store.label_history(ws.conn) == []
    lines = str(raised.value).splitlines()
    assert len(lines) == 2  # the summary, then one sentence for the one bad row
    row = row_of(path, cell[0])
    assert f"sheet Review, row {row}, column {column!r}" in lines[1]
    assert says in lines[1]


def test_review_skip_bad_imports_the_other_sentences(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    edit(path, {("S1-1", Col.CONCEPT): "moon phase (BTX:9999)"})
    with Workspace.open(root) as ws:
        result = import_review(ws, path, reviewer="Amina", skip_bad=True)
    assert len(result.skipped) == 1
    assert _review_labels(root) == {k: v for k, v in INTENDED.items() if k != 1}


def test_review_mention_without_verdict_in_reviewed_sentence_is_bad(
    reviewed: tuple[Path, Path],
) -> None:
    root, path = reviewed
    edit(path, {("S11-2", Col.VERDICT): None})
    with Workspace.open(root) as ws, pytest.raises(ReviewRowsError, match="no verdict"):
        import_review(ws, path, reviewer="Amina")


def test_review_from_another_workspace_is_refused(
    reviewed: tuple[Path, Path], tmp_path: Path
) -> None:
    _, path = reviewed
    other = review_study(tmp_path / "other")
    with Workspace.open(other) as ws, pytest.raises(Exception, match="another workspace"):
        import_review(ws, path, reviewer="Amina")


def test_review_sample_measures_quality_shown_on_about_sheet(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection(sample=6, seed=1)).path
        edit(path, EDITS)
        result = import_review(ws, path, reviewer="Amina")
        facts = run_facts(ws, VERSION)
    quality = result.quality
    assert quality is not None
    # By hand over the six reviewed sentences: 6 found mentions, words kept for 4 of them
    # (S2-1 and S11-2 wrong), stance changed for 2 of those (S1-2, S3-1); the reviewer's
    # 5 mentions include 1 the model missed (S5).
    assert (quality.mention_precision.k, quality.mention_precision.n) == (4, 6)
    assert (quality.full_precision.k, quality.full_precision.n) == (2, 6)
    assert (quality.mention_recall.k, quality.mention_recall.n) == (4, 5)
    assert quality.respondents == 5  # KA-04 has no reviewed sentence
    assert facts.quality_reviewed_sample is not None
    assert facts.quality_reviewed_sample["measured on"].startswith("5 reviewed respondents")


def test_review_trait_without_words_is_stored_as_implicit(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    # "We planted after the rains." states nothing by name; the reviewer says it implies
    # earliness, wanted (an implicit trait: concept and stance, no words).
    edit(
        path,
        {
            ("S10", Col.VERDICT): None,
            ("S10", Col.MISSED_CONCEPT): "earliness (BTX:0006)",
            ("S10", Col.MISSED_STANCE): "wanted",
        },
    )
    with Workspace.open(root) as ws:
        import_review(ws, path, reviewer="Amina")
        label = store.labels_by_annotator(ws.conn)[(10, "Amina")]
        assert (label.spans, label.implicit) == ([], (Implicit("BTX:0006", "wanted"),))
        # exported again, the implicit trait is a row of its own, and "correct" keeps it
        again = export_review(ws, ReviewSelection(), out=path.with_name("again.xlsx")).path
        edit(again, {("S10-i1", Col.VERDICT): "correct"})
        assert import_review(ws, again, reviewer="Amina").stored == 0


def test_review_deleted_row_of_a_reviewed_sentence_is_bad(reviewed: tuple[Path, Path]) -> None:
    root, path = reviewed
    wb = openpyxl.load_workbook(path)
    wb["Review"].delete_rows(row_of(path, "S1-2"))
    wb.save(path)
    with Workspace.open(root) as ws, pytest.raises(ReviewRowsError, match="'S1-2' of this"):
        import_review(ws, path, reviewer="Amina")


def test_review_model_trait_without_words_stays_implicit(tmp_path: Path) -> None:
    # The sentence-level model finds earliness, wanted, in "We planted after the rains."
    # (sentence 10) without words: stored, as the tagger stores it, over the whole sentence.
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        text = next(s.text for s in store.sentences(ws.conn) if s.id == 10)
        whole = {"start": 0, "end": len(text), "concept": "BTX:0006", "stance": "wanted"}
        implied = whole | {"confidence": 0.7, "implicit": True}
        rows = [
            {
                "sentence_id": sid,
                "path_prob": 0.5,
                "mentions": [implied] if sid == 10 else p.mentions,
            }
            for sid, p in store.predictions(ws.conn, VERSION).items()
        ]
        store.store_predictions(ws.conn, VERSION, rows)
        path = export_review(ws, ReviewSelection()).path
        sheet = openpyxl.load_workbook(path)["Review"]
        cells = {c.value: c.column - 1 for c in sheet[row_of(path, "S10-i1")]}
        # Its row shows no words (not the whole sentence as the trait's words), found by
        # the model, and the reviewer's "correct" keeps it as a trait without words.
        row = [c.value for c in sheet[row_of(path, "S10-i1")]]
        assert text not in row[3:4] and "model" in cells and "earliness" in cells
        edit(path, {("S10-i1", Col.VERDICT): "correct"})
        import_review(ws, path, reviewer="Amina")
        label = store.labels_by_annotator(ws.conn)[(10, "Amina")]
        assert (label.spans, label.implicit) == ([], (Implicit("BTX:0006", "wanted"),))
