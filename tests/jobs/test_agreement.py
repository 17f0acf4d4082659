import re
from pathlib import Path

import openpyxl
import pytest

from extractor.errors import InputError
from extractor.ingest.review import KEYS_SHEET, Col
from extractor.jobs.agreement import workspace_agreement
from extractor.jobs.review import ReviewSelection, export_review
from extractor.jobs.review_import import import_review
from extractor.workspace.folder import Workspace
from tests.review_study import edit, review_study

FIRST = {
    ("S1-1", Col.VERDICT): "correct",
    ("S1-2", Col.VERDICT): "correct",
    ("S2-1", Col.VERDICT): "correct",
    ("S11-1", Col.VERDICT): "correct",
    ("S11-2", Col.VERDICT): "correct",
}
SECOND = FIRST | {("S1-2", Col.VERDICT): "fix", ("S1-2", Col.STANCE): "disliked"}
SECOND |= {("S11-2", Col.VERDICT): "wrong"}


def _two_reviewers(tmp_path: Path) -> Path:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
        for name, edits in (("Amina", FIRST), ("Baraka", SECOND)):
            copy = tmp_path / f"{name}.xlsx"
            edit(path, edits, out=copy)
            import_review(ws, copy, reviewer=name)
    return root


def test_agreement_of_two_reviewers_files(tmp_path: Path) -> None:
    root = _two_reviewers(tmp_path)
    with Workspace.open(root) as ws:
        result = workspace_agreement(ws)
    report = result.report
    assert report.annotators == ("Amina", "Baraka")
    assert report.sentences == 3
    (pair,) = report.pairs
    # by hand: 5 spans of Amina, 4 of Baraka, 4 shared -> F1 = 2*4/(5+4)
    assert pair.span.f1 == pytest.approx(8 / 9)
    assert pair.concept_kappa.items == 5
    assert report.disagreements == (1, 11)
    assert result.disagreements is not None
    keys = [
        r[0]
        for r in openpyxl.load_workbook(result.disagreements)[KEYS_SHEET].iter_rows(
            values_only=True
        )
    ]
    # only the two sentences they disagree on: S1 (the same words with two stances) and S11
    assert [k for k in keys if re.fullmatch(r"S\d+(-\d+)?", str(k))] == [
        "S1-1",
        "S1-2",
        "S1-3",
        "S11-1",
        "S11-2",
    ]


def test_disagreements_settled_by_a_third_reviewer(tmp_path: Path) -> None:
    root = _two_reviewers(tmp_path)
    with Workspace.open(root) as ws:
        path = workspace_agreement(ws).disagreements
        assert path is not None
        settle = {
            ("S1-1", Col.VERDICT): "correct",
            ("S1-2", Col.VERDICT): "wrong",
            ("S1-3", Col.VERDICT): "correct",
            ("S11-1", Col.VERDICT): "correct",
            ("S11-2", Col.VERDICT): "wrong",
        }
        edit(path, settle)
        assert import_review(ws, path, reviewer="Chiku").stored == 2


def test_agreement_needs_two_annotators(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    with Workspace.open(root) as ws, pytest.raises(InputError, match="two annotators"):
        workspace_agreement(ws)


def test_disagreement_on_an_implicit_trait_is_a_row(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    implied = {("S10", Col.MISSED_CONCEPT): "BTX:0006", ("S10", Col.MISSED_STANCE): "wanted"}
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
        for name, edits in (("Amina", implied), ("Baraka", {("S10", Col.VERDICT): "correct"})):
            copy = tmp_path / f"{name}.xlsx"
            edit(path, edits, out=copy)
            import_review(ws, copy, reviewer=name)
        result = workspace_agreement(ws)
    assert result.report.disagreements == (10,)
    assert result.disagreements is not None
    ws_ = openpyxl.load_workbook(result.disagreements)["Review"]
    rows = [r for r in ws_.iter_rows(values_only=True) if r[-1] == "S10-i1"]
    assert len(rows) == 1
    assert "Amina" in rows[0]
