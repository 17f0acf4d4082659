"""Span <-> IOB2 conversions and strict span scores, checked against seqeval."""

from __future__ import annotations

import pytest
from seqeval.metrics import f1_score, precision_score, recall_score
from seqeval.metrics.sequence_labeling import get_entities
from seqeval.scheme import IOB2, Entities

from extractor.errors import InputError
from extractor.nlp.spans import iob_to_spans, repair_iob, span_prf, spans_to_iob
from extractor.types import Span

B, I, O = "B-TRAIT", "I-TRAIT", "O"  # noqa: E741 (the tag names themselves)


def offsets_of(n: int) -> list[tuple[int, int]]:
    """Tokens of three characters separated by one space: token i is [4i, 4i+3)."""
    return [(4 * i, 4 * i + 3) for i in range(n)]


def seqeval_strict_spans(tags: list[str]) -> list[tuple[int, int]]:
    """Token ranges [first, last] of the entities seqeval reads in strict IOB2 mode."""
    return [(e.start, e.end - 1) for e in Entities([tags], IOB2).entities[0]]


WELL_FORMED = {
    "single-token": [O, B, O],
    "multi-token": [B, I, I, O],
    "adjacent-B-B": [B, B, O],
    "B-I-then-B": [B, I, B, I],
    "entity-at-end": [O, O, B, I],
    "entity-at-start-and-end": [B, O, O, B],
    "no-entity": [O, O, O],
}

MALFORMED = {
    "I-after-O": [O, I, I, O],
    "I-at-start": [I, O, B],
    "I-after-O-then-B": [O, I, B, I],
    "I-after-O-at-end": [B, O, I],
}


@pytest.mark.parametrize("tags", WELL_FORMED.values(), ids=WELL_FORMED.keys())
def test_iob_to_spans_matches_seqeval_get_entities(tags: list[str]) -> None:
    # Outside check: seqeval.metrics.sequence_labeling.get_entities (seqeval 1.2.2)
    # gives (type, first, last) token indices; on well-formed IOB2 it is the reference.
    offsets = offsets_of(len(tags))
    expected = [Span(offsets[s][0], offsets[e][1]) for _, s, e in get_entities(tags)]
    assert iob_to_spans(offsets, tags) == expected


@pytest.mark.parametrize(
    "tags", [*WELL_FORMED.values(), *MALFORMED.values()], ids=[*WELL_FORMED, *MALFORMED]
)
def test_iob_to_spans_matches_seqeval_strict_entities(tags: list[str]) -> None:
    # Outside check: seqeval.scheme.Entities(..., IOB2), the reader behind
    # mode="strict", which drops an I- that follows O or opens the sentence.
    offsets = offsets_of(len(tags))
    expected = [Span(offsets[s][0], offsets[e][1]) for s, e in seqeval_strict_spans(tags)]
    assert iob_to_spans(offsets, tags) == expected


@pytest.mark.parametrize("tags", WELL_FORMED.values(), ids=WELL_FORMED.keys())
def test_spans_to_iob_round_trips_well_formed_tags(tags: list[str]) -> None:
    offsets = offsets_of(len(tags))
    assert spans_to_iob(offsets, iob_to_spans(offsets, tags)) == tags


def test_spans_to_iob_covers_tokens_partly_inside_a_span() -> None:
    # "soft grains" with a span ending mid-token: the touched token belongs to it.
    assert spans_to_iob([(0, 4), (5, 11)], [Span(0, 7)]) == [B, I]


def test_spans_to_iob_ignores_span_between_tokens() -> None:
    assert spans_to_iob([(0, 4), (6, 9)], [Span(4, 6)]) == [O, O]


def test_iob_to_spans_keeps_concept_of_first_token() -> None:
    spans = iob_to_spans(offsets_of(3), [B, I, O], ["TR:9", "TR:9", None])
    assert spans == [Span(0, 7, "TR:9")]


def test_iob_to_spans_rejects_unknown_tag() -> None:
    with pytest.raises(InputError, match="must be one of"):
        iob_to_spans(offsets_of(2), [B, "B-PER"])


def test_iob_to_spans_rejects_length_mismatch() -> None:
    with pytest.raises(InputError, match="one tag per token"):
        iob_to_spans(offsets_of(3), [B, I])


@pytest.mark.parametrize(
    ("tags", "expected"),
    [([I, I, O], [B, I, O]), ([O, I, O, I], [O, B, O, B]), ([B, I, B], [B, I, B])],
    ids=["start", "after-O", "valid-untouched"],
)
def test_repair_iob_turns_stray_inside_into_begin(tags: list[str], expected: list[str]) -> None:
    assert repair_iob(tags) == expected
    # Source: seqeval's lenient (conlleval) reading, where a stray I- starts a chunk: the
    # repaired tags must read as the same chunks under it.
    assert get_entities(repair_iob(tags)) == get_entities(tags)


# Gold and predicted tag sequences, scored by seqeval strict IOB2 as the reference.
SCORING_CASES = {
    "perfect": ([[B, I, O, B]], [[B, I, O, B]]),
    "boundary-too-short": ([[B, I, O]], [[B, O, O]]),
    "stray-I-in-prediction": ([[B, I, O]], [[I, I, O]]),
    "adjacent-B-B-vs-one-span": ([[B, I, O]], [[B, B, O]]),
    "entity-at-end-missed": ([[O, B, O, B]], [[O, B, O, O]]),
    "extra-prediction": ([[O, O, O], [B, O, O]], [[B, O, O], [B, O, O]]),
    "two-sentences-mixed": ([[B, I, O, B], [O, B, I]], [[B, I, O, O], [O, B, I]]),
    "nothing-predicted": ([[B, O]], [[O, O]]),
}


@pytest.mark.parametrize(
    ("gold_tags", "pred_tags"), SCORING_CASES.values(), ids=SCORING_CASES.keys()
)
def test_span_prf_matches_seqeval_strict(
    gold_tags: list[list[str]], pred_tags: list[list[str]]
) -> None:
    # Outside check: seqeval.metrics precision/recall/f1 with mode="strict", scheme=IOB2.
    gold = [iob_to_spans(offsets_of(len(t)), t) for t in gold_tags]
    pred = [iob_to_spans(offsets_of(len(t)), t) for t in pred_tags]
    scores = span_prf(gold, pred)
    kw = {"mode": "strict", "scheme": IOB2, "zero_division": 0}
    assert scores.precision == pytest.approx(precision_score(gold_tags, pred_tags, **kw))
    assert scores.recall == pytest.approx(recall_score(gold_tags, pred_tags, **kw))
    assert scores.f1 == pytest.approx(f1_score(gold_tags, pred_tags, **kw))


def test_span_prf_counts_hits_and_misses() -> None:
    scores = span_prf([[Span(0, 4), Span(6, 9)]], [[Span(0, 4), Span(5, 9)]])
    assert (scores.tp, scores.fp, scores.fn) == (1, 1, 1)


def test_span_prf_with_concept_requires_same_concept() -> None:
    gold = [[Span(0, 4, "TR:1")]]
    pred = [[Span(0, 4, "TR:2")]]
    assert span_prf(gold, pred).f1 == 1.0
    assert span_prf(gold, pred, with_concept=True).f1 == 0.0


def test_span_prf_rejects_unaligned_inputs() -> None:
    with pytest.raises(InputError, match="same sentences"):
        span_prf([[Span(0, 1)]], [])
