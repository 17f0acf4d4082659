"""What the loop needs from a model, and what it makes of the model's predictions.

The loop speaks the models' own prediction type,
:class:`~extractor.models.bundle.SentencePrediction`: a *predictor* tags sentences with
one, a *retrain* callable fits a new model and returns its predictor. :func:`pool_item`
turns a prediction into what the query strategies score, :func:`tag_pool` tags the
pool and the stop set with a new model in one go without touching the store, and
:class:`Retraining` runs retrain and tagging in a background thread.
"""

from __future__ import annotations

import queue
import threading
from collections.abc import Callable, Sequence
from typing import NamedTuple

from extractor.errors import TraitsError
from extractor.loop.stopping import stabilizing_predictions
from extractor.loop.strategies import PoolItem, Strategy
from extractor.models.bundle import SentencePrediction
from extractor.types import Implicit, Sentence, Span

Predictor = Callable[[Sequence[Sentence]], Sequence[SentencePrediction]]
"""Tags sentences with the current model: one prediction per sentence, in order."""

TrainingData = Sequence[tuple[Sentence, Sequence[Span]]]

Retrain = Callable[[TrainingData], Predictor]
"""Fits a new model on every gold label (outside the evaluation sample); returns its predictor.

Runs in a background thread: it must open its own store connection if it needs one.
"""

UNLINKED = "(unlinked)"
"""Stands for "no concept" among the linker's outcomes of a span."""


def pool_item(prediction: SentencePrediction) -> PoolItem:
    """Return what the query strategies need from one prediction.

    The strategies read a span's linking and stance uncertainty as ``1 - max prob``, so
    each span contributes its most probable concept (or :data:`UNLINKED`) and stance
    with their probabilities; spans without a concept or link probability, or without
    a stance (the tagger alone gives neither), contribute nothing. The sentence-level
    model's probability of every concept (none without one) gives the sentence-level
    uncertainty.
    """
    tagged = prediction.tagged
    return PoolItem(
        marginals=tagged.marginals,
        path_prob=float(tagged.probability),
        n_tokens=len(tagged.token_offsets),
        link_dists=[
            {m.concept or UNLINKED: float(m.link_prob)}
            for m in prediction.mentions
            if m.concept is not None or m.link_prob
        ],
        stance_dists=[{m.stance: float(m.stance_prob)} for m in prediction.mentions if m.stance],
        concept_probs=tuple(prediction.concept_probs.values()),
    )


def suggested_implicit(prediction: SentencePrediction) -> tuple[Implicit, ...]:
    """Return the prediction's implicit traits (no quote span) as proposed to the annotator."""
    return tuple(Implicit(m.concept, m.stance) for m in prediction.implicit if m.concept)


def suggested_spans(prediction: SentencePrediction) -> tuple[Span, ...]:
    """Return the prediction's mentions as the spans proposed to the annotator."""
    return tuple(Span(m.start, m.end, m.concept, m.stance) for m in prediction.mentions)


class ModelUpdate(NamedTuple):
    """A model's predictions over the pool and the stop set, ready to install.

    Attributes:
        predictor: the model; None when retraining failed.
        predictions: per pool sentence ID, the model's prediction.
        raw_scores: per pool sentence ID, the strategy's score before density weighting.
        stop_paths: the best tag path of each stop-set sentence (empty when one had no tokens).
        kappa: agreement with the previous model on the stop set, if there was one.
        error: why retraining failed, if it did.
    """

    predictor: Predictor | None
    predictions: dict[int, SentencePrediction]
    raw_scores: dict[int, float]
    stop_paths: list[tuple[str, ...]]
    kappa: float | None
    error: str | None = None


def tag_pool(
    predictor: Predictor,
    strategy: Strategy,
    pool: Sequence[Sentence],
    stop: Sequence[Sentence],
    previous_stop_paths: Sequence[tuple[str, ...]],
) -> ModelUpdate:
    """Tag the pool and the stop set with one model and score the pool (no store access).

    Raises:
        TraitsError: the model returned a different number of predictions than sentences.
    """
    predictions = list(predictor(pool)) if pool else []
    if len(predictions) != len(pool):
        raise TraitsError(
            f"The model returned {len(predictions)} predictions for {len(pool)} sentences."
        )
    raw = strategy.score([pool_item(p) for p in predictions])
    stop_paths = [tuple(p.tagged.tags) for p in predictor(stop)] if stop else []
    kappa = None
    if previous_stop_paths and stop_paths and all(stop_paths):
        kappa = stabilizing_predictions(previous_stop_paths, stop_paths)
    return ModelUpdate(
        predictor=predictor,
        predictions={s.id: p for s, p in zip(pool, predictions, strict=True)},
        raw_scores={s.id: float(v) for s, v in zip(pool, raw, strict=True)},
        stop_paths=stop_paths if all(stop_paths) else [],
        kappa=kappa,
    )


class Retraining:
    """At most one retrain at a time, in a daemon thread; its result is picked up without waiting.

    The thread gets plain data only (never a store connection). A retrain still running
    when the session ends is abandoned: the thread is a daemon and holds nothing.
    """

    def __init__(self) -> None:
        self._results: queue.Queue[ModelUpdate] = queue.Queue()
        self._thread: threading.Thread | None = None

    @property
    def running(self) -> bool:
        """True from :meth:`start` until :meth:`result` has returned the outcome."""
        return self._thread is not None

    def start(
        self,
        retrain: Retrain,
        data: TrainingData,
        strategy: Strategy,
        pool: Sequence[Sentence],
        stop: Sequence[Sentence],
        previous_stop_paths: Sequence[tuple[str, ...]],
    ) -> None:
        """Fit a model on ``data`` and tag ``pool`` and ``stop`` with it, in the background."""

        def work() -> None:
            try:
                predictor = retrain(data)
                self._results.put(tag_pool(predictor, strategy, pool, stop, previous_stop_paths))
            except Exception as exc:  # noqa: BLE001 - reported to the annotator, old model kept
                self._results.put(ModelUpdate(None, {}, {}, [], None, error=str(exc) or repr(exc)))

        self._thread = threading.Thread(target=work, name="traits-retrain", daemon=True)
        self._thread.start()

    def result(self) -> ModelUpdate | None:
        """Return the finished retrain's outcome once (None while running or when idle)."""
        try:
            update = self._results.get_nowait()
        except queue.Empty:
            return None
        self._thread = None
        return update

    def join(self, timeout: float) -> bool:
        """Wait up to ``timeout`` seconds for a running retrain; False when none runs."""
        thread = self._thread
        if thread is None:
            return False
        thread.join(timeout)
        return True
