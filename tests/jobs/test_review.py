from pathlib import Path

import openpyxl
import pytest

from extractor.errors import InputError
from extractor.jobs.review import ReviewSelection, export_review, parse_where, review_lines
from extractor.workspace.folder import Workspace
from tests.review_study import VERSION, review_study


@pytest.fixture
def root(tmp_path: Path) -> Path:
    return review_study(tmp_path / "study")


def _keys(root: Path, selection: ReviewSelection) -> list[str]:
    with Workspace.open(root) as ws:
        return [line.key.key for line in review_lines(ws, VERSION, selection)]


def test_review_lines_all_hold_every_sentence_once_or_per_mention(root: Path) -> None:
    keys = _keys(root, ReviewSelection())
    assert len(keys) == 14
    assert {k.split("-")[0] for k in keys} == {f"S{i}" for i in range(1, 13)}


def test_review_sample_is_seeded_and_whole_respondents(root: Path) -> None:
    first = _keys(root, ReviewSelection(sample=2, seed=3))
    assert first == _keys(root, ReviewSelection(sample=2, seed=3))
    with Workspace.open(root) as ws:
        people = {
            line.respondent for line in review_lines(ws, VERSION, ReviewSelection(sample=2, seed=3))
        }
    assert len(people) == 2


def test_review_low_confidence_keeps_whole_sentences(root: Path) -> None:
    # "taste" mentions have confidence 0.4 in the fake predictions
    assert _keys(root, ReviewSelection(low_confidence=0.5)) == ["S2-1", "S6-1"]


def test_review_concept_keeps_sentences_with_it(root: Path) -> None:
    # S11 also mentions drought: the whole sentence comes along
    assert _keys(root, ReviewSelection(concept="BTX:0005")) == ["S8-1", "S11-1", "S11-2"]


def test_review_where_keeps_one_group(root: Path) -> None:
    keys = _keys(root, ReviewSelection(where=(("role", "Trader"),)))
    assert keys == ["S3-1", "S4-1"]  # KA-02, the one trader


@pytest.mark.parametrize(
    ("selection", "says"),
    [
        (ReviewSelection(where=(("district", "Ombala"),)), "No respondent column 'district'"),
        (ReviewSelection(concept="BTX:0999"), "not a concept ID"),
        (ReviewSelection(sample=0), "sample size"),
    ],
    ids=["unknown-column", "unknown-concept", "empty-sample"],
)
def test_review_selection_errors_are_one_sentence(
    root: Path, selection: ReviewSelection, says: str
) -> None:
    with Workspace.open(root) as ws, pytest.raises(InputError, match=says):
        review_lines(ws, VERSION, selection)


def test_parse_where_needs_an_equals_sign() -> None:
    assert parse_where("district = Ombala") == ("district", "Ombala")
    with pytest.raises(InputError, match="column=value"):
        parse_where("Ombala")


def test_review_question_column_shows_the_codebook_wording(tmp_path: Path) -> None:
    root = review_study(tmp_path / "study")
    # The codebook names the stored question's wording (as for a survey field name).
    (root / "questions.csv").write_text(
        "question,text,direction\nWhy do you grow it?,Why do you grow this variety?,likes\n",
        encoding="utf-8",
    )
    with Workspace.open(root) as ws:
        path = export_review(ws, ReviewSelection()).path
    sheet = openpyxl.load_workbook(path)["Review"]
    asked = {row[1] for row in sheet.iter_rows(min_row=7, values_only=True) if row[0]}
    assert asked == {"Why do you grow this variety? (Why do you grow it?)"}
