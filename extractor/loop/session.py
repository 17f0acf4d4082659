"""The labeling session: what to ask next, storing answers, undo, and background retraining.

A :class:`Session` knows nothing about screens; :mod:`extractor.cli.screen` draws it. It
asks the current model (an injected *predictor*, see :mod:`extractor.loop.predictor`)
about every unlabeled sentence once per model version, ranks the pool with a strategy
from :mod:`extractor.loop.strategies`, and hands out sentences from a small batch. Every
answer is committed to the store before :meth:`Session.submit` returns, so a killed
process loses nothing that was confirmed.

Every ``retrain_every`` labels, an injected ``retrain`` callable runs in a background
thread. It receives plain data (sentences and their spans), never the store connection,
and returns a new predictor; the thread also tags the pool and the stop set with it, so
the main thread only swaps arrays when the new model is ready and the annotator never
waits. Successive models' agreement on the stop set gives the stopping signal
(Bloodgood & Vijay-Shanker 2009).
"""

from __future__ import annotations

import sqlite3
import uuid
from collections import deque
from collections.abc import Sequence

import numpy as np

from extractor.errors import InputError
from extractor.loop.items import Item, SessionSummary
from extractor.loop.marking import checked_implicit, checked_spans
from extractor.loop.predictor import (
    ModelUpdate,
    Predictor,
    Retrain,
    Retraining,
    suggested_implicit,
    suggested_spans,
    tag_pool,
)
from extractor.loop.samples import SessionPool, SessionSettings
from extractor.loop.space_vectors import centroid_picks
from extractor.loop.stopping import should_stop
from extractor.loop.strategies import (
    Strategy,
    get_strategy,
    select,
    weigh_by_density,
)
from extractor.models.bundle import SentencePrediction
from extractor.types import Implicit, Sentence, Span
from extractor.workspace import store

LEASE_S = 900.0
"""How long a shown sentence stays leased to a session (renewed when shown again); a
killed session's sentences come free after this."""


class Session:
    """One annotator's labeling session over a store; start one with :meth:`open`.

    The constructor only stores what :meth:`open` read: the ``pool`` (sentences and
    samples), the sentences ``labeled`` by anyone and those ``done`` for this annotator
    (labeled or skipped), and the looked-up ``strategy`` named ``strategy_name``.
    """

    def __init__(
        self,
        conn: sqlite3.Connection,
        *,
        annotator: str,
        strategy_name: str,
        strategy: Strategy,
        batch_size: int,
        settings: SessionSettings,
        pool: SessionPool,
        labeled: set[int],
        done: set[int],
        predictor: Predictor | None = None,
        retrain: Retrain | None = None,
        version: str | None = None,
        newer_labels: int = 0,
        holder: str = "",
    ) -> None:
        self.conn = conn
        self.holder = holder or annotator
        self.annotator = annotator
        self.strategy_name = strategy_name
        self.strategy = strategy
        self.batch_size = batch_size
        self.settings = settings
        self.pool = pool
        self._labeled = labeled
        self._done = done
        self._predictor = predictor
        self._initial_model = predictor is not None
        self._retrain = retrain
        self.model_version = 0
        self.version = version
        self.newer_labels = newer_labels
        self._subpool: set[int] | None = None
        self._predictions: dict[int, SentencePrediction] = {}
        self._scores = np.zeros(len(pool.ids))
        self._stop_paths: list[tuple[str, ...]] = []
        self.kappas: list[float] = []
        self.last_error: str | None = None
        self._front: deque[int] = deque()
        self._batch: deque[int] = deque()
        self._previous: dict[int, tuple[Span, ...]] = {}
        self._previous_implicit: dict[int, tuple[Implicit, ...]] = {}
        self._session_label_ids: set[int] = set()
        self.labeled_this_session = 0
        self.skipped_this_session = 0
        self.undone_this_session = 0
        self._since_retrain = 0
        self._retraining = Retraining()
        self._closed = False

    @classmethod
    def open(
        cls,
        conn: sqlite3.Connection,
        *,
        annotator: str,
        strategy: str = "default",
        batch_size: int = 10,
        predictor: Predictor | None = None,
        retrain: Retrain | None = None,
        settings: SessionSettings | None = None,
        version: str | None = None,
        newer_labels: int = 0,
    ) -> Session:
        """Start a session: make sure the samples exist, read the pool, rank it.

        Args:
            conn: the store connection; used from the calling thread only.
            annotator: the annotator's name, stored with every label.
            strategy: a name from :data:`extractor.loop.strategies.STRATEGIES`.
            batch_size: how many sentences are picked together.
            predictor: the current model, or None before any model exists (cold start).
            retrain: fits a new model in the background every ``retrain_every`` labels.
            settings: the session settings.
            version: the saved model version ``predictor`` comes from, if any.
            newer_labels: labels given after that version was trained (it lacks them).

        Raises:
            InputError: an empty annotator name, a batch size below 1, or an unknown strategy.
        """
        if not annotator.strip():
            raise InputError("The annotator name must not be empty; pass --annotator NAME.")
        if batch_size < 1:
            raise InputError(f"The batch size must be at least 1; got {batch_size}.")
        spec = get_strategy(strategy)
        settings = settings or SessionSettings()
        pool = SessionPool.read(conn, settings, spec)
        labeled = set(store.current_labels(conn))
        session = cls(
            conn,
            annotator=annotator.strip(),
            strategy_name=strategy,
            strategy=spec,
            batch_size=batch_size,
            settings=settings,
            pool=pool,
            labeled=labeled,
            done=labeled | store.skipped(conn, annotator.strip()),
            predictor=predictor,
            retrain=retrain,
            version=version,
            newer_labels=newer_labels,
            holder=f"{annotator.strip()}:{uuid.uuid4().hex[:12]}",
        )
        if predictor is not None:
            session._install(tag_pool(predictor, spec, session._pool_snapshot(), pool.stop, []))
        return session

    @property
    def evaluation_ids(self) -> frozenset[int]:
        """The evaluation sample's sentence IDs."""
        return self.pool.evaluation_ids

    # ----------------------------------------------------------------- scoring

    def _pool_snapshot(self) -> list[Sentence]:
        return [self.pool.sentences[int(i)] for i in self.pool.ids if int(i) not in self._done]

    def _install(self, update: ModelUpdate) -> None:
        """Swap in a new model's predictions and re-rank the pool."""
        self._predictor = update.predictor
        self._predictions = update.predictions
        raw = np.array([update.raw_scores.get(int(i), 0.0) for i in self.pool.ids])
        self._scores = weigh_by_density(raw, self.pool.density, self.strategy.density_beta)
        if update.stop_paths:
            self._stop_paths = update.stop_paths
        self.model_version += 1
        # The old batch was chosen by the old model; rank again with the new one, over a
        # new random sub-pool.
        self._batch.clear()
        self._subpool = None

    def _poll(self) -> None:
        """Install a model finished in the background, if any (never blocks)."""
        update = self._retraining.result()
        if update is None:
            return
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
            or self._retraining.running
            or self._closed
            or self._since_retrain < self.settings.retrain_every
        ):
            return
        self._since_retrain = 0
        # Everything the thread needs is copied here: it never touches the connection.
        data = [
            (self.pool.sentences[sid], tuple(label.spans))
            for sid, label in store.current_labels(self.conn).items()
            if sid not in self.pool.evaluation_ids and sid in self.pool.sentences
        ]
        self._retraining.start(
            self._retrain,
            data,
            self.strategy,
            self._pool_snapshot(),
            list(self.pool.stop),
            list(self._stop_paths),
        )

    def wait_for_model(self, timeout: float = 30.0) -> bool:
        """Wait for a running retrain and install its model; return True if one arrived.

        Scripts and tests use this; the console never waits.
        """
        if not self._retraining.join(timeout):
            return False
        before = self.model_version
        had_error = self.last_error
        self._poll()
        return self.model_version > before or self.last_error != had_error

    @property
    def updates(self) -> int:
        """Models fitted in the background during this session and installed."""
        return max(self.model_version - (1 if self._initial_model else 0), 0)

    @property
    def behind(self) -> int:
        """Labels newer than the saved version that no model of this session has learned yet."""
        return self.newer_labels if self.updates == 0 else 0

    @property
    def retraining(self) -> bool:
        """True while a model is being fitted in the background."""
        return self._retraining.running

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
        free = [k for k in range(len(self.pool.ids)) if k not in exclude]
        if size is None or len(free) <= size:
            return set()
        if self._subpool is None or len(self._subpool - exclude) < self.batch_size:
            rng = np.random.default_rng([self.settings.seed, self.model_version, len(exclude)])
            self._subpool = {int(k) for k in rng.choice(free, size, replace=False)}
        return set(free) - self._subpool

    def _refill(self) -> None:
        exclude = {self.pool.positions[sid] for sid in self._done if sid in self.pool.positions}
        exclude |= self._outside_subpool(exclude)
        if not self._labeled and self.strategy.cold_start == "centroids":
            free = [k for k in range(len(self.pool.ids)) if k not in exclude]
            vectors = self.pool.pool_vectors[free]
            picks = centroid_picks(vectors, self.batch_size, seed=self.settings.seed)
            self._batch.extend(int(self.pool.ids[free[k]]) for k in picks)
            return
        labeled_vectors = None
        if self.strategy.diversity and self._labeled:
            rows_of = self.pool.vector_rows_of or {}
            recent = [i for i in self._labeled if i in rows_of][-2000:]
            labeled_vectors = self.pool.vector_rows(recent)
        picked = select(
            self._scores,
            self.pool.pool_vectors if self.strategy.diversity else None,
            self.batch_size,
            diversity=self.strategy.diversity,
            exclude=exclude,
            labeled_vectors=labeled_vectors,
            candidates=self.settings.candidates,
            seed=self.settings.seed + self.model_version + len(self._done),
        )
        self._batch.extend(int(self.pool.ids[k]) for k in picked)

    def _item(self, sentence_id: int, previous: tuple[Span, ...] | None) -> Item:
        sentence = self.pool.sentences[sentence_id]
        prediction = self._predictions.get(sentence_id)
        if prediction is None and self._predictor is not None:
            prediction = list(self._predictor([sentence]))[0]
        implicit: tuple[Implicit, ...] = ()
        if previous is not None:
            suggestion, origin = previous, "previous"
            implicit = self._previous_implicit.pop(sentence_id, ())
        elif prediction is not None:
            suggestion, origin = suggested_spans(prediction), "model"
            implicit = suggested_implicit(prediction)
        else:
            suggestion, origin = (), "none"
        return Item(
            sentence=sentence,
            context=store.sentence_context(self.conn, sentence_id),
            suggestion=suggestion,
            prediction=prediction,
            origin=origin,
            in_evaluation=sentence_id in self.pool.evaluation_ids,
            implicit_suggestion=implicit,
        )

    def _claim(self, sentence_id: int) -> bool:
        """Hold the sentence for this session; False (and never ask it) if another has it."""
        if sentence_id in self._done:
            return False
        if store.claim_sentence(self.conn, sentence_id, self.holder, ttl_s=LEASE_S):
            return True
        self._done.add(sentence_id)  # another live session shows it, or has labeled it
        return False

    def next(self) -> Item | None:
        """Return the next sentence to show, or None when nothing is left to ask.

        The sentence is leased to this session in the store, so that another session
        labeling the same workspace is never handed it (:func:`store.claim_sentence`).
        """
        self._poll()
        while self._front:
            sid = self._front.popleft()
            if self._claim(sid):
                return self._item(sid, self._previous.pop(sid, None))
        while True:
            while self._batch:
                sid = self._batch.popleft()
                if self._claim(sid):
                    return self._item(sid, None)
            self._refill()
            if not self._batch:
                return None

    # ----------------------------------------------------------------- answering

    def _check_spans(self, sentence_id: int, spans: Sequence[Span]) -> tuple[Span, ...]:
        if sentence_id not in self.pool.sentences:
            raise InputError(f"Sentence {sentence_id} is not in this workspace.")
        return checked_spans(self.pool.sentences[sentence_id], spans)

    def submit(
        self, sentence_id: int, spans: Sequence[Span], implicit: Sequence[Implicit] = ()
    ) -> int:
        """Store the annotator's answer for a sentence at once; return the label ID.

        ``implicit`` are the traits the sentence states without a quote span; empty
        ``spans`` and ``implicit`` mean "no trait here". The label is committed before
        this returns; a retrain starts in the background when enough labels have arrived.

        Raises:
            InputError: the sentence is unknown, a span does not fit it, or an implicit
                trait has no concept or an unknown stance.
        """
        checked = self._check_spans(sentence_id, spans)
        traits = tuple(dict.fromkeys(checked_implicit(implicit)))
        label_id = store.add_label(self.conn, sentence_id, checked, self.annotator, implicit=traits)
        store.release_sentences(self.conn, self.holder, sentence_id)
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
        if sentence_id not in self.pool.sentences:
            raise InputError(f"Sentence {sentence_id} is not in this workspace.")
        store.add_skip(self.conn, sentence_id, self.annotator)
        store.release_sentences(self.conn, self.holder, sentence_id)
        self._done.add(sentence_id)
        self.skipped_this_session += 1

    def undo(self) -> int | None:
        """Retract this annotator's newest label in force and ask that sentence next.

        Returns:
            The sentence ID, or None when this annotator has no label to undo.
        """
        mine = [
            (label.label_id, sid, label.spans, label.implicit)
            for sid, label in store.current_labels(self.conn).items()
            if label.annotator == self.annotator
        ]
        if not mine:
            return None
        label_id, sentence_id, spans, implicit = max(mine)
        store.retract_label(self.conn, label_id, self.annotator)
        if label_id in self._session_label_ids:
            self.labeled_this_session -= 1
        self.undone_this_session += 1
        self._labeled = set(store.current_labels(self.conn))
        self._done.discard(sentence_id)
        self._front.appendleft(sentence_id)
        self._previous[sentence_id] = tuple(spans)
        self._previous_implicit[sentence_id] = tuple(implicit)
        return sentence_id

    def defer(self, sentence_id: int) -> None:
        """Ask a shown, unanswered sentence again soon: before the batch, after undone ones."""
        if sentence_id not in self._done and sentence_id in self.pool.sentences:
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
        sentence = self.pool.sentences[sentence_id]
        text = sentence.text[checked.start : checked.end]
        return store.add_alias(self.conn, checked.concept, text, sentence.lang, self.annotator)

    def summary(self) -> SessionSummary:
        """Return the session's counts and stopping state."""
        return SessionSummary(
            annotator=self.annotator,
            strategy=self.strategy_name,
            labeled=self.labeled_this_session,
            skipped=self.skipped_this_session,
            undone=self.undone_this_session,
            total_labels=self.total_labels,
            model_version=self.model_version,
            kappas=tuple(self.kappas),
            stop_signal=self.stop_signal,
        )

    def quit(self) -> SessionSummary:
        """End the session and return its summary.

        Every answer is already stored; a retrain still running is abandoned (its thread
        is a daemon and holds no store connection), so quitting never waits.
        """
        self._closed = True
        store.release_sentences(self.conn, self.holder)
        return self.summary()
