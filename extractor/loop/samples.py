"""What a labeling session draws from: its settings, the evaluation sample, the stop set, the pool.

The evaluation sample and the stop set are stored with the workspace, so every session,
every training run and ``traits evaluate`` see the same ones. :class:`SessionPool` reads
once, at the start of a session, the sentences the session may ask and the vectors its
strategy needs.
"""

from __future__ import annotations

import dataclasses
import functools
import math
import sqlite3
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from extractor.loop.space_vectors import pool_vectors
from extractor.loop.strategies import Strategy, strategy_density
from extractor.types import Sentence
from extractor.workspace import store


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
    if not evaluation and target > 0:
        drawn = rng.choice(all_ids, target, False)
        store.add_to_sample(conn, "evaluation", sorted(int(i) for i in drawn))
        evaluation = store.sample_ids(conn, "evaluation")
    stop = store.sample_ids(conn, "stop")
    if not stop and settings.stop_set_size > 0:
        free = _free(conn, all_ids, set(evaluation))
        size = min(settings.stop_set_size, len(free))
        if size > 0:
            store.add_to_sample(conn, "stop", sorted(int(i) for i in rng.choice(free, size, False)))
            stop = store.sample_ids(conn, "stop")
    if evaluation and len(evaluation) < target:
        free = _free(conn, all_ids, set(evaluation) | set(stop))
        size = min(target - len(evaluation), len(free))
        if size > 0:
            # Seeded by the sample's size, so the same growth draws the same sentences.
            grow = np.random.default_rng([settings.seed, len(evaluation)])
            drawn = grow.choice(free, size, False)
            store.add_to_sample(conn, "evaluation", sorted(int(i) for i in drawn))
            evaluation = store.sample_ids(conn, "evaluation")
    return evaluation, stop


def _free(conn: sqlite3.Connection, all_ids: Sequence[int], held: set[int]) -> list[int]:
    """Return the sentences that are neither in ``held`` nor labeled, in store order."""
    taken = held | set(store.current_labels(conn))
    return [i for i in all_ids if i not in taken]


@dataclass(frozen=True, eq=False)
class SessionPool:
    """The sentences of one session, read once when it opens; build with :meth:`read`.

    Attributes:
        sentences: every sentence of the workspace, by ID.
        evaluation_ids: the evaluation sample.
        stop: the stop set's sentences.
        ids: the sentences the session may ask, in ranking order.
        positions: each of those sentence IDs' position in ``ids``.
        vectors: sentence vectors of every sentence, when the strategy needs them.
        vector_rows_of: each sentence ID's row in ``vectors``.
        density: information density of the pool's sentences, when the strategy uses it.
    """

    sentences: dict[int, Sentence]
    evaluation_ids: frozenset[int]
    stop: list[Sentence]
    ids: np.ndarray
    positions: dict[int, int]
    vectors: np.ndarray | None = None
    vector_rows_of: dict[int, int] | None = None
    density: np.ndarray | None = None

    @classmethod
    def read(
        cls, conn: sqlite3.Connection, settings: SessionSettings, strategy: Strategy
    ) -> SessionPool:
        """Make sure the samples exist, then read the pool and compute what ``strategy`` needs.

        Vectors depend on the text only, so they are computed once per session.
        """
        evaluation, stop = ensure_samples(conn, settings)
        sentences = {s.id: s for s in store.sentences(conn)}
        evaluation_ids = frozenset(evaluation)
        if settings.offer_evaluation:
            pool = [i for i in evaluation if i in sentences]
        else:
            pool = [i for i in sentences if i not in evaluation_ids]
        vectors, rows_of = None, None
        if strategy.diversity or strategy.density_beta or strategy.cold_start != "density":
            ids = list(sentences)
            rows_of = {sid: k for k, sid in enumerate(ids)}
            vectors = pool_vectors(
                [sentences[i].text for i in ids],
                [sentences[i].lang for i in ids],
                kind=strategy.vectors,
                seed=settings.seed,
            )
        found = cls(
            sentences=sentences,
            evaluation_ids=evaluation_ids,
            stop=[sentences[i] for i in stop if i in sentences],
            ids=np.array(pool, dtype=int),
            positions={sid: k for k, sid in enumerate(pool)},
            vectors=vectors,
            vector_rows_of=rows_of,
        )
        if strategy.density_beta and len(pool):
            dens = strategy_density(found.vector_rows(pool), strategy)
            found = dataclasses.replace(found, density=dens)
        return found

    @functools.cached_property
    def pool_vectors(self) -> np.ndarray:
        """Return the vectors of the sentences in ``ids``, in that order (computed once)."""
        return self.vector_rows([int(i) for i in self.ids])

    def vector_rows(self, ids: Sequence[int]) -> np.ndarray:
        """Return the vectors of the given sentence IDs (zeros when there are none)."""
        if self.vectors is None or self.vector_rows_of is None:
            return np.zeros((len(ids), 1))
        return self.vectors[[self.vector_rows_of[i] for i in ids]]
