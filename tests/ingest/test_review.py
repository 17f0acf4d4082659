from pathlib import Path

import openpyxl
import pytest

from extractor.errors import InputError
from extractor.ingest.review import Col, ConceptNames, read_review
from extractor.jobs.review import ReviewSelection, export_review
from extractor.workspace.folder import Workspace
from tests.review_study import edit, review_study, row_of

LABELS = {"BTX:0001": "cooking time", "BTX:0003": "taste"}


@pytest.mark.parametrize(
    ("cell", "expected"),
    [
        ("cooking time (BTX:0001)", "BTX:0001"),
        ("BTX:0003", "BTX:0003"),
        ("Taste", "BTX:0003"),
        ("flavour of the moon (BTX:0999)", None),
        ("tasty", None),
    ],
    ids=["drop-down", "id", "label", "unknown-id", "unknown-label"],
)
def test_concept_names_read_cells(cell: str, expected: str | None) -> None:
    assert ConceptNames(LABELS).read(cell) == expected


def test_read_review_refuses_a_workbook_without_keys(tmp_path: Path) -> None:
    path = tmp_path / "other.xlsx"
    openpyxl.Workbook().save(path)
    with pytest.raises(InputError, match="not a review workbook"):
        read_review(path, LABELS)


def test_read_review_missed_trait_needs_its_stance(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
    edit(path, {("S5", Col.MISSED_WORDS): "cook fast", ("S5", Col.MISSED_CONCEPT): "BTX:0001"})
    found = read_review(path, LABELS)
    assert found.entries == []
    (problem,) = found.problems
    assert problem.key == "S5"
    assert problem.text == (
        f"review.xlsx, sheet Review, row {row_of(path, 'S5')}, column 'Missed trait: stance': "
        "a missed trait needs its concept and its stance; fill it in."
    )


def test_read_review_ignores_untouched_rows(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
    edit(path, {("S12-1", Col.COMMENT): "=1+1"})  # a comment alone reviews nothing
    found = read_review(path, LABELS)
    assert (found.entries, found.problems) == ([], [])
    assert len(found.keys) == 14
