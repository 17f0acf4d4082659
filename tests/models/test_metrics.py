"""Scores of predicted mentions, checked against seqeval, scikit-learn and hand sums."""

from __future__ import annotations

import pytest
from seqeval.metrics import f1_score, precision_score, recall_score
from seqeval.scheme import IOB2
from sklearn.metrics import accuracy_score, confusion_matrix
from sklearn.metrics import f1_score as sk_f1

from extractor.errors import InputError
from extractor.models.metrics import (
    Summary,
    SupportedPRF,
    respondent_scores,
    score,
    stance_scores,
    summary,
)
from extractor.nlp.spans import iob_to_spans
from extractor.types import STANCES, Sentence, Span

B, I, O = "B-TRAIT", "I-TRAIT", "O"  # noqa: E741 -- the IOB2 tag letters themselves


def offsets_of(n: int) -> list[tuple[int, int]]:
    """Tokens of three characters separated by one space: token i is [4i, 4i+3)."""
    return [(4 * i, 4 * i + 3) for i in range(n)]


def sentence(i: int, respondent: str | None = None, lang: str = "en") -> Sentence:
    return Sentence(id=i, text="xxx " * 12, lang=lang, respondent=respondent)


# Whole corpora of (gold tags, predicted tags), every sequence well-formed IOB2.
CORPORA = {
    "perfect": [([B, I, O, B], [B, I, O, B])],
    "boundary-miss": [([B, I, O, O], [B, O, O, O]), ([O, B, O], [O, B, O])],
    "extra-and-missing": [([B, O, B, I], [B, O, O, O]), ([O, O, O], [B, I, O])],
    "no-prediction": [([B, O, B], [O, O, O])],
    "adjacent-entities": [([B, B, I, O], [B, I, I, O]), ([B, O, B, O], [B, O, B, O])],
}


@pytest.mark.parametrize("corpus", CORPORA.values(), ids=CORPORA.keys())
def test_span_scores_equal_seqeval_strict(corpus: list[tuple[list[str], list[str]]]) -> None:
    gold_tags = [g for g, _ in corpus]
    pred_tags = [p for _, p in corpus]
    gold = [(sentence(k), iob_to_spans(offsets_of(len(g)), g)) for k, g in enumerate(gold_tags)]
    pred = [iob_to_spans(offsets_of(len(p)), p) for p in pred_tags]
    ours = vars(score(gold, pred).span)
    # Source: seqeval, strict IOB2 mode.
    expected = {
        "precision": precision_score(gold_tags, pred_tags, mode="strict", scheme=IOB2),
        "recall": recall_score(gold_tags, pred_tags, mode="strict", scheme=IOB2),
        "f1": f1_score(gold_tags, pred_tags, mode="strict", scheme=IOB2),
    }
    for key, value in expected.items():
        assert ours[key] == pytest.approx(value)


def test_span_concept_requires_equal_concept() -> None:
    gold = [(sentence(0), [Span(0, 3, "C1"), Span(4, 7, "C2")])]
    pred = [[Span(0, 3, "C1"), Span(4, 7, "C9")]]
    result = score(gold, pred)
    # Hand count: spans 2/2 correct; with concept 1 of 2 predicted and 1 of 2 gold.
    assert result.span.f1 == pytest.approx(1.0)
    assert result.span_concept is not None
    assert result.span_concept.precision == pytest.approx(0.5)
    assert result.span_concept.recall == pytest.approx(0.5)
    assert result.by_concept["C2"] == SupportedPRF(
        precision=0.0, recall=0.0, f1=0.0, tp=0, fp=0, fn=1, support=1
    )


def test_respondent_scores_hand_computed() -> None:
    sentences = [sentence(0, "ANA"), sentence(1, "ANA"), sentence(2, "BEN")]
    gold = [
        [Span(0, 3, "C1", "liked")],
        [Span(4, 7, "C1", "liked"), Span(8, 11, "C2", "wanted")],
        [Span(0, 3, "C1", "disliked")],
    ]
    pred = [
        [Span(0, 3, "C1", "liked")],
        [Span(8, 11, "C2", "liked")],
        [Span(0, 3, "C1", "disliked"), Span(4, 7, "C3", "wanted")],
    ]
    # Hand arithmetic. Gold triples: (ANA,C1,liked), (ANA,C2,wanted), (BEN,C1,disliked)
    # = 3 (ANA's C1-liked twice counts once). Predicted: (ANA,C1,liked), (ANA,C2,liked),
    # (BEN,C1,disliked), (BEN,C3,wanted) = 4. Common: (ANA,C1,liked), (BEN,C1,disliked)
    # = 2. P = 2/4 = 0.5, R = 2/3, F1 = 2*0.5*(2/3)/(0.5+2/3) = (2/3)/(7/6) = 4/7.
    result = respondent_scores(sentences, gold, pred)
    assert result is not None
    assert result.precision == pytest.approx(0.5)
    assert result.recall == pytest.approx(2 / 3)
    assert result.f1 == pytest.approx(4 / 7)
    assert result.with_stance is True


def test_respondent_scores_none_without_concepts() -> None:
    assert respondent_scores([sentence(0, "ANA")], [[Span(0, 3)]], [[Span(0, 3)]]) is None


STANCE_PAIRS = {
    "balanced": [
        ("liked", "liked"),
        ("disliked", "liked"),
        ("wanted", "wanted"),
        ("neutral", "disliked"),
        ("liked", "liked"),
        ("disliked", "disliked"),
    ],
    "class-never-predicted": [
        ("liked", "disliked"),
        ("wanted", "disliked"),
        ("disliked", "disliked"),
    ],
    "all-correct": [("liked", "liked"), ("wanted", "wanted")],
}


@pytest.mark.parametrize("pairs", STANCE_PAIRS.values(), ids=STANCE_PAIRS.keys())
def test_stance_scores_equal_sklearn(pairs: list[tuple[str, str]]) -> None:
    result = stance_scores(pairs)
    assert result is not None
    y_true, y_pred = [g for g, _ in pairs], [p for _, p in pairs]
    # Source: scikit-learn metrics over the labels seen in gold or prediction.
    assert result.accuracy == pytest.approx(accuracy_score(y_true, y_pred))
    assert result.macro_f1 == pytest.approx(sk_f1(y_true, y_pred, average="macro", zero_division=0))
    # The label order is built here, independently: STANCES order, then only labels seen.
    labels = [s for s in STANCES if s in set(y_true) | set(y_pred)]
    assert list(result.labels) == labels
    assert [list(row) for row in result.confusion] == confusion_matrix(
        y_true, y_pred, labels=labels
    ).tolist()


def test_stance_only_counts_exact_span_matches() -> None:
    gold = [(sentence(0), [Span(0, 3, None, "liked"), Span(4, 11, None, "wanted")])]
    pred = [[Span(0, 3, None, "disliked"), Span(4, 7, None, "wanted")]]
    stance = score(gold, pred).stance
    # Hand count: only 0-3 matches exactly; its stance is wrong.
    assert stance is not None and stance.n == 1
    assert stance.accuracy == 0.0


def test_figures_are_null_where_they_do_not_apply() -> None:
    gold = [(sentence(0), [Span(0, 3)])]
    assert summary(score(gold, [[Span(0, 3)]])) == Summary(
        span_f1=1.0, span_concept_f1=None, stance_accuracy=None, respondent_f1=None
    )


def test_by_language_splits_sentences() -> None:
    gold = [(sentence(0, lang="en"), [Span(0, 3)]), (sentence(1, lang="fr"), [Span(0, 3)])]
    result = score(gold, [[Span(0, 3)], []])
    assert result.by_language["en"].span.f1 == 1.0
    assert result.by_language["fr"].span.f1 == 0.0


def test_score_rejects_misaligned_input() -> None:
    with pytest.raises(InputError, match="same sentences"):
        score([(sentence(0), [])], [])
