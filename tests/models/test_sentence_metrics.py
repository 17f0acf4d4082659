"""Tests of extractor.models.sentence_metrics against scikit-learn's multi-label F1."""

from __future__ import annotations

import pytest
from sklearn.metrics import f1_score
from sklearn.preprocessing import MultiLabelBinarizer

from extractor.models.sentence_metrics import sentence_scores, stated
from extractor.types import Implicit, Sentence, Span

SENTENCES = [Sentence(i, "x", "en", respondent=r) for i, r in enumerate("AABC")]
GOLD = [
    stated([Span(0, 1, "T:1", "liked")], [Implicit("T:2", "disliked")]),
    stated([], [Implicit("T:1", "liked")]),
    stated([Span(0, 1, "T:3", "wanted")]),
    stated([]),
]
PRED = [
    {"T:1": "liked", "T:2": "liked"},
    {},
    {"T:3": "wanted", "T:2": "neutral"},
    {"T:1": "liked"},
]


def test_concept_scores_equal_scikit_learn_micro_and_per_label() -> None:
    scores = sentence_scores(SENTENCES, GOLD, PRED)
    binarizer = MultiLabelBinarizer(classes=["T:1", "T:2", "T:3"]).fit([])
    y_true = binarizer.transform([list(g) for g in GOLD])
    y_pred = binarizer.transform([list(p) for p in PRED])
    # scikit-learn's f1_score is the outside reference for multi-label micro and per-label F1.
    assert scores.concept.f1 == pytest.approx(f1_score(y_true, y_pred, average="micro"))
    per_label = f1_score(y_true, y_pred, average=None)
    for concept, expected in zip(binarizer.classes_, per_label, strict=True):
        assert scores.by_concept[concept].f1 == pytest.approx(expected)
    assert scores.by_concept["T:1"].support == 2


def test_stance_accuracy_counts_found_pairs_only() -> None:
    scores = sentence_scores(SENTENCES, GOLD, PRED)
    # Found in both: (0, T:1) liked=liked, (0, T:2) disliked!=liked, (2, T:3) wanted=wanted.
    assert (scores.stance_n, scores.stance_accuracy) == (3, pytest.approx(2 / 3))


def test_respondent_triples_count_mentions_and_implicit_traits() -> None:
    scores = sentence_scores(SENTENCES, GOLD, PRED)
    assert scores.respondent is not None
    # Gold: (A,T:1,liked) (A,T:2,disliked) (B,T:3,wanted); predicted: (A,T:1,liked)
    # (A,T:2,liked) (B,T:3,wanted) (B,T:2,neutral) (C,T:1,liked): 2 hits, 3 false, 1 missed.
    assert (scores.respondent.tp, scores.respondent.fp, scores.respondent.fn) == (2, 3, 1)


def test_stated_keeps_the_first_stance_of_a_concept() -> None:
    found = stated([Span(0, 1, "T:1", "liked"), Span(2, 3, None)], [Implicit("T:1", "wanted")])
    assert found == {"T:1": "liked"}
