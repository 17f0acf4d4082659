"""Decoding for recall while the tagger has seen few labels.

Trained on a hundred or two gold sentences, the CRF is cautious: on MAMS (open data) its
spans have precision 0.69-0.76 and recall 0.59-0.65 at 100-200 labelled sentences. Its
token marginals know more than its best path: many missed aspect terms are tokens whose
TRAIT probability (``1 - P(O)``) is well above zero. :func:`recall_tags` adds to the best
path the runs of tokens whose TRAIT probability is at least a threshold, where the path
has no span. It is a small-data practice, like lowering a classifier's threshold while
its training set is small (common practice); with more labels the model's own path is
better, so :func:`extractor.models.tagger_training.fit_tagger` sets the threshold only
while the gold sentences are fewer than :data:`RECALL_BELOW` (figures in DEVELOPERS.md,
"What the model learns besides the labels").
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from extractor.nlp.spans import BEGIN, INSIDE, OUTSIDE

RECALL_THRESHOLD = 0.3
"""TRAIT probability from which a token outside the best path's spans is read as a trait."""

RECALL_BELOW = 250
"""Gold sentences below which :func:`~extractor.models.tagger_training.fit_tagger` decodes
for recall."""


def recall_tags(
    tags: Sequence[str], marginals: Sequence[Mapping[str, float]], threshold: float | None
) -> list[str]:
    """Return the best path's tags plus the probable trait runs outside its spans.

    The tokens with TRAIT probability ``1 - P(O) >= threshold`` are read as spans: a
    stretch of them, a new span wherever a token's ``B-TRAIT`` marginal exceeds its
    ``I-TRAIT`` one. Those spans that overlap no span of the path are added to it, so the
    path's spans are never changed, only joined by new ones.

    Args:
        tags: The best path, repaired IOB2 (see :func:`extractor.nlp.spans.repair_iob`).
        marginals: Each token's tag probabilities.
        threshold: The TRAIT probability from which a token counts; ``None`` returns
            ``tags`` unchanged.
    """
    out = list(tags)
    if threshold is None:
        return out
    likely = [1.0 - m[OUTSIDE] >= threshold for m in marginals]
    if not any(p and t == OUTSIDE for p, t in zip(likely, tags, strict=True)):
        return out  # the common case, checked cheaply: nothing probable off the path
    probable: list[str] = []
    for m, p in zip(marginals, likely, strict=True):
        if not p:
            probable.append(OUTSIDE)
        elif probable and probable[-1] != OUTSIDE and m[INSIDE] >= m[BEGIN]:
            probable.append(INSIDE)
        else:
            probable.append(BEGIN)
    start = 0
    while start < len(probable):
        end = start + 1
        while end < len(probable) and probable[end] == INSIDE:
            end += 1
        if probable[start] == BEGIN and all(t == OUTSIDE for t in tags[start:end]):
            out[start:end] = probable[start:end]
        start = end
    return out
