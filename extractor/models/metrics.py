"""How good the extraction is: span, concept, stance and respondent-level scores.

Every function here works on plain data (sentences, gold spans, predicted spans) and
returns plain JSON-able dicts, so results can be stored with a model version and shown
by the command line.

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

Each is broken down by concept and by language.

Cross-validation folds are grouped by respondent: all sentences of one person sit in
the same fold, so a model is never tested on a person whose other answers it was trained
on (people repeat their own phrasing; mixing them would flatter the scores).
"""

from __future__ import annotations

import random
import statistics
import time
from collections import defaultdict
from collections.abc import Callable, Iterable, Sequence
from typing import Any, Protocol

from extractor.errors import InputError
from extractor.nlp.spans import prf, span_prf
from extractor.progress import track
from extractor.types import STANCES, Sentence, Span

Gold = Sequence[tuple[Sentence, Sequence[Span]]]
"""Labeled sentences with their gold spans."""

NO_STANCE = "(none)"
"""The stance label of a predicted mention that carries no stance."""

SUMMARY_KEYS = ("span_f1", "span_concept_f1", "stance_accuracy", "respondent_f1")
"""The headline figures of :func:`summary`, in display order."""


class _MentionLike(Protocol):
    @property
    def start(self) -> int: ...
    @property
    def end(self) -> int: ...
    @property
    def concept(self) -> str | None: ...
    @property
    def stance(self) -> str | None: ...


# --------------------------------------------------------------------------- metrics


def stance_scores(pairs: Sequence[tuple[str, str]]) -> dict[str, Any] | None:
    """Return stance accuracy, macro-F1 and confusion table of ``(gold, predicted)`` pairs.

    Args:
        pairs: One ``(gold stance, predicted stance)`` per matched mention.

    Returns:
        ``{"n", "accuracy", "macro_f1", "per_stance", "labels", "confusion"}``, where
        ``confusion[i][j]`` counts gold ``labels[i]`` predicted as ``labels[j]``; ``None``
        when there are no pairs.
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
        per_stance[label] = prf(tp, fp, fn) | {"support": sum(confusion[i])}
    correct = sum(confusion[i][i] for i in range(len(labels)))
    return {
        "n": len(pairs),
        "accuracy": correct / len(pairs),
        "macro_f1": sum(v["f1"] for v in per_stance.values()) / len(labels),
        "per_stance": per_stance,
        "labels": labels,
        "confusion": confusion,
    }


def respondent_key(sentence: Sentence) -> str:
    """Return who a sentence belongs to; a sentence without a respondent stands alone."""
    return sentence.respondent if sentence.respondent is not None else f"#sentence-{sentence.id}"


def respondent_scores(
    sentences: Sequence[Sentence],
    gold: Sequence[Sequence[Span]],
    pred: Sequence[Sequence[_MentionLike]],
) -> dict[str, Any] | None:
    """Return P/R/F1 over per-respondent ``(respondent, concept, stance)`` triples.

    Returns:
        :func:`prf` plus ``with_stance`` and ``n_respondents``; ``None`` when no gold span
        has a concept (there is nothing to aggregate).
    """
    if not any(s.concept for spans in gold for s in spans):
        return None
    with_stance = any(s.stance for spans in gold for s in spans if s.concept)

    def triples(spans_per_sentence: Sequence[Sequence[_MentionLike]]) -> set[tuple[Any, ...]]:
        out: set[tuple[Any, ...]] = set()
        for sentence, spans in zip(sentences, spans_per_sentence, strict=True):
            for span in spans:
                if span.concept:
                    key = (respondent_key(sentence), span.concept)
                    out.add(key + ((span.stance,) if with_stance else ()))
        return out

    gold_set, pred_set = triples(gold), triples(pred)
    hits = len(gold_set & pred_set)
    return prf(hits, len(pred_set) - hits, len(gold_set) - hits) | {
        "with_stance": with_stance,
        "n_respondents": len({respondent_key(s) for s in sentences}),
    }


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


def _core(gold: Sequence[Sequence[Span]], pred: Sequence[Sequence[_MentionLike]]) -> dict[str, Any]:
    spans = _as_spans(pred)
    has_concepts = any(s.concept for g in gold for s in g)
    pairs = _stance_pairs(gold, pred)
    predicts_stance = any(m.stance for p in pred for m in p)
    return {
        "n_sentences": len(gold),
        "n_gold_spans": sum(len(g) for g in gold),
        "span": span_prf(gold, spans),
        "span_concept": span_prf(gold, spans, with_concept=True) if has_concepts else None,
        "stance": stance_scores(pairs) if predicts_stance else None,
    }


def score(gold: Gold, pred: Sequence[Sequence[_MentionLike]]) -> dict[str, Any]:
    """Return every figure for predicted mentions against gold spans.

    Args:
        gold: Labeled sentences and their gold spans (an empty list = no trait).
        pred: Predicted mentions (anything with ``start``, ``end``, ``concept`` and
            ``stance``, e.g. :class:`~extractor.types.Span` or a model's ``Mention``) per
            sentence, aligned with ``gold``.

    Returns:
        ``{"n_sentences", "n_gold_spans", "span", "span_concept", "stance",
        "respondent", "by_concept", "by_language"}``; a figure that does not apply
        (no concepts, no stances) is ``None``.

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
    result = _core(gold_spans, pred)
    result["respondent"] = respondent_scores(sentences, gold_spans, pred)
    result["by_concept"] = _by_concept(gold_spans, _as_spans(pred))
    by_lang: dict[str, list[int]] = defaultdict(list)
    for i, sentence in enumerate(sentences):
        by_lang[sentence.lang].append(i)
    result["by_language"] = {
        lang: _core([gold_spans[i] for i in idx], [pred[i] for i in idx])
        | {
            "respondent": respondent_scores(
                [sentences[i] for i in idx], [gold_spans[i] for i in idx], [pred[i] for i in idx]
            )
        }
        for lang, idx in sorted(by_lang.items())
    }
    return result


def _by_concept(gold: list[list[Span]], pred: list[list[Span]]) -> dict[str, dict[str, Any]]:
    concepts = sorted({s.concept for g in gold + pred for s in g if s.concept})
    out = {}
    for concept in concepts:
        g = [[s for s in spans if s.concept == concept] for spans in gold]
        p = [[s for s in spans if s.concept == concept] for spans in pred]
        out[concept] = span_prf(g, p, with_concept=True) | {"support": sum(map(len, g))}
    return out


def summary(result: dict[str, Any]) -> dict[str, float | None]:
    """Return the headline figures of a :func:`score` result, ``None`` where they do not apply."""

    def pick(key: str, field: str) -> float | None:
        part = result.get(key)
        return None if part is None else float(part[field])

    return {
        "span_f1": pick("span", "f1"),
        "span_concept_f1": pick("span_concept", "f1"),
        "stance_accuracy": pick("stance", "accuracy"),
        "respondent_f1": pick("respondent", "f1"),
    }


# --------------------------------------------------------------------------- models


class _Predictor(Protocol):
    def predict(self, sentences: Sequence[Sentence]) -> Sequence[Any]: ...


def predicted_mentions(predictions: Iterable[Any]) -> list[list[Span]]:
    """Return the mentions of model predictions (``SentencePrediction``s) as spans."""
    return [[Span(m.start, m.end, m.concept, m.stance) for m in p.mentions] for p in predictions]


def evaluate_on(models: _Predictor, gold: Gold) -> dict[str, Any]:
    """Score fitted models on an evaluation sample (labeled sentences they never saw).

    Args:
        models: Fitted models with ``predict(sentences) -> [SentencePrediction]``,
            e.g. :class:`extractor.models.bundle.TraitModels`.
        gold: The evaluation sentences and their gold spans.

    Returns:
        A :func:`score` result, plus ``"summary"`` (:func:`summary`) and the summary's
        figures at the top level too (``"span_f1"``...), where ``traits models`` reads them.
    """
    if not gold:
        raise InputError(
            "The evaluation sample holds no labeled sentence; label some sentences of it first."
        )
    result = score(gold, predicted_mentions(models.predict([s for s, _ in gold])))
    figures = summary(result)
    return result | {"summary": figures} | figures


def group_folds(groups: Sequence[str], k: int, seed: int = 0) -> list[list[int]]:
    """Split item indices into ``k`` folds so that no group is split between folds.

    Groups are shuffled with ``seed`` and then placed largest first, each into the fold
    with the fewest items so far, so the folds come out about the same size.

    Returns:
        ``k`` lists of indices (``min(k, number of groups)`` when there are fewer groups).

    Raises:
        InputError: ``k`` is below 2 or there are fewer than 2 groups.
    """
    members: dict[str, list[int]] = defaultdict(list)
    for i, group in enumerate(groups):
        members[group].append(i)
    if k < 2 or len(members) < 2:
        raise InputError(
            f"Cross-validation needs k >= 2 and at least 2 respondents; got k={k} and "
            f"{len(members)} respondent(s), so label sentences of more respondents."
        )
    names = sorted(members)
    random.Random(seed).shuffle(names)
    names.sort(key=lambda g: -len(members[g]))  # stable: shuffled order breaks ties
    folds: list[list[int]] = [[] for _ in range(min(k, len(names)))]
    for name in names:
        min(folds, key=len).extend(members[name])
    return [sorted(f) for f in folds]


ModelFactory = Callable[..., Any]


def _default_factory(**params: Any) -> Any:
    from extractor.models.bundle import TraitModels

    return TraitModels(**params)


def cross_validate(
    gold: Gold,
    corpus: Sequence[Sentence],
    aliases: Sequence[tuple[str, str, str]],
    *,
    k: int = 5,
    seed: int = 0,
    model_params: dict[str, Any] | None = None,
    clusters: dict[str, Any] | None = None,
    make_models: ModelFactory = _default_factory,
) -> dict[str, Any]:
    """Estimate how well models trained on the labels do on sentences they never saw.

    The labeled sentences are split into ``k`` folds grouped by respondent (see the
    module docstring). For each fold a fresh model is trained on the other folds'
    labels, with the whole corpus as unlabeled text (the held-out sentences stay in the
    corpus as text, but their labels are removed), and scored on the held-out fold.

    Args:
        gold: Labeled sentences and their spans.
        corpus: Every sentence of the workspace (unlabeled text).
        aliases: The concept list's aliases ``(concept_id, text, lang)``.
        k: Number of folds.
        seed: Seed of the fold assignment.
        model_params: Keyword arguments of the model (``TraitModels``).
        clusters: Word clusters to reuse across folds (they depend only on the corpus).
        make_models: Factory of the model, given ``model_params``; for tests.

    Returns:
        ``{"k", "seed", "grouped_by": "respondent", "mean": {...}, "sd": {...},
        "span_f1": {"mean", "sd"}, ... (each summary figure), "folds": [{"fold",
        "n_train", "n_test", "seconds", "summary", "result"}]}``, where ``mean`` and ``sd``
        are over folds of each :func:`summary` figure (``None`` when it applies to no fold).
    """
    folds = group_folds([respondent_key(s) for s, _ in gold], k, seed)
    per_fold = []
    for number, test_idx in track(enumerate(folds), "Cross-validating", len(folds)):
        held = set(test_idx)
        train = [g for i, g in enumerate(gold) if i not in held]
        test = [gold[i] for i in test_idx]
        started = time.perf_counter()
        models = make_models(**(model_params or {})).fit(train, corpus, aliases, clusters=clusters)
        result = evaluate_on(models, test)
        per_fold.append({
            "fold": number, "n_train": len(train), "n_test": len(test),
            "seconds": round(time.perf_counter() - started, 2),
            "summary": result["summary"], "result": result,
        })  # fmt: skip
    mean = _aggregate(per_fold, statistics.fmean)
    sd = _aggregate(per_fold, lambda v: statistics.stdev(v) if len(v) > 1 else 0.0)
    return {
        "k": len(folds),
        "seed": seed,
        "grouped_by": "respondent",
        "mean": mean,
        "sd": sd,
        **{key: {"mean": mean[key], "sd": sd[key]} for key in SUMMARY_KEYS},
        "folds": per_fold,
    }


def _aggregate(
    folds: Sequence[dict[str, Any]], fn: Callable[[list[float]], float]
) -> dict[str, float | None]:
    out: dict[str, float | None] = {}
    for key in SUMMARY_KEYS:
        values = [f["summary"][key] for f in folds if f["summary"][key] is not None]
        out[key] = fn(values) if values else None
    return out
