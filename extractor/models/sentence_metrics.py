"""How good sentence-level trait detection is: concepts per sentence, their stance, respondents.

Span scores (:mod:`extractor.models.metrics`) cannot judge a trait stated without a
phrase naming it. These figures look at whole sentences, counting both kinds of trait:
what a sentence states is the concepts of its mentions plus its implicit traits.

* ``concept``: micro precision, recall and F1 over ``(sentence, concept)`` pairs, and the
  same per concept (with its gold support), as scikit-learn's multi-label ``f1_score``
  with ``average="micro"`` computes them on binarized concept sets;
* ``stance``: accuracy of the predicted stance on the pairs found in both, where gold
  gives a stance (a concept stated twice in a sentence takes its first stance);
* ``respondent``: P/R/F1 over ``(respondent, concept, stance)`` triples from mentions and
  implicit traits together (:func:`extractor.models.metrics.respondent_scores`).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Protocol

from extractor.models.metrics import RespondentScores, SupportedPRF, respondent_scores
from extractor.nlp.spans import PRF, prf
from extractor.types import Implicit, Sentence, Span

Stated = Mapping[str, str | None]
"""The concepts one sentence states, each with its stance (``None``: none given)."""


class _Trait(Protocol):
    @property
    def concept(self) -> str | None: ...
    @property
    def stance(self) -> str | None: ...


@dataclass(frozen=True)
class SentenceScores:
    """The figures of :func:`sentence_scores`."""

    n_sentences: int
    concept: PRF
    by_concept: Mapping[str, SupportedPRF]
    stance_accuracy: float | None
    stance_n: int
    respondent: RespondentScores | None


def stated(spans: Iterable[_Trait], implicit: Iterable[Implicit] = ()) -> dict[str, str | None]:
    """Return the concepts a sentence states: its linked mentions', then its implicit traits.

    ``spans`` may be gold spans or predicted mentions (implicit ones included).
    """
    out: dict[str, str | None] = {}
    for concept, stance in [(s.concept, s.stance) for s in spans] + [
        (i.concept, i.stance) for i in implicit
    ]:
        if concept and concept not in out:
            out[concept] = stance
    return out


def _pairs(per_sentence: Sequence[Stated]) -> set[tuple[int, str]]:
    return {(n, c) for n, found in enumerate(per_sentence) for c in found}


def sentence_scores(
    sentences: Sequence[Sentence], gold: Sequence[Stated], pred: Sequence[Stated]
) -> SentenceScores:
    """Return concept P/R/F1 per sentence, stance accuracy on found pairs, respondent triples.

    Args:
        sentences: The scored sentences (their respondents group the triples).
        gold: Per sentence, the concepts it states with their stance (:func:`stated`).
        pred: The same, predicted, aligned with ``gold``.
    """
    gold_pairs, pred_pairs = _pairs(gold), _pairs(pred)
    hits = gold_pairs & pred_pairs
    concept = prf(len(hits), len(pred_pairs - hits), len(gold_pairs - hits))
    by_concept = {}
    for c in sorted({c for _, c in gold_pairs | pred_pairs}):
        g = {p for p in gold_pairs if p[1] == c}
        q = {p for p in pred_pairs if p[1] == c}
        both = len(g & q)
        by_concept[c] = SupportedPRF.with_support(prf(both, len(q) - both, len(g) - both), len(g))
    judged = [(gold[n][c], pred[n][c]) for n, c in hits if gold[n][c] is not None]
    accuracy = sum(g == p for g, p in judged) / len(judged) if judged else None
    as_spans = [[Span(0, 0, c, s) for c, s in found.items()] for found in gold]
    pred_spans = [[Span(0, 0, c, s) for c, s in found.items()] for found in pred]
    return SentenceScores(
        n_sentences=len(sentences),
        concept=concept,
        by_concept=by_concept,
        stance_accuracy=accuracy,
        stance_n=len(judged),
        respondent=respondent_scores(sentences, as_spans, pred_spans),
    )
