"""Conversions between character spans and IOB2 token tags, and strict span scores.

Tags follow IOB2 with the single entity type ``TRAIT`` (see :data:`extractor.types.TAGS`).
Decoding follows the *strict* IOB2 reading of seqeval (``mode="strict"``): an entity
starts only at ``B-TRAIT``; an ``I-TRAIT`` that follows ``O`` or opens the sentence
belongs to no entity and is dropped, together with the ``I-TRAIT`` tokens after it.
Scores count a predicted span as correct only when both boundaries match exactly.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from extractor.errors import InputError
from extractor.types import TAGS, Span

BEGIN, INSIDE, OUTSIDE = "B-TRAIT", "I-TRAIT", "O"


@dataclass(frozen=True)
class PRF:
    """Precision, recall and F1 with the counts they come from."""

    precision: float
    recall: float
    f1: float
    tp: int
    fp: int
    fn: int

    @property
    def gold(self) -> int:
        """How many gold items there were (true positives and misses)."""
        return self.tp + self.fn


def spans_to_iob(token_offsets: Sequence[tuple[int, int]], spans: Sequence[Span]) -> list[str]:
    """Return the IOB2 tag of every token, given spans in character offsets.

    A token belongs to a span when it overlaps it; a span that covers no token is
    ignored (it cannot be represented by these tokens). Overlapping spans are taken in
    order of start, and a later span never re-opens tokens an earlier one already holds.

    Args:
        token_offsets: ``(start, end)`` of each token, in order.
        spans: Character spans in the same text.

    Returns:
        One tag per token, each one of :data:`extractor.types.TAGS`.
    """
    tags = [OUTSIDE] * len(token_offsets)
    for span in sorted(spans, key=lambda s: (s.start, -s.end)):
        inside = [
            i
            for i, (start, end) in enumerate(token_offsets)
            if start < span.end and end > span.start and tags[i] == OUTSIDE
        ]
        if not inside:
            continue
        # Only the contiguous run from the first free token forms the entity, so a span
        # never becomes two entities around a token taken by an earlier span.
        tags[inside[0]] = BEGIN
        for previous, i in zip(inside, inside[1:], strict=False):
            if i != previous + 1:
                break
            tags[i] = INSIDE
    return tags


def spans_to_concepts(
    token_offsets: Sequence[tuple[int, int]], spans: Sequence[Span]
) -> list[str | None]:
    """Return, for every token, the concept of the span it lies in (``None`` outside spans)."""
    concepts: list[str | None] = [None] * len(token_offsets)
    for span in spans:
        for i, (start, end) in enumerate(token_offsets):
            if start < span.end and end > span.start and concepts[i] is None:
                concepts[i] = span.concept
    return concepts


def repair_iob(tags: Sequence[str]) -> list[str]:
    """Return the tags with each ``I-TRAIT`` after ``O`` or at the start made ``B-TRAIT``.

    A decoder may emit such a stray ``I-TRAIT``; read strictly it would be dropped, but
    the tagger did see a trait there, so the repair keeps it as an entity start.
    """
    out = list(tags)
    for i, tag in enumerate(out):
        if tag == INSIDE and (i == 0 or out[i - 1] == OUTSIDE):
            out[i] = BEGIN
    return out


def iob_to_spans(
    token_offsets: Sequence[tuple[int, int]],
    tags: Sequence[str],
    concepts: Sequence[str | None] | None = None,
) -> list[Span]:
    """Return the spans encoded by IOB2 tags, reading them strictly like seqeval.

    Args:
        token_offsets: ``(start, end)`` of each token, in order.
        tags: One tag per token, each one of :data:`extractor.types.TAGS`.
        concepts: Optional concept per token; a span takes the concept of its first token.

    Returns:
        Spans in character offsets, in order; a stray ``I-TRAIT`` yields no span.

    Raises:
        InputError: When the tags and tokens differ in number or a tag is unknown.
    """
    if len(tags) != len(token_offsets):
        raise InputError(
            f"The tag sequence must have one tag per token ({len(token_offsets)}); "
            f"got {len(tags)} tags, so retokenize the sentence before decoding."
        )
    spans: list[Span] = []
    open_start: int | None = None  # token index of the open entity's B
    last = -1
    for i, tag in enumerate(tags):
        if tag not in TAGS:
            raise InputError(f"Tag {tag!r} at token {i} must be one of {', '.join(TAGS)}.")
        if tag == INSIDE and open_start is not None:
            last = i
            continue
        if open_start is not None:
            spans.append(_span(token_offsets, open_start, last, concepts))
            open_start = None
        if tag == BEGIN:
            open_start, last = i, i
        # A stray I-TRAIT (after O or at the start) opens nothing: strict IOB2.
    if open_start is not None:
        spans.append(_span(token_offsets, open_start, last, concepts))
    return spans


def _span(
    token_offsets: Sequence[tuple[int, int]],
    first: int,
    last: int,
    concepts: Sequence[str | None] | None,
) -> Span:
    concept = concepts[first] if concepts is not None else None
    return Span(token_offsets[first][0], token_offsets[last][1], concept)


def span_prf(
    gold: Sequence[Sequence[Span]],
    pred: Sequence[Sequence[Span]],
    *,
    with_concept: bool = False,
) -> PRF:
    """Return strict micro precision, recall and F1 of predicted spans against gold spans.

    A predicted span is a true positive when a gold span of the same sentence has the
    same start and end (and the same concept when ``with_concept`` is true). Scores
    with no predictions (or no gold) are 0, as in seqeval.

    Args:
        gold: Gold spans per sentence.
        pred: Predicted spans per sentence, aligned with ``gold``.
        with_concept: Also require the concept IDs to be equal.

    Returns:
        The scores with the true positive, false positive and false negative counts.

    Raises:
        InputError: When ``gold`` and ``pred`` cover a different number of sentences.
    """
    if len(gold) != len(pred):
        raise InputError(
            f"Gold and predicted spans must cover the same sentences; got {len(gold)} "
            f"gold and {len(pred)} predicted sentences, so align them first."
        )
    tp = fp = fn = 0
    for gold_spans, pred_spans in zip(gold, pred, strict=True):
        gold_keys = {_key(s, with_concept) for s in gold_spans}
        pred_keys = {_key(s, with_concept) for s in pred_spans}
        hits = len(gold_keys & pred_keys)
        tp += hits
        fp += len(pred_keys) - hits
        fn += len(gold_keys) - hits
    return prf(tp, fp, fn)


def prf(tp: int, fp: int, fn: int) -> PRF:
    """Return precision, recall and F1 from counts; 0 where undefined, as in seqeval."""
    precision = tp / (tp + fp) if tp + fp else 0.0
    recall = tp / (tp + fn) if tp + fn else 0.0
    f1 = 2 * precision * recall / (precision + recall) if precision + recall else 0.0
    return PRF(precision=precision, recall=recall, f1=f1, tp=tp, fp=fp, fn=fn)


def _key(span: Span, with_concept: bool) -> tuple[int, int, str | None]:
    return (span.start, span.end, span.concept if with_concept else None)
