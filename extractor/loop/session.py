"""The labeling session: what to ask next, storing answers, undo, and background retraining.

A :class:`Session` knows nothing about screens; :mod:`extractor.cli.screen` draws it. It
asks the current model (an injected *predictor*) about every unlabeled sentence once
per model version, ranks the pool with a strategy from :mod:`extractor.loop.strategies`, and
hands out sentences from a small batch. Every answer is committed to the store before
:meth:`Session.submit` returns, so a killed process loses nothing that was confirmed.

Every ``retrain_every`` labels, an injected ``retrain`` callable runs in a background
thread. It receives plain data (sentences and their spans), never the store connection,
and returns a new predictor; the thread also tags the pool and the stop set with it, so
the main thread only swaps arrays when the new model is ready and the annotator never
waits. Successive models' agreement on the stop set gives the stopping signal
(Bloodgood & Vijay-Shanker 2009).
"""

from __future__ import annotations

import math
import queue
import sqlite3
import threading
from collections import deque
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np

from extractor.errors import InputError, TraitsError
from extractor.loop.strategies import (
    PoolItem,
    density,
    get_strategy,
    select,
    sentence_vectors,
    should_stop,
    stabilizing_predictions,
    weigh_by_density,
)
from extractor.nlp.fold import fold
from extractor.types import STANCES, Sentence, Span
from extractor.workspace import store

# --------------------------------------------------------------------------- model protocol


class Suggestion(NamedTuple):
    """A span the model proposes, with how sure it is.

    Attributes:
        span: offsets in the sentence, proposed concept and stance.
        confidence: the tagger's probability of the span, if known.
        concept_probs: the linker's probability per concept, if known.
        stance_probs: the probability per stance, if known.
    """

    span: Span
    confidence: float | None = None
    concept_probs: Mapping[str, float] | None = None
    stance_probs: Mapping[str, float] | None = None


class Prediction(NamedTuple):
    """What a model says about one sentence.

    Attributes:
        path: the best tag path, one tag per token.
        marginals: per token, the probability of each tag.
        path_prob: probability of the best path; None when there is no model.
        suggestions: proposed spans.
    """

    path: tuple[str, ...] = ()
    marginals: tuple[Mapping[str, float], ...] = ()
    path_prob: float | None = None
    suggestions: tuple[Suggestion, ...] = ()


Predictor = Callable[[Sequence[Sentence]], Sequence[Prediction]]
"""Tags sentences with the current model: one :class:`Prediction` per sentence, in order."""

TrainingData = Sequence[tuple[Sentence, Sequence[Span]]]

Retrain = Callable[[TrainingData], Predictor]
"""Fits a new model on every gold label (outside the evaluation sample); returns its predictor.

Runs in a background thread: it must open its own store connection if it needs one.
"""


def to_pool_item(prediction: Prediction) -> PoolItem:
    """Return what the query strategies need from a prediction."""
    return PoolItem(
        marginals=prediction.marginals,
        path_prob=prediction.path_prob,
        n_tokens=len(prediction.path) or len(prediction.marginals),
        link_dists=tuple(s.concept_probs for s in prediction.suggestions if s.concept_probs),
        stance_dists=tuple(s.stance_probs for s in prediction.suggestions if s.stance_probs),
    )


# --------------------------------------------------------------------------- settings, samples


@dataclass(frozen=True)
class SessionSettings:
    """Settings of a labeling session.

    Attributes:
        retrain_every: retrain after this many new labels.
        evaluation_fraction: share of sentences held out as the evaluation sample.
        evaluation_min: the evaluation sample has at least this many sentences (but never
            more than half of them, so there is always something to label).
        stop_set_size: size of the fixed unlabeled stop set for the stopping rule.
        seed: seed of the samples and of tie-breaking.
        offer_evaluation: draw sentences from the unlabeled part of the evaluation sample
            instead of the pool (the annotator opts in to labeling the evaluation sample).
        kappa_threshold: stopping-rule agreement threshold.
        kappa_rounds: stopping-rule window of successive comparisons.
        candidates: how many top-scored sentences the diverse batch selection considers.
        subpool: each model ranks a seeded random sub-pool of this many unlabeled sentences
            (None: all of them). Ranking the whole pool lets a few odd sentences win; with
            a random sub-pool of 500, `traits simulate` on MAMS (10 repeats) gave span F1
            0.580 / 0.631 / 0.679 at 50 / 100 / 200 labels against 0.573 / 0.623 / 0.671
            for the whole pool of 4,297, and half the spread between repeats at 100.
            Ranked-batch diversity then counts only the sub-pool's unlabeled sentences in
            its weight ``|U| / (|U| + |D|)``, exactly as in that simulation.
    """

    retrain_every: int = 10
    evaluation_fraction: float = 0.1
    evaluation_min: int = 30
    stop_set_size: int = 500
    seed: int = 0
    offer_evaluation: bool = False
    kappa_threshold: float = 0.99
    kappa_rounds: int = 3
    candidates: int = 50
    subpool: int | None = 500


def evaluation_size(n_sentences: int, fraction: float, minimum: int) -> int:
    """Return the evaluation sample size: ``fraction`` of the sentences, at least ``minimum``.

    Capped at half of the sentences so a small study still has sentences to label.
    """
    wanted = max(math.ceil(fraction * n_sentences), minimum)
    return min(wanted, n_sentences // 2)


def ensure_samples(
    conn: sqlite3.Connection, settings: SessionSettings
) -> tuple[list[int], list[int]]:
    """Create the evaluation sample and stop set if missing, grow the sample; return both.

    The evaluation sample is a seeded uniform draw from all sentences; the stop set is a
    seeded draw of sentences that were unlabeled and outside the evaluation sample when
    it was made. Members are never removed or redrawn, so figures stay comparable. When
    new interviews have arrived and the sample has fallen below its share of the
    sentences, it is topped up with a seeded draw from sentences that are unlabeled and
    in neither sample, so that it keeps representing what the study now holds (labeled
    sentences are left out of the top-up: moving them would take them out of training).
    """
    all_ids = [s.id for s in store.sentences(conn)]
    rng = np.random.default_rng(settings.seed)
    evaluation = store.sample_ids(conn, "evaluation")
    target = evaluation_size(len(all_ids), settings.evaluation_fraction, settings.evaluation_min)
    if not evaluation:
        if target > 0:
            store.add_to_sample(
                conn, "evaluation", sorted(int(i) for i in rng.choice(all_ids, target, False))
            )
            evaluation = store.sample_ids(conn, "evaluation")
    stop = store.sample_ids(conn, "stop")
    if not stop and settings.stop_set_size > 0:
        held = set(evaluation) | set(store.current_labels(conn))
        free = [i for i in all_ids if i not in held]
        size = min(settings.stop_set_size, len(free))
        if size > 0:
            store.add_to_sample(conn, "stop", sorted(int(i) for i in rng.choice(free, size, False)))
            stop = store.sample_ids(conn, "stop")
    if evaluation and len(evaluation) < target:
        held = set(evaluation) | set(stop) | set(store.current_labels(conn))
        free = [i for i in all_ids if i not in held]
        size = min(target - len(evaluation), len(free))
        if size > 0:
            # Seeded by the sample's size, so the same growth draws the same sentences.
            grow = np.random.default_rng([settings.seed, len(evaluation)])
            store.add_to_sample(
                conn, "evaluation", sorted(int(i) for i in grow.choice(free, size, False))
            )
            evaluation = store.sample_ids(conn, "evaluation")
    return evaluation, stop


# --------------------------------------------------------------------------- the session


class Item(NamedTuple):
    """A sentence to show, with its context and the answer proposed for it.

    Attributes:
        sentence: the sentence.
        context: question, previous sentence, respondent and metadata, variety.
        suggestion: the proposed spans (empty = "no trait here").
        prediction: the model's prediction, if there is a model.
        origin: ``"model"``, ``"previous"`` (the annotator's undone label) or ``"none"``.
        in_evaluation: the sentence belongs to the evaluation sample.
    """

    sentence: Sentence
    context: dict[str, Any]
    suggestion: tuple[Span, ...]
    prediction: Prediction | None
    origin: str
    in_evaluation: bool


class _Update(NamedTuple):
    """A retrained model, tagged over the pool and the stop set in the background."""

    predictor: Predictor | None
    predictions: dict[int, Prediction]
    raw_scores: dict[int, float]
    stop_paths: list[tuple[str, ...]]
    kappa: float | None
    error: str | None = None


def _cold(n: int) -> list[Prediction]:
    return [Prediction() for _ in range(n)]


class Session:
    """One annotator's labeling session over a store.

    Args:
        conn: the store connection; used from the calling thread only.
        annotator: the annotator's name, stored with every label.
        strategy: a name from :data:`extractor.loop.strategies.STRATEGIES`.
        batch_size: how many sentences are picked together.
        predictor: the current model, or None before any model exists (cold start).
        retrain: fits a new model in the background every ``retrain_every`` labels.
        settings: the session settings.

    Raises:
        InputError: an empty annotator name, a batch size below 1, or an unknown strategy.
    """

    def __init__(
        self,
        conn: sqlite3.Connection,
        *,
        annotator: str,
        strategy: str = "default",
        batch_size: int = 10,
        predictor: Predictor | None = None,
        retrain: Retrain | None = None,
        settings: SessionSettings | None = None,
    ) -> None:
        if not annotator.strip():
            raise InputError("The annotator name must not be empty; pass --annotator NAME.")
        if batch_size < 1:
            raise InputError(f"The batch size must be at least 1; got {batch_size}.")
        self.conn = conn
        self.annotator = annotator.strip()
        self.strategy_name = strategy
        self.strategy = get_strategy(strategy)
        self.batch_size = batch_size
        self.settings = settings or SessionSettings()
        self._retrain = retrain

        evaluation, stop = ensure_samples(conn, self.settings)
        self.evaluation_ids = frozenset(evaluation)
        self._sentences = {s.id: s for s in store.sentences(conn)}
        self._stop = [self._sentences[i] for i in stop if i in self._sentences]
        self._labeled = set(store.current_labels(conn))
        self._done = self._labeled | store.skipped(conn, self.annotator)
        if self.settings.offer_evaluation:
            pool = [i for i in evaluation if i in self._sentences]
        else:
            pool = [i for i in self._sentences if i not in self.evaluation_ids]
        self._pool_ids = np.array(pool, dtype=int)
        self._pool_pos = {sid: k for k, sid in enumerate(pool)}

        # Vectors depend on the text only: computed once per session, not per model.
        self._vectors: np.ndarray | None = None
        self._all_pos: dict[int, int] = {}
        self._density: np.ndarray | None = None
        if self.strategy.diversity or self.strategy.density_beta:
            ids = list(self._sentences)
            self._all_pos = {sid: k for k, sid in enumerate(ids)}
            self._vectors = sentence_vectors(
                [self._sentences[i].text for i in ids], seed=self.settings.seed
            )
        if self.strategy.density_beta and len(pool):
            self._density = density(self._vector_rows(pool))

        self.model_version = 0
        self._subpool: set[int] | None = None
        self._pool_vectors: np.ndarray | None = None
        self._predictor = predictor
        self._predictions: dict[int, Prediction] = {}
        self._scores = np.zeros(len(pool))
        self._stop_paths: list[tuple[str, ...]] = []
        self.kappas: list[float] = []
        self.last_error: str | None = None
        self._front: deque[int] = deque()
        self._batch: deque[int] = deque()
        if predictor is not None:
            self._install(self._tag(predictor, self._pool_snapshot(), self._stop, []))
        self._previous: dict[int, tuple[Span, ...]] = {}
        self._session_label_ids: set[int] = set()
        self.labeled_this_session = 0
        self.skipped_this_session = 0
        self.undone_this_session = 0
        self._since_retrain = 0
        self._results: queue.Queue[_Update] = queue.Queue()
        self._job: threading.Thread | None = None
        self._closed = False

    # ----------------------------------------------------------------- scoring

    def _vector_rows(self, ids: Sequence[int]) -> np.ndarray:
        if self._vectors is None:
            return np.zeros((len(ids), 1))
        return self._vectors[[self._all_pos[i] for i in ids]]

    def _pool_snapshot(self) -> list[Sentence]:
        return [self._sentences[int(i)] for i in self._pool_ids if int(i) not in self._done]

    def _tag(
        self,
        predictor: Predictor,
        pool: Sequence[Sentence],
        stop: Sequence[Sentence],
        previous_stop_paths: Sequence[tuple[str, ...]],
    ) -> _Update:
        """Tag the pool and the stop set with one model and score the pool (no store access)."""
        predictions = list(predictor(pool)) if pool else []
        if len(predictions) != len(pool):
            raise TraitsError(
                f"The model returned {len(predictions)} predictions for {len(pool)} sentences."
            )
        raw = self.strategy.score([to_pool_item(p) for p in predictions])
        stop_paths = [tuple(p.path) for p in predictor(stop)] if stop else []
        kappa = None
        if previous_stop_paths and stop_paths and all(stop_paths):
            kappa = stabilizing_predictions(previous_stop_paths, stop_paths)
        return _Update(
            predictor=predictor,
            predictions={s.id: p for s, p in zip(pool, predictions, strict=True)},
            raw_scores={s.id: float(v) for s, v in zip(pool, raw, strict=True)},
            stop_paths=stop_paths if all(stop_paths) else [],
            kappa=kappa,
        )

    def _install(self, update: _Update) -> None:
        """Swap in a new model's predictions and re-rank the pool."""
        self._predictor = update.predictor
        self._predictions = update.predictions
        raw = np.array([update.raw_scores.get(int(i), 0.0) for i in self._pool_ids])
        self._scores = weigh_by_density(raw, self._density, self.strategy.density_beta)
        if update.stop_paths:
            self._stop_paths = update.stop_paths
        self.model_version += 1
        # The old batch was chosen by the old model; rank again with the new one, over a
        # new random sub-pool.
        self._batch.clear()
        self._subpool = None

    def _poll(self) -> None:
        """Install a model finished in the background, if any (never blocks)."""
        try:
            update = self._results.get_nowait()
        except queue.Empty:
            return
        self._job = None
        if update.error is not None:
            self.last_error = update.error
        else:
            self.last_error = None
            if update.kappa is not None:
                self.kappas.append(update.kappa)
            self._install(update)
        self._maybe_retrain()

    def _maybe_retrain(self) -> None:
        if (
            self._retrain is None
            or self._job is not None
            or self._closed
            or self._since_retrain < self.settings.retrain_every
        ):
            return
        self._since_retrain = 0
        # Everything the thread needs is copied here: it never touches the connection.
        data = [
            (self._sentences[sid], tuple(label.spans))
            for sid, label in store.current_labels(self.conn).items()
            if sid not in self.evaluation_ids and sid in self._sentences
        ]
        pool, stop, previous = self._pool_snapshot(), list(self._stop), list(self._stop_paths)
        retrain = self._retrain

        def work() -> None:
            try:
                predictor = retrain(data)
                self._results.put(self._tag(predictor, pool, stop, previous))
            except Exception as exc:  # noqa: BLE001 - reported to the annotator, old model kept
                self._results.put(_Update(None, {}, {}, [], None, error=str(exc) or repr(exc)))

        self._job = threading.Thread(target=work, name="traits-retrain", daemon=True)
        self._job.start()

    def wait_for_model(self, timeout: float = 30.0) -> bool:
        """Wait for a running retrain and install its model; return True if one arrived.

        Scripts and tests use this; the console never waits.
        """
        job = self._job
        if job is None:
            return False
        job.join(timeout)
        before = self.model_version
        had_error = self.last_error
        self._poll()
        return self.model_version > before or self.last_error != had_error

    @property
    def retraining(self) -> bool:
        """True while a model is being fitted in the background."""
        return self._job is not None

    @property
    def stop_signal(self) -> bool:
        """True once successive models agree on the stop set (further labels change little)."""
        return should_stop(self.kappas, self.settings.kappa_threshold, self.settings.kappa_rounds)

    @property
    def total_labels(self) -> int:
        """Sentences with a label in force, from anyone."""
        return len(self._labeled)

    # ----------------------------------------------------------------- asking

    def _outside_subpool(self, exclude: set[int]) -> set[int]:
        """Return the pool positions outside the current model's random sub-pool.

        The sub-pool is drawn (seeded) when a model is installed, and drawn again when
        fewer than a batch of its sentences are left.
        """
        size = self.settings.subpool
        free = [k for k in range(len(self._pool_ids)) if k not in exclude]
        if size is None or len(free) <= size:
            return set()
        if self._subpool is None or len(self._subpool - exclude) < self.batch_size:
            rng = np.random.default_rng([self.settings.seed, self.model_version, len(exclude)])
            self._subpool = {int(k) for k in rng.choice(free, size, replace=False)}
        return set(free) - self._subpool

    def _refill(self) -> None:
        exclude = {self._pool_pos[sid] for sid in self._done if sid in self._pool_pos}
        exclude |= self._outside_subpool(exclude)
        labeled_vectors = None
        if self.strategy.diversity and self._labeled:
            recent = [i for i in self._labeled if i in self._all_pos][-2000:]
            labeled_vectors = self._vector_rows(recent)
        if self.strategy.diversity and self._pool_vectors is None:
            # The pool and its sentences' vectors do not change during a session.
            self._pool_vectors = self._vector_rows([int(i) for i in self._pool_ids])
        pool_vectors = self._pool_vectors
        picked = select(
            self._scores,
            pool_vectors,
            self.batch_size,
            diversity=self.strategy.diversity,
            exclude=exclude,
            labeled_vectors=labeled_vectors,
            candidates=self.settings.candidates,
            seed=self.settings.seed + self.model_version + len(self._done),
        )
        self._batch.extend(int(self._pool_ids[k]) for k in picked)

    def _item(self, sentence_id: int, previous: tuple[Span, ...] | None) -> Item:
        sentence = self._sentences[sentence_id]
        prediction = self._predictions.get(sentence_id)
        if prediction is None and self._predictor is not None:
            prediction = list(self._predictor([sentence]))[0]
        if previous is not None:
            suggestion, origin = previous, "previous"
        elif prediction is not None and prediction.path_prob is not None:
            suggestion, origin = tuple(s.span for s in prediction.suggestions), "model"
        else:
            suggestion, origin = (), "none"
        return Item(
            sentence=sentence,
            context=store.sentence_context(self.conn, sentence_id),
            suggestion=suggestion,
            prediction=prediction,
            origin=origin,
            in_evaluation=sentence_id in self.evaluation_ids,
        )

    def next(self) -> Item | None:
        """Return the next sentence to show, or None when nothing is left to ask."""
        self._poll()
        while self._front:
            sid = self._front.popleft()
            if sid not in self._done:
                return self._item(sid, self._previous.pop(sid, None))
        for _ in range(2):
            while self._batch:
                sid = self._batch.popleft()
                if sid not in self._done:
                    return self._item(sid, None)
            self._refill()
        return None

    # ----------------------------------------------------------------- answering

    def _check_spans(self, sentence_id: int, spans: Sequence[Span]) -> tuple[Span, ...]:
        if sentence_id not in self._sentences:
            raise InputError(f"Sentence {sentence_id} is not in this workspace.")
        length = len(self._sentences[sentence_id].text)
        out = []
        for span in spans:
            if not 0 <= span.start < span.end <= length:
                raise InputError(
                    f"Span {span.start}-{span.end} does not fit in sentence {sentence_id} "
                    f"({length} characters)."
                )
            if span.stance is not None and span.stance not in STANCES:
                raise InputError(
                    f"The stance must be one of {', '.join(STANCES)}; got {span.stance!r}."
                )
            out.append(Span(span.start, span.end, span.concept, span.stance))
        return tuple(sorted(out))

    def submit(self, sentence_id: int, spans: Sequence[Span]) -> int:
        """Store the annotator's answer for a sentence at once; return the label ID.

        An empty ``spans`` means "no trait here". The label is committed before this
        returns; a retrain starts in the background when enough labels have arrived.

        Raises:
            InputError: the sentence is unknown or a span does not fit it.
        """
        checked = self._check_spans(sentence_id, spans)
        label_id = store.add_label(self.conn, sentence_id, checked, self.annotator)
        self._session_label_ids.add(label_id)
        self._done.add(sentence_id)
        self._labeled.add(sentence_id)
        self.labeled_this_session += 1
        self._since_retrain += 1
        self._poll()
        self._maybe_retrain()
        return label_id

    def skip(self, sentence_id: int) -> None:
        """Remember that this annotator skipped the sentence; it is not asked again."""
        if sentence_id not in self._sentences:
            raise InputError(f"Sentence {sentence_id} is not in this workspace.")
        store.add_skip(self.conn, sentence_id, self.annotator)
        self._done.add(sentence_id)
        self.skipped_this_session += 1

    def undo(self) -> int | None:
        """Retract this annotator's newest label in force and ask that sentence next.

        Returns:
            The sentence ID, or None when this annotator has no label to undo.
        """
        mine = [
            (label.label_id, sid, label.spans)
            for sid, label in store.current_labels(self.conn).items()
            if label.annotator == self.annotator
        ]
        if not mine:
            return None
        label_id, sentence_id, spans = max(mine)
        store.retract_label(self.conn, label_id, self.annotator)
        if label_id in self._session_label_ids:
            self.labeled_this_session -= 1
        self.undone_this_session += 1
        self._labeled = set(store.current_labels(self.conn))
        self._done.discard(sentence_id)
        self._front.appendleft(sentence_id)
        self._previous[sentence_id] = tuple(spans)
        return sentence_id

    def defer(self, sentence_id: int) -> None:
        """Ask a shown, unanswered sentence again soon: before the batch, after undone ones."""
        if sentence_id not in self._done and sentence_id in self._sentences:
            self._front.append(sentence_id)

    def add_alias(self, sentence_id: int, span: Span) -> bool:
        """Store the span's text as this annotator's alias of the span's concept.

        Returns:
            False when the concept already had this alias.

        Raises:
            InputError: the span has no concept, or does not fit the sentence.
        """
        (checked,) = self._check_spans(sentence_id, [span])
        if checked.concept is None:
            raise InputError("Choose a concept for the span before adding it as an alias.")
        sentence = self._sentences[sentence_id]
        text = sentence.text[checked.start : checked.end]
        return store.add_alias(self.conn, checked.concept, text, sentence.lang, self.annotator)

    def summary(self) -> dict[str, Any]:
        """Return the session's counts and stopping state."""
        return {
            "annotator": self.annotator,
            "strategy": self.strategy_name,
            "labeled": self.labeled_this_session,
            "skipped": self.skipped_this_session,
            "undone": self.undone_this_session,
            "total_labels": self.total_labels,
            "model_version": self.model_version,
            "kappas": list(self.kappas),
            "stop_signal": self.stop_signal,
        }

    def quit(self) -> dict[str, Any]:
        """End the session and return its summary.

        Every answer is already stored; a retrain still running is abandoned (its thread
        is a daemon and holds no store connection), so quitting never waits.
        """
        self._closed = True
        return self.summary()


# --------------------------------------------------------------------------- marking helpers


def find_phrase(text: str, words: str, lang: str) -> list[tuple[int, int]]:
    """Return every ``(start, end)`` where the typed ``words`` occur in ``text`` as tokens.

    Matching ignores case and accents and works on token boundaries, so ``"pot"`` does not
    match inside ``"pots"``; the annotator types words, never counts tokens.
    """
    from extractor.nlp.text import tokenize

    tokens = tokenize(text, lang)
    wanted = [fold(words[s:e]) for s, e in tokenize(words, lang)]
    if not wanted:
        return []
    folded = [fold(text[s:e]) for s, e in tokens]
    found = []
    for k in range(len(tokens) - len(wanted) + 1):
        if folded[k : k + len(wanted)] == wanted:
            found.append((tokens[k][0], tokens[k + len(wanted) - 1][1]))
    return found


class ConceptEntry(NamedTuple):
    """One searchable name of a concept: a label or alias in some language."""

    concept: str
    text: str
    lang: str
    preferred: bool


class ConceptMatch(NamedTuple):
    """A ranked completion: the concept, its display label, and the name that matched."""

    concept: str
    label: str
    matched: str
    lang: str


def concept_entries(conn: sqlite3.Connection) -> list[ConceptEntry]:
    """Return every label and alias of the active trait concepts."""
    return [
        ConceptEntry(a["concept_id"], a["text"], a["lang"], a["kind"] == "preferred")
        for a in store.aliases(conn)
    ]


def _match_rank(query: str, name: str) -> int | None:
    """Rank how well a folded query matches a folded name (lower is better, None = no)."""
    if name == query:
        return 0
    if name.startswith(query):
        return 1
    words = name.replace("-", " ").split()
    parts = query.split()
    if parts and all(any(w.startswith(p) for w in words) for p in parts):
        return 2
    if query in name:
        return 3
    rest = iter(name)
    if all(c in rest for c in query.replace(" ", "")):
        return 4
    return None


def rank_concepts(
    query: str, entries: Sequence[ConceptEntry], *, lang: str = "en", limit: int = 9
) -> list[ConceptMatch]:
    """Return concepts whose ID, label or any alias (any language) matches ``query``, best first.

    Exact names beat prefixes, word prefixes, substrings and letters-in-order; among
    equals, shorter names and then concept IDs come first. Each concept appears once,
    under its best-matching name, and is shown with its label in ``lang`` when it has one.
    """
    wanted = fold(query.strip())
    if not wanted:
        return []
    labels: dict[str, dict[str, str]] = {}
    for e in entries:
        if e.preferred:
            labels.setdefault(e.concept, {}).setdefault(e.lang, e.text)
    best: dict[str, tuple[tuple[int, int, str], ConceptEntry]] = {}
    for e in entries:
        ranks = [
            r
            for r in (_match_rank(wanted, fold(e.text)), _match_rank(wanted, fold(e.concept)))
            if r is not None
        ]
        if not ranks:
            continue
        key = (min(ranks), len(e.text), e.concept)
        if e.concept not in best or key < best[e.concept][0]:
            best[e.concept] = (key, e)
    ordered = sorted(best.values(), key=lambda kv: kv[0])[:limit]
    out = []
    for _, e in ordered:
        own = labels.get(e.concept, {})
        label = own.get(lang) or own.get("en") or next(iter(own.values()), e.text)
        out.append(ConceptMatch(e.concept, label, e.text, e.lang))
    return out
