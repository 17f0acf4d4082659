"""Scoring fitted models on sentences they never saw: an evaluation sample, cross-validation.

Cross-validation folds are grouped by respondent: all sentences of one person sit in
the same fold, so a model is never tested on a person whose other answers it was trained
on (people repeat their own phrasing; mixing them would flatter the scores).

Results are frozen records; :meth:`Evaluation.to_dict` and
:meth:`CrossValidation.to_dict` give the JSON stored with a model version.
"""

from __future__ import annotations

import random
import statistics
import time
from collections import defaultdict
from collections.abc import Callable, Mapping, Sequence
from dataclasses import asdict, dataclass
from typing import Any, Protocol

from extractor.errors import InputError
from extractor.models.bundle import TraitModels
from extractor.models.metrics import (
    SUMMARY_KEYS,
    Gold,
    PredictionLike,
    ScoreReport,
    Summary,
    predicted_mentions,
    respondent_key,
    score,
    summary,
)
from extractor.models.sentence_metrics import SentenceScores, sentence_scores, stated
from extractor.progress import track
from extractor.types import Implicit, Sentence


class _Predictor(Protocol):
    def predict(self, sentences: Sequence[Sentence]) -> Sequence[PredictionLike]: ...


class _Trainable(Protocol):
    def fit(
        self,
        gold: Gold,
        corpus: Sequence[Sentence],
        aliases: Sequence[tuple[str, str, str]],
        *,
        clusters: dict[str, Any] | None = None,
    ) -> _Predictor: ...


ModelFactory = Callable[..., _Trainable]
"""Builds an unfitted model from keyword parameters (``TraitModels`` by default)."""


@dataclass(frozen=True)
class Evaluation:
    """Fitted models scored on labeled sentences they never saw.

    ``sentence`` scores whole sentences, counting mentions and implicit traits
    (:mod:`extractor.models.sentence_metrics`).
    """

    scores: ScoreReport
    summary: Summary
    sentence: SentenceScores | None = None

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON record: the scores, ``"summary"``, and its figures at the top too.

        ``traits models`` reads the figures (``"span_f1"``...) at the top level.
        """
        figures = asdict(self.summary)
        extra = {} if self.sentence is None else {"sentence": asdict(self.sentence)}
        return asdict(self.scores) | {"summary": figures} | figures | extra


@dataclass(frozen=True)
class Fold:
    """One fold of a cross-validation: its sizes, fitting time and evaluation."""

    fold: int
    n_train: int
    n_test: int
    seconds: float
    result: Evaluation

    @property
    def summary(self) -> Summary:
        """The fold's headline figures."""
        return self.result.summary


@dataclass(frozen=True)
class CrossValidation:
    """Headline figures over ``k`` folds grouped by respondent: mean, sd and each fold.

    A figure's mean and sd are ``None`` when it applies to no fold.
    """

    k: int
    seed: int
    mean: Summary
    sd: Summary
    folds: tuple[Fold, ...]
    grouped_by: str = "respondent"

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON record stored with a model version."""
        mean, sd = asdict(self.mean), asdict(self.sd)
        return {
            "k": self.k,
            "seed": self.seed,
            "grouped_by": self.grouped_by,
            "mean": mean,
            "sd": sd,
            **{key: {"mean": mean[key], "sd": sd[key]} for key in SUMMARY_KEYS},
            "folds": [
                {
                    "fold": f.fold,
                    "n_train": f.n_train,
                    "n_test": f.n_test,
                    "seconds": f.seconds,
                    "summary": asdict(f.summary),
                    "result": f.result.to_dict(),
                }  # fmt: skip
                for f in self.folds
            ],
        }


def evaluate_on(
    models: _Predictor, gold: Gold, implicit: Mapping[int, Sequence[Implicit]] | None = None
) -> Evaluation:
    """Score fitted models on an evaluation sample (labeled sentences they never saw).

    Args:
        models: Fitted models with ``predict(sentences) -> [SentencePrediction]``,
            e.g. :class:`extractor.models.bundle.TraitModels`.
        gold: The evaluation sentences and their gold spans.
        implicit: Per sentence ID, its gold implicit traits; the sentence-level figures
            count them with the mentions.

    Raises:
        InputError: The sample holds no labeled sentence.
    """
    if not gold:
        raise InputError(
            "The evaluation sample holds no labeled sentence; label some sentences of it first."
        )
    sentences = [s for s, _ in gold]
    predictions = models.predict(sentences)
    result = score(gold, predicted_mentions(predictions))
    wanted = implicit or {}
    by_sentence = sentence_scores(
        sentences,
        [stated(spans, wanted.get(s.id, ())) for s, spans in gold],
        [stated([*p.mentions, *getattr(p, "implicit", [])]) for p in predictions],
    )
    return Evaluation(result, summary(result), by_sentence)


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


def cross_validate(
    gold: Gold,
    corpus: Sequence[Sentence],
    aliases: Sequence[tuple[str, str, str]],
    *,
    k: int = 5,
    seed: int = 0,
    model_params: dict[str, Any] | None = None,
    clusters: dict[str, Any] | None = None,
    make_models: ModelFactory = TraitModels,
) -> CrossValidation:
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
        The folds and the mean and sd over folds of each :class:`Summary` figure.
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
        seconds = round(time.perf_counter() - started, 2)
        per_fold.append(Fold(number, len(train), len(test), seconds, result))
    return CrossValidation(
        k=len(folds),
        seed=seed,
        mean=_aggregate(per_fold, statistics.fmean),
        sd=_aggregate(per_fold, lambda v: statistics.stdev(v) if len(v) > 1 else 0.0),
        folds=tuple(per_fold),
    )


def _aggregate(folds: Sequence[Fold], fn: Callable[[list[float]], float]) -> Summary:
    out: dict[str, float | None] = {}
    for key in SUMMARY_KEYS:
        values = [v for f in folds if (v := getattr(f.summary, key)) is not None]
        out[key] = fn(values) if values else None
    return Summary(**out)
