"""Cross-validation grouped by respondent and scoring on an evaluation sample."""

from __future__ import annotations

import io
import json
from collections.abc import Sequence
from typing import Any

import pytest
from rich.console import Console

from extractor import progress
from extractor.errors import InputError
from extractor.models.validation import cross_validate, evaluate_on, group_folds
from extractor.types import Sentence, Span


def sentence(i: int, respondent: str | None = None, lang: str = "en") -> Sentence:
    return Sentence(id=i, text="xxx " * 12, lang=lang, respondent=respondent)


@pytest.mark.parametrize("k", [2, 3, 5], ids=["k2", "k3", "k5"])
def test_group_folds_keep_respondents_together(k: int) -> None:
    groups = ["A"] * 4 + ["B"] * 3 + ["C"] * 3 + ["D"] * 2 + ["E"] + ["F"]
    folds = group_folds(groups, k, seed=3)
    assert sorted(i for f in folds for i in f) == list(range(len(groups)))
    owners = [{groups[i] for i in fold} for fold in folds]
    for a in range(len(owners)):
        for b in range(a + 1, len(owners)):
            assert not owners[a] & owners[b]


def test_group_folds_need_two_respondents() -> None:
    with pytest.raises(InputError, match="at least 2 respondents"):
        group_folds(["A", "A"], 2)


class FakePrediction:
    def __init__(self, mentions: list[Span]) -> None:
        self.mentions = mentions


class EchoModel:
    """Predicts the span [0, 3) with concept C1 in every sentence; records what it saw."""

    seen: list[set[int]] = []

    def __init__(self, **params: Any) -> None:
        self.params = params

    def fit(self, gold: Any, corpus: Any, aliases: Any, *, clusters: Any = None) -> EchoModel:
        EchoModel.seen.append({s.id for s, _ in gold})
        return self

    def predict(self, sentences: Sequence[Sentence]) -> list[FakePrediction]:
        return [FakePrediction([Span(0, 3, "C1", "liked")]) for _ in sentences]


def test_evaluate_on_scores_the_model() -> None:
    gold = [(sentence(0, "ANA"), [Span(0, 3, "C1", "liked")]), (sentence(1, "BEN"), [])]
    result = evaluate_on(EchoModel(), gold)
    # Hand count: 2 predicted, 1 correct, 1 gold: P 0.5, R 1.
    assert result.summary.span_f1 == pytest.approx(2 / 3)
    assert result.summary.stance_accuracy == 1.0
    assert result.scores.span.tp == 1 and result.scores.span.fp == 1


def test_cross_validate_never_trains_on_the_held_out_fold() -> None:
    EchoModel.seen = []
    gold = [(sentence(i, f"R{i % 4}"), [Span(0, 3, "C1", "liked")]) for i in range(12)]
    result = cross_validate(gold, [s for s, _ in gold], [], k=4, seed=1, make_models=EchoModel)
    assert result.k == 4 and len(result.folds) == 4
    for fold, trained in zip(result.folds, EchoModel.seen, strict=True):
        assert len(trained) == fold.n_train == 9
    assert result.mean.span_f1 == pytest.approx(1.0)
    assert result.mean.respondent_f1 == pytest.approx(1.0)
    assert result.sd.span_f1 == pytest.approx(0.0)


def test_cross_validate_shows_a_progress_bar_over_folds() -> None:
    gold = [(sentence(i, f"R{i % 4}"), [Span(0, 3, "C1", "liked")]) for i in range(12)]
    out = io.StringIO()
    progress.enable(Console(file=out, force_terminal=True, width=100))
    try:
        cross_validate(gold, [s for s, _ in gold], [], k=4, seed=1, make_models=EchoModel)
    finally:
        progress.enable(None)
    assert "Cross-validating" in out.getvalue() and "4/4" in out.getvalue()


def test_evaluation_record_keeps_the_stored_json_shape() -> None:
    # The JSON stored with a model version is read back by `traits models`: the figures
    # sit at the top level and under "summary", beside every part of the scores.
    gold = [(sentence(0, "ANA"), [Span(0, 3, "C1", "liked")]), (sentence(1, "BEN"), [])]
    record = json.loads(json.dumps(evaluate_on(EchoModel(), gold).to_dict()))
    assert list(record) == [
        "n_sentences", "n_gold_spans", "span", "span_concept", "stance", "respondent",
        "by_concept", "by_language", "summary",
        "span_f1", "span_concept_f1", "stance_accuracy", "respondent_f1", "sentence",
    ]  # fmt: skip
    # Sentence level (mentions and implicit traits): the one gold (sentence, concept) is found.
    assert record["sentence"]["concept"]["tp"] == 1 and record["sentence"]["n_sentences"] == 2
    # Hand count: 2 predicted spans, 1 right, 1 gold.
    assert record["span"] == pytest.approx(
        {"precision": 0.5, "recall": 1.0, "f1": 2 / 3, "tp": 1, "fp": 1, "fn": 0}
    )
    assert record["by_concept"]["C1"]["support"] == 1
    assert record["stance"]["confusion"] == [[1]] and record["stance"]["labels"] == ["liked"]
    assert record["span_f1"] == record["summary"]["span_f1"] == pytest.approx(2 / 3)


def test_cross_validation_record_keeps_the_stored_json_shape() -> None:
    EchoModel.seen = []
    gold = [(sentence(i, f"R{i % 4}"), [Span(0, 3, "C1", "liked")]) for i in range(12)]
    result = cross_validate(gold, [s for s, _ in gold], [], k=4, seed=1, make_models=EchoModel)
    record = json.loads(json.dumps(result.to_dict()))
    assert record["k"] == 4 and record["grouped_by"] == "respondent"
    assert record["span_f1"] == {"mean": 1.0, "sd": 0.0}
    assert record["span_concept_f1"] == {"mean": 1.0, "sd": 0.0}
    assert [f["fold"] for f in record["folds"]] == [0, 1, 2, 3]
    assert record["folds"][0]["summary"]["span_f1"] == 1.0
    assert record["folds"][0]["result"]["span_f1"] == 1.0
