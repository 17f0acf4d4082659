"""How good the extraction is: span, concept, stance and respondent-level scores.

Every function here works on plain data (sentences, gold spans, predicted spans) and
returns small frozen records (:class:`ScoreReport` and its parts, :class:`Summary`);
``dataclasses.asdict`` turns them into the JSON stored with a model version.

Figures
-------
* ``span``: strict micro precision, recall and F1 of trait spans (both boundaries must
  match), as :func:`extractor.nlp.spans.span_prf` and seqeval's strict IOB2 mode compute them.
* ``span_concept``: the same, but the concept ID must match too (``None`` when no gold
  span carries a concept).
* ``stance``: accuracy and macro-F1 of stances over the predicted mentions whose span
  matches a gold span with a stance exactly, with a confusion table (rows gold, columns
  predicted). Macro-F1 averages over the stances seen in gold or prediction, scoring 0
  where a class has no prediction or no gold, as scikit-learn does.
* ``respondent``: precision, recall and F1 over the set of ``(respondent, concept,
  stance)`` triples -- what ends up in the per-respondent spreadsheet. A sentence with no
  respondent counts as a respondent of its own. When no gold span has a stance, the
  triples are ``(respondent, concept)`` pairs and ``with_stance`` says so.

Each is broken down by concept and by language. Cross-validation and scoring a model
on an evaluation sample are in :mod:`extractor.models.validation`.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, fields
from typing import Protocol

from extractor.errors import InputError
from extractor.nlp.spans import PRF, prf, span_prf
from extractor.types import STANCES, Sentence, Span

Gold = Sequence[tuple[Sentence, Sequence[Span]]]
"""Labeled sentences with their gold spans."""

NO_STANCE = "(none)"
"""The stance label of a predicted mention that carries no stance."""


class _MentionLike(Protocol):
    @property
    def start(self) -> int: ...
    @property
    def end(self) -> int: ...
    @property
    def concept(self) -> str | None: ...
    @property
    def stance(self) -> str | None: ...


class PredictionLike(Protocol):
    """What :func:`predicted_mentions` reads of a prediction: its mentions."""

    @property
    def mentions(self) -> Sequence[_MentionLike]:
        """The predicted mentions of one sentence."""
        ...


# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class SupportedPRF(PRF):
    """:class:`PRF` of one class or concept, with its number of gold items."""

    support: int

    @classmethod
    def with_support(cls, counts: PRF, support: int) -> SupportedPRF:
        """Return a :func:`~extractor.nlp.spans.prf` result with a support."""
        return cls(**vars(counts), support=support)

    @property
    def gold(self) -> int:
        """The support."""
        return self.support


@dataclass(frozen=True)
class RespondentScores(PRF):
    """:class:`PRF` over per-respondent triples; see :func:`respondent_scores`."""

    with_stance: bool
    n_respondents: int


@dataclass(frozen=True)
class StanceScores:
    """Stance accuracy, macro-F1 and confusion table; see :func:`stance_scores`."""

    n: int
    accuracy: float
    macro_f1: float
    per_stance: Mapping[str, SupportedPRF]
    labels: tuple[str, ...]
    confusion: tuple[tuple[int, ...], ...]


@dataclass(frozen=True)
class GroupScores:
    """The figures of one group of sentences (all of them, or one language)."""

    n_sentences: int
    n_gold_spans: int
    span: PRF
    span_concept: PRF | None
    stance: StanceScores | None
    respondent: RespondentScores | None


@dataclass(frozen=True)
class ScoreReport(GroupScores):
    """Every figure of :func:`score`: the whole, by concept and by language."""

    by_concept: Mapping[str, SupportedPRF]
    by_language: Mapping[str, GroupScores]


@dataclass(frozen=True)
class Summary:
    """The headline figures of a :class:`ScoreReport`, ``None`` where they do not apply."""

    span_f1: float | None
    span_concept_f1: float | None
    stance_accuracy: float | None
    respondent_f1: float | None


SUMMARY_KEYS = tuple(f.name for f in fields(Summary))
"""The headline figures of :func:`summary`, in display order."""


# --------------------------------------------------------------------------- metrics


def stance_scores(pairs: Sequence[tuple[str, str]]) -> StanceScores | None:
    """Return stance accuracy, macro-F1 and confusion table of ``(gold, predicted)`` pairs.

    Args:
        pairs: One ``(gold stance, predicted stance)`` per matched mention.

    Returns:
        The scores, where ``confusion[i][j]`` counts gold ``labels[i]`` predicted as
        ``labels[j]``; ``None`` when there are no pairs.
    """
    if not pairs:
        return None
    seen = {g for g, _ in pairs} | {p for _, p in pairs}
    labels = [s for s in STANCES if s in seen] + sorted(seen - set(STANCES))
    index = {label: i for i, label in enumerate(labels)}
    confusion = [[0] * len(labels) for _ in labels]
    for gold, pred in pairs:
        confusion[index[gold]][index[pred]] += 1
    per_stance = {}
    for i, label in enumerate(labels):
        tp = confusion[i][i]
        fp = sum(confusion[r][i] for r in range(len(labels))) - tp
        fn = sum(confusion[i]) - tp
        per_stance[label] = SupportedPRF.with_support(prf(tp, fp, fn), sum(confusion[i]))
    correct = sum(confusion[i][i] for i in range(len(labels)))
    return StanceScores(
        n=len(pairs),
        accuracy=correct / len(pairs),
        macro_f1=sum(v.f1 for v in per_stance.values()) / len(labels),
        per_stance=per_stance,
        labels=tuple(labels),
        confusion=tuple(tuple(row) for row in confusion),
    )


def respondent_key(sentence: Sentence) -> str:
    """Return who a sentence belongs to; a sentence without a respondent stands alone."""
    return sentence.respondent if sentence.respondent is not None else f"#sentence-{sentence.id}"


def respondent_scores(
    sentences: Sequence[Sentence],
    gold: Sequence[Sequence[Span]],
    pred: Sequence[Sequence[_MentionLike]],
) -> RespondentScores | None:
    """Return P/R/F1 over per-respondent ``(respondent, concept, stance)`` triples.

    Returns:
        The scores, with ``with_stance`` and ``n_respondents``; ``None`` when no gold
        span has a concept (there is nothing to aggregate).
    """
    if not any(s.concept for spans in gold for s in spans):
        return None
    with_stance = any(s.stance for spans in gold for s in spans if s.concept)

    def triples(
        spans_per_sentence: Sequence[Sequence[_MentionLike]],
    ) -> set[tuple[str | None, ...]]:
        out: set[tuple[str | None, ...]] = set()
        for sentence, spans in zip(sentences, spans_per_sentence, strict=True):
            for span in spans:
                if span.concept:
                    key = (respondent_key(sentence), span.concept)
                    out.add(key + ((span.stance,) if with_stance else ()))
        return out

    gold_set, pred_set = triples(gold), triples(pred)
    hits = len(gold_set & pred_set)
    counts = prf(hits, len(pred_set) - hits, len(gold_set) - hits)
    return RespondentScores(
        **vars(counts),
        with_stance=with_stance,
        n_respondents=len({respondent_key(s) for s in sentences}),
    )


def _stance_pairs(
    gold: Sequence[Sequence[Span]], pred: Sequence[Sequence[_MentionLike]]
) -> list[tuple[str, str]]:
    pairs = []
    for gold_spans, pred_spans in zip(gold, pred, strict=True):
        wanted = {(s.start, s.end): s.stance for s in gold_spans if s.stance}
        for mention in pred_spans:
            if (mention.start, mention.end) in wanted:
                pairs.append((wanted[(mention.start, mention.end)], mention.stance or NO_STANCE))
    return pairs


def _as_spans(pred: Sequence[Sequence[_MentionLike]]) -> list[list[Span]]:
    return [[Span(m.start, m.end, m.concept, m.stance) for m in spans] for spans in pred]


def _group(
    sentences: Sequence[Sentence],
    gold: Sequence[Sequence[Span]],
    pred: Sequence[Sequence[_MentionLike]],
) -> GroupScores:
    spans = _as_spans(pred)
    has_concepts = any(s.concept for g in gold for s in g)
    predicts_stance = any(m.stance for p in pred for m in p)
    return GroupScores(
        n_sentences=len(gold),
        n_gold_spans=sum(len(g) for g in gold),
        span=span_prf(gold, spans),
        span_concept=span_prf(gold, spans, with_concept=True) if has_concepts else None,
        stance=stance_scores(_stance_pairs(gold, pred)) if predicts_stance else None,
        respondent=respondent_scores(sentences, gold, pred),
    )


def score(gold: Gold, pred: Sequence[Sequence[_MentionLike]]) -> ScoreReport:
    """Return every figure for predicted mentions against gold spans.

    Args:
        gold: Labeled sentences and their gold spans (an empty list = no trait).
        pred: Predicted mentions (anything with ``start``, ``end``, ``concept`` and
            ``stance``, e.g. :class:`~extractor.types.Span` or a model's ``Mention``) per
            sentence, aligned with ``gold``.

    Returns:
        The figures; one that does not apply (no concepts, no stances) is ``None``.

    Raises:
        InputError: ``gold`` and ``pred`` cover a different number of sentences.
    """
    if len(gold) != len(pred):
        raise InputError(
            f"Gold and predicted mentions must cover the same sentences; got {len(gold)} "
            f"gold and {len(pred)} predicted sentences, so align them first."
        )
    sentences = [s for s, _ in gold]
    gold_spans = [list(spans) for _, spans in gold]
    by_lang: dict[str, list[int]] = defaultdict(list)
    for i, sentence in enumerate(sentences):
        by_lang[sentence.lang].append(i)
    return ScoreReport(
        **vars(_group(sentences, gold_spans, pred)),
        by_concept=_by_concept(gold_spans, _as_spans(pred)),
        by_language={
            lang: _group(
                [sentences[i] for i in idx], [gold_spans[i] for i in idx], [pred[i] for i in idx]
            )
            for lang, idx in sorted(by_lang.items())
        },
    )


def _by_concept(gold: list[list[Span]], pred: list[list[Span]]) -> dict[str, SupportedPRF]:
    concepts = sorted({s.concept for g in gold + pred for s in g if s.concept})
    out = {}
    for concept in concepts:
        g = [[s for s in spans if s.concept == concept] for spans in gold]
        p = [[s for s in spans if s.concept == concept] for spans in pred]
        out[concept] = SupportedPRF.with_support(
            span_prf(g, p, with_concept=True), sum(map(len, g))
        )
    return out


def summary(result: GroupScores) -> Summary:
    """Return the headline figures of a :func:`score` result, ``None`` where they do not apply."""
    return Summary(
        span_f1=result.span.f1,
        span_concept_f1=None if result.span_concept is None else result.span_concept.f1,
        stance_accuracy=None if result.stance is None else result.stance.accuracy,
        respondent_f1=None if result.respondent is None else result.respondent.f1,
    )


def predicted_mentions(predictions: Iterable[PredictionLike]) -> list[list[Span]]:
    """Return the mentions of model predictions (``SentencePrediction``s) as spans."""
    return [[Span(m.start, m.end, m.concept, m.stance) for m in p.mentions] for p in predictions]
