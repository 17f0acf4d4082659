import pytest
from statsmodels.stats.proportion import proportion_confint

from extractor.report.review_quality import ReviewedSentence, Share, review_quality
from extractor.types import Implicit, Span


def test_share_interval_is_statsmodels_wilson() -> None:
    # statsmodels' Wilson score interval is the outside reference.
    low, high = proportion_confint(41, 50, alpha=0.05, method="wilson")
    assert Share(41, 50).interval == pytest.approx((low, high))
    assert Share(41, 50).text() == f"0.82 (95% CI {low:.2f}–{high:.2f}; 41 of 50)"


def test_share_of_nothing_is_not_measured() -> None:
    assert Share(0, 0).value is None
    assert "not measured" in Share(0, 0).text()


def test_review_quality_counts_by_hand() -> None:
    sentences = [
        ReviewedSentence(
            "R1",
            [Span(0, 4, "C1", "liked"), Span(10, 15, "C2", "liked")],
            [Span(0, 4, "C1", "disliked")],
        ),
        ReviewedSentence(
            "R2",
            [Span(0, 3, "C2", "wanted")],
            [Span(0, 3, "C2", "wanted"), Span(5, 9, "C1", "liked")],
        ),
    ]
    q = review_quality(sentences)
    assert (q.mention_precision.k, q.mention_precision.n) == (2, 3)
    assert (q.full_precision.k, q.full_precision.n) == (1, 3)
    assert (q.mention_recall.k, q.mention_recall.n) == (2, 3)
    # respondent table: found {R1 C1 liked, R1 C2 liked, R2 C2 wanted};
    # reviewed {R1 C1 disliked, R2 C2 wanted, R2 C1 liked}: one in common.
    assert (q.table_precision.k, q.table_precision.n) == (1, 3)
    assert (q.table_recall.k, q.table_recall.n) == (1, 3)
    by = {c.concept: c for c in q.by_concept}
    assert (by["C1"].precision.k, by["C1"].precision.n) == (1, 1)
    assert (by["C1"].recall.k, by["C1"].recall.n) == (1, 2)


def test_measured_on_says_one_respondent_and_sentence_in_the_singular() -> None:
    one = review_quality([ReviewedSentence("R1", [], [Span(0, 4, "C1", "liked")])])
    assert one.measured_on == "1 reviewed respondent (1 sentence)"
    two = ReviewedSentence("R2", [], [])
    assert review_quality([two, two._replace(respondent="R3")]).measured_on == (
        "2 reviewed respondents (2 sentences)"
    )


def test_model_traits_without_words_count_in_the_respondent_table_only() -> None:
    # R1: the model found C1 liked with words and C3 wanted without; the reviewer kept
    # both (C3 as a trait without words). No words to compare for C3, so the mention
    # figures rest on C1 alone; the respondent table holds both, on either side.
    sentences = [
        ReviewedSentence(
            "R1",
            [Span(0, 4, "C1", "liked")],
            [Span(0, 4, "C1", "liked")],
            [Implicit("C3", "wanted")],
            [Implicit("C3", "wanted")],
        )
    ]
    q = review_quality(sentences)
    assert (q.mention_precision.k, q.mention_precision.n) == (1, 1)
    assert (q.table_precision.k, q.table_precision.n) == (2, 2)
    assert (q.table_recall.k, q.table_recall.n) == (2, 2)
