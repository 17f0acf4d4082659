"""Training the trait tagger from gold-labelled and dictionary-labelled sentences.

Silver data and its false negatives
-----------------------------------
Silver sentences are labelled by the dictionary, which is never complete: a trait
word it lacks is labelled ``O`` although it is a trait, and the CRF learns to miss
it. ``silver_filter`` chooses the remedy (see :data:`SILVER_FILTERS`):

* ``"all"``: every silver sentence as labelled (no remedy);
* ``"matched"``: only silver sentences with at least one dictionary match, since a
  sentence without any is as likely an unlisted trait as no trait at all;
* ``"gold-check"``: additionally drop silver sentences in which a model trained on
  the gold sentences gives a token outside the matches a TRAIT probability of at least
  ``silver_threshold`` (falls back to ``"matched"`` without gold);
* ``"self-train"`` (default): keep those sentences but add the gold model's confident
  spans to their labels (one round of self-training; falls back to ``"matched"``
  without gold).

Measured on MAMS aspect terms (200 gold train sentences, the other 4,097 train
sentences as silver from a dictionary of a random half of the train aspect terms;
strict span F1 on the test split; L-BFGS, c1=0.05, c2=0.01, 100 iterations, no
clusters): dictionary alone 0.478; gold only 0.650; gold +
silver with ``"all"`` 0.555, ``"matched"`` 0.554, ``"gold-check"`` 0.639,
``"self-train"`` 0.652. With the default SGD trainer (c2=2.0): gold only 0.659,
``"all"`` 0.545, ``"self-train"`` 0.669. Unremedied silver costs ten points or more;
self-training wins them back.

Self-training on sentences the dictionary says nothing about
-----------------------------------------------------------
``self_sentences`` (0, off, by default) lets the gold model label up to that many silver
sentences in which the dictionary matches nothing (every silver sentence when there is
no dictionary), keeping those whose best tag path has a probability of at least
``self_threshold``; ``self_rounds`` above 1 relabels them with the model trained on
them. Measured on MAMS without a dictionary (``tests/bench/few_labels.py``: random
100 / 200 train sentences labelled, the rest of the train split unlabelled, span F1 on
the val split, paired by draw): 2,000 sentences at 0.5 gained +0.2 / +0.4 points
(5 draws; +0.2 / +0.8 with ``gold_weight`` 3), 4,000 at 0.5 +0.6 / +1.2 and at 0.9
+0.4 / +0.5 (3 draws), at 10 to 20 times the training time, so it stays off.

Decoding for recall on few gold sentences
-----------------------------------------
While there are gold sentences, but fewer than ``recall_below`` (250), the returned
tagger decodes for recall (:mod:`extractor.models.recall_decoding`): its best path plus
the tokens of TRAIT probability at least ``recall_threshold`` (0.3) outside its spans. On
MAMS val (random subsets, 5 draws) that gained +0.7 / +1.1 points at 100 / 200 labels and
lost 0.2 / 0.4 at 300 / 400; in the labeling simulation (10 repeats) +2.0 / +0.3 / +0.0 /
+0.9 / +1.0 at 25 / 50 / 100 / 150 / 200 labels with the default strategy. Without gold
(the dictionary alone) it lost 1.5 points on the demo, so it waits for the first label.

Main-axis coordinates on few gold sentences
-------------------------------------------
While there are gold sentences, but fewer than ``axes_below`` (:data:`AXES_BELOW`, 250),
every sentence's features end each word's own attributes with its coordinates on 16 main
axes of the pretrained space (float-valued attributes, ``TraitTagger.space_axes``; the
cluster model's ``pretrained["axes"]``): a hundred labelled sentences name few words, and
the coordinates let a weight learned on one word reach words of like meaning. On MAMS val
(random subsets, 5 draws, on top of the recall decoding) they gained +0.4 / +0.3 points
at 100 / 200 labels; as float features on the full train split they lost (DEVELOPERS.md,
"Tagger figures"), hence the gate. Cluster models learned before them have no axes, and
their taggers train as before.

Silver sentences are featurised *without* dictionary features: their labels are the
dictionary, so the CRF would otherwise learn "dictionary says B, so B" and nothing
about the words. Gold sentences carry dictionary features, so the CRF learns from the
analyst's labels how far to trust the dictionary.
"""

from __future__ import annotations

import random
from collections.abc import Mapping, Sequence
from typing import Any, TypeVar

from extractor.errors import InputError
from extractor.models.recall_decoding import RECALL_BELOW, RECALL_THRESHOLD
from extractor.models.tagger import Features, TraitTagger, sentence_items
from extractor.models.tagger_calibration import NEEDS_CALIBRATION, cross_fitted_temperature
from extractor.nlp.dictionary import Dictionary
from extractor.nlp.features import Attributes, Clusters
from extractor.nlp.spans import OUTSIDE, iob_to_spans, spans_to_iob
from extractor.types import Sentence, Span

SILVER_FILTERS = ("all", "matched", "gold-check", "self-train")
AXES_BELOW = 250
"""Gold sentences below which :func:`fit_tagger` trains on the words' coordinates on
the pretrained space's main axes too (see the module docstring)."""
T = TypeVar("T")


def fit_tagger(
    gold: Sequence[tuple[Sentence, Sequence[Span]]],
    silver_sentences: Sequence[Sentence],
    dictionary: Dictionary | None,
    clusters: Clusters | None,
    *,
    gold_weight: int = 10,
    silver_filter: str = "self-train",
    silver_threshold: float = 0.5,
    self_sentences: int = 0,
    self_threshold: float = 0.9,
    self_rounds: int = 1,
    recall_threshold: float | None = RECALL_THRESHOLD,
    recall_below: int = RECALL_BELOW,
    calibrate: bool | None = None,
    axes_below: int = AXES_BELOW,
    **params: Any,
) -> TraitTagger:
    """Train a tagger from gold-labelled sentences and dictionary-labelled silver sentences.

    Args:
        gold: Sentences with the analyst's spans (an empty list means "none").
        silver_sentences: Unlabelled sentences, labelled by ``dictionary`` (ignored without one).
        dictionary: The concept dictionary, or ``None``.
        clusters: Word-cluster model, or ``None``.
        gold_weight: Each gold sentence counts this many times a silver one (it is
            repeated; without silver sentences it is not). 10 rather than 3 lifted the
            demo's learning curve (span F1 at 100 and 200 labels, tagger alone, 3
            repeats: random .493/.518 and the default strategy .526/.541, against
            .478/.512 and .492/.522 with 3).
        silver_filter: How to guard against the dictionary's false negatives, one of
            :data:`SILVER_FILTERS` (see the module docstring).
        silver_threshold: TRAIT probability above which the gold model disagrees with an ``O``.
        self_sentences: How many silver sentences in which the dictionary matches nothing
            (all of them without a dictionary; a seeded sample when there are more) the gold
            model may label itself (self-training, see the module docstring); 0 for none.
        self_threshold: The probability of its best tag path above which the gold model's
            tags of such a sentence are trained on.
        self_rounds: Rounds of self-training: after the first, the model trained on gold,
            silver and the self-labelled sentences labels them again.
        recall_threshold: While there are gold sentences but fewer than ``recall_below``,
            the tagger decodes for recall with this threshold
            (:mod:`extractor.models.recall_decoding`); ``None`` never.
        recall_below: The number of gold sentences from which the tagger's best path alone
            is read.
        calibrate: Fit the temperature of the tagger's probabilities (and of the gold
            model that judges silver sentences) by cross-fitting on the gold sentences
            (:mod:`~extractor.models.tagger_calibration`); ``None``: when the trainer is
            not trained for likelihood (``tagger_calibration.NEEDS_CALIBRATION``) and
            ``params`` set no temperature.
        axes_below: While there are gold sentences but fewer than this, every sentence's
            features include its words' coordinates on the pretrained space's main axes
            (``TraitTagger.space_axes``); 0 never.
        **params: Arguments of :class:`TraitTagger`.

    Returns:
        The fitted tagger, remembering the clusters' fingerprint.

    Raises:
        InputError: When ``silver_filter`` or ``gold_weight`` is invalid, or nothing is
            left to train on.
    """
    if silver_filter not in SILVER_FILTERS:
        raise InputError(
            f"silver_filter must be one of {', '.join(SILVER_FILTERS)}; got {silver_filter!r}."
        )
    if gold_weight < 1:
        raise InputError(f"gold_weight must be a whole number of at least 1; got {gold_weight!r}.")
    if calibrate is None:
        algorithm = TraitTagger(**params).get_params()["algorithm"]
        calibrate = algorithm in NEEDS_CALIBRATION and "temperature" not in params
    X: list[list[Attributes]] = []
    y: list[list[str]] = []
    axes = 0 < len(gold) < axes_below
    for sentence, spans in gold:
        offsets, feats, _ = sentence_items(sentence, dictionary, clusters, axes=axes)
        tags = spans_to_iob(offsets, spans)
        X += [feats] * gold_weight
        y += [tags] * gold_weight
    sx: list[list[Attributes]] = []
    sy: list[list[str]] = []
    # The gold model that judges silver sentences must see them as they will be
    # trained on, without dictionary features, so it is trained without them too.
    judged = silver_sentences and (dictionary is not None or self_sentences)
    gold_plain = (
        [sentence_items(s, None, clusters, axes=axes)[1] for s, _ in gold] if judged else []
    )
    unmatched: list[list[Attributes]] = []
    if dictionary is not None and silver_sentences:
        sx, sy, unmatched = _silver(
            silver_sentences,
            dictionary,
            clusters,
            gold_plain,
            y[::gold_weight],
            silver_filter,
            silver_threshold,
            _judge_params(params, gold_weight),
            calibrate,
            axes,
        )
    elif self_sentences:
        sample = _sample(silver_sentences, self_sentences)
        unmatched = [sentence_items(s, None, clusters, axes=axes)[1] for s in sample]
    has_gold_traits = any(t != OUTSIDE for tags in y for t in tags)
    if self_sentences and self_rounds and unmatched and has_gold_traits:
        judge = _fit_judge(
            _judge_params(params, gold_weight), gold_plain, y[::gold_weight], calibrate
        )
        pool = _sample(unmatched, self_sentences)
        for round_no in range(self_rounds):
            ex, ey = _self_labelled(judge, pool, self_threshold)
            if round_no + 1 < self_rounds:
                judge = TraitTagger(**params).fit(X + sx + ex, y + sy + ey)
        sx, sy = sx + ex, sy + ey
    gold_X, gold_y = X[::gold_weight], y[::gold_weight]
    if not sx:
        # The weight is relative to silver sentences; without any, repeating the gold
        # ones would only change the SGD schedule, which max_iterations controls.
        X, y = gold_X, gold_y
    tagger = TraitTagger(**params).fit(X + sx, y + sy)
    if calibrate:
        tagger.temperature = cross_fitted_temperature(
            params, gold_X, gold_y, weight=gold_weight if sx else 1, extra_X=sx, extra_y=sy
        )
    if 0 < len(gold) < recall_below:
        tagger.recall_threshold = recall_threshold
    tagger.space_axes = axes
    tagger.clusters_fingerprint_ = clusters.get("fingerprint") if clusters else None
    return tagger


JUDGE_EPOCHS = 2
"""The gold model's epochs, as a multiple of the tagger's."""


def _judge_params(params: Mapping[str, Any], gold_weight: int) -> dict[str, Any]:
    """Return the parameters of the gold model that judges silver sentences.

    It is trained on each gold sentence once, with the regularisation divided by
    ``gold_weight`` (the objective of the gold sentences repeated ``gold_weight`` times)
    and :data:`JUDGE_EPOCHS` times the epochs, rather than on the repeated sentences:
    a tenth of the data to pass over, a third of the time. On the tagger benchmark's 100
    gold and 1,900 silver sentences it flagged 49 of the 50 spans the repeated model
    flagged, and 7 more (1,088 of 1,096 silver sentences unchanged).
    """
    defaults = TraitTagger(**params).get_params()
    return {
        **params,
        "c1": defaults["c1"] / gold_weight,
        "c2": defaults["c2"] / gold_weight,
        "max_iterations": defaults["max_iterations"] * JUDGE_EPOCHS,
    }


def _fit_judge(
    params: Mapping[str, Any], X: Sequence[Features], y: Sequence[Sequence[str]], calibrate: bool
) -> TraitTagger:
    """Return the gold model that judges silver sentences, calibrated when asked."""
    judge = TraitTagger(**params).fit(X, y)
    if calibrate:
        judge.temperature = cross_fitted_temperature(params, X, y)
    return judge


def _silver(
    sentences: Sequence[Sentence],
    dictionary: Dictionary,
    clusters: Clusters | None,
    judge_X: Sequence[Features],
    gold_y: list[list[str]],
    silver_filter: str,
    threshold: float,
    params: Mapping[str, Any],
    calibrate: bool = False,
    axes: bool = False,
) -> tuple[list[list[Attributes]], list[list[str]], list[list[Attributes]]]:
    """Return features and dictionary labels of the silver sentences kept by the filter.

    ``judge_X`` are the gold sentences' features without dictionary features (each
    sentence once), with their tags ``gold_y``; ``params`` are the judge's. The third
    list holds the features of the sentences the dictionary matches nothing in (empty
    with ``"all"``, which trains on them as they are).
    """
    items = [
        sentence_items(s, dictionary, clusters, dictionary_features=False, axes=axes)
        for s in sentences
    ]
    if silver_filter == "all":
        return [f for _, f, _ in items], [spans_to_iob(o, m) for o, _, m in items], []
    unmatched = [f for _, f, m in items if not m]
    items = [item for item in items if item[2]]
    has_gold_traits = any(t != OUTSIDE for tags in gold_y for t in tags)
    if silver_filter == "matched" or not has_gold_traits or not items:
        return [f for _, f, _ in items], [spans_to_iob(o, m) for o, _, m in items], unmatched
    judge = _fit_judge(params, judge_X, gold_y, calibrate)
    X, y = [], []
    for (offsets, feats, matches), path in zip(
        items, judge.predict([f for _, f, _ in items]), strict=True
    ):
        confident = [
            span
            for span in iob_to_spans(offsets, path.tags)
            if not _overlaps(span, matches)
            and _span_trait_prob(offsets, span, path.marginals) >= threshold
        ]
        if confident and silver_filter == "gold-check":
            continue
        X.append(feats)
        y.append(spans_to_iob(offsets, list(matches) + confident))
    return X, y, unmatched


def _sample(items: Sequence[T], n: int) -> list[T]:
    """Return ``n`` of ``items`` in their order, a sample seeded by their count; all if fewer."""
    if len(items) <= n:
        return list(items)
    keep = sorted(random.Random(len(items)).sample(range(len(items)), n))
    return [items[k] for k in keep]


def _self_labelled(
    judge: TraitTagger, X: Sequence[list[Attributes]], threshold: float
) -> tuple[list[list[Attributes]], list[list[str]]]:
    """Return the sentences of ``X`` whose best path ``judge`` is sure of, with that path."""
    kept = [
        (x, path.tags)
        for x, path in zip(X, judge.predict(X), strict=True)
        if path.probability >= threshold
    ]
    return [x for x, _ in kept], [t for _, t in kept]


def _span_trait_prob(
    offsets: Sequence[tuple[int, int]], span: Span, marginals: Sequence[Mapping[str, float]]
) -> float:
    """Return the lowest TRAIT probability (1 - P(O)) among the span's tokens."""
    probs = [
        1.0 - m["O"]
        for (s, e), m in zip(offsets, marginals, strict=True)
        if s < span.end and e > span.start
    ]
    return min(probs) if probs else 0.0


def _overlaps(span: Span, others: Sequence[Span]) -> bool:
    return any(span.start < o.end and o.start < span.end for o in others)
