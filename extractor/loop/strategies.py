"""Query strategies and batch selection of the active-learning loop.

A strategy scores a pool of tagged sentences (higher = more worth an annotator's time)
with plain functions of one signature, ``score(items) -> np.ndarray``; :func:`select`
then picks a batch, optionally spread out over sentence vectors so that five copies of
the same complaint are not asked five times. The formulas follow Settles & Craven (2008),
"An Analysis of Active Learning Strategies for Sequence Labeling Tasks" (EMNLP).
Density uses modAL's information density or the k-nearest-neighbour density; batch
diversity follows modAL's ranked batch selection (tests check both against modAL). Each
strategy names its sentence vectors: character n-grams, or the pretrained space's
(:mod:`extractor.loop.space_vectors`). The stopping rule is in :mod:`extractor.loop.stopping`.

Cold start: a sentence without a model prediction (``path_prob is None``) scores 0, so
with no fitted model every sentence scores the same and :func:`select` falls back to
information density, batch diversity or a seeded random order.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from typing import NamedTuple

import numpy as np
from sklearn.feature_extraction.text import TfidfVectorizer
from sklearn.metrics import pairwise_distances_chunked
from sklearn.preprocessing import normalize
from sklearn.random_projection import SparseRandomProjection

from extractor.errors import InputError


class PoolItem(NamedTuple):
    """What the strategies need to know about one tagged sentence.

    Attributes:
        marginals: per token, the tagger's probability of each tag (``{tag: prob}``).
        path_prob: probability of the best tag path; None when no model has tagged it.
        n_tokens: number of tokens.
        link_dists: per predicted span, the linker's probability of each concept.
        stance_dists: per predicted span, the probability of each stance.
        concept_probs: the sentence-level model's probability of each concept being
            stated in the sentence, with or without a span (empty without that model).
    """

    marginals: Sequence[Mapping[str, float]] = ()
    path_prob: float | None = None
    n_tokens: int = 0
    link_dists: Sequence[Mapping[str, float]] = ()
    stance_dists: Sequence[Mapping[str, float]] = ()
    concept_probs: Sequence[float] = ()


ScoreFn = Callable[[Sequence[PoolItem]], np.ndarray]

_EPS = 1e-12


def _untagged(item: PoolItem) -> bool:
    return item.path_prob is None or item.n_tokens == 0


def _token_entropies(item: PoolItem) -> np.ndarray:
    """Return each token's entropy H(y_t) = -sum_m P(y_t=m) log P(y_t=m), natural log."""
    out = np.zeros(len(item.marginals))
    for t, dist in enumerate(item.marginals):
        probs = np.array([p for p in dist.values() if p > 0.0], dtype=float)
        out[t] = float(-(probs * np.log(probs)).sum())
    return out


def least_confidence(items: Sequence[PoolItem]) -> np.ndarray:
    """Sequence least confidence, ``1 - P(y*|x)`` (Settles & Craven 2008, LC)."""
    return np.array([0.0 if _untagged(i) else 1.0 - float(i.path_prob or 0.0) for i in items])


def norm_logprob(items: Sequence[PoolItem]) -> np.ndarray:
    """Length-normalised log probability of the best path, ``-log P(y*|x) / T``.

    Least confidence favours long sentences, whose best path is improbable simply because
    it is long; dividing the log probability by the token count removes that bias.
    """
    out = np.zeros(len(items))
    for k, item in enumerate(items):
        if not _untagged(item):
            out[k] = -math.log(max(float(item.path_prob or 0.0), _EPS)) / item.n_tokens
    return out


def total_entropy(items: Sequence[PoolItem]) -> np.ndarray:
    """Total token entropy, ``-sum_t sum_m P(y_t=m) log P(y_t=m)`` (Settles & Craven, TTE)."""
    return np.array([0.0 if _untagged(i) else float(_token_entropies(i).sum()) for i in items])


def mean_entropy(items: Sequence[PoolItem]) -> np.ndarray:
    """Token entropy averaged over tokens, ``TTE / T`` (Settles & Craven 2008, TE)."""
    return np.array([0.0 if _untagged(i) else float(_token_entropies(i).mean()) for i in items])


def _one_minus_max(dists: Sequence[Mapping[str, float]]) -> list[float]:
    return [1.0 - max(d.values()) if d else 1.0 for d in dists]


def link_stance(items: Sequence[PoolItem], *, reduce: str = "max") -> np.ndarray:
    """Uncertainty of linking and stance over the predicted spans, ``1 - max prob``.

    Each predicted span contributes its linking and its stance uncertainty; ``reduce``
    takes their maximum (the worst decision in the sentence) or their mean. A sentence
    with no predicted span scores 0: nothing to link.
    """
    if reduce not in ("max", "mean"):
        raise InputError(f"The 'reduce' parameter must be 'max' or 'mean'; got {reduce!r}.")
    out = np.zeros(len(items))
    for k, item in enumerate(items):
        values = _one_minus_max(item.link_dists) + _one_minus_max(item.stance_dists)
        if values and not _untagged(item):
            out[k] = max(values) if reduce == "max" else float(np.mean(values))
    return out


def combined(items: Sequence[PoolItem], *, weight: float = 0.5) -> np.ndarray:
    """Mean token entropy scaled to [0, 1], mixed with link/stance uncertainty.

    ``(1 - weight) * TE / log(M) + weight * link_stance``, where M is the tag count, so
    both parts lie in [0, 1] and ``weight`` says how much linking and stance matter.
    """
    entropy = mean_entropy(items)
    n_tags = max((len(d) for i in items for d in i.marginals), default=2)
    scaled = entropy / math.log(max(n_tags, 2))
    return (1.0 - weight) * scaled + weight * link_stance(items)


def sentence_uncertainty(items: Sequence[PoolItem]) -> np.ndarray:
    """Sentence-level uncertainty: the largest binary entropy of a concept, in bits.

    ``max_c H(p_c)`` over the sentence-level model's concept probabilities, 1 where some
    concept is a coin flip, 0 where the model is sure of every one (or has none).
    """
    out = np.zeros(len(items))
    for k, item in enumerate(items):
        if item.concept_probs:
            p = np.clip(np.asarray(item.concept_probs, dtype=float), _EPS, 1.0 - _EPS)
            out[k] = float((-(p * np.log2(p)) - (1.0 - p) * np.log2(1.0 - p)).max())
    return out


def norm_logprob_and_sentence(items: Sequence[PoolItem]) -> np.ndarray:
    """The tagger's :func:`norm_logprob` plus the :func:`sentence_uncertainty`.

    With no sentence-level model the sum is :func:`norm_logprob` alone; with no spans to
    tag (every path certain), the sentence-level part decides.
    """
    return norm_logprob(items) + sentence_uncertainty(items)


def random_score(items: Sequence[PoolItem]) -> np.ndarray:
    """Score every sentence the same; :func:`select` then breaks the tie at random."""
    return np.zeros(len(items))


class Strategy(NamedTuple):
    """A named query strategy: a scoring function and how the batch is picked.

    Attributes:
        score: the scoring function.
        density_beta: exponent of the information-density weight (0 = off), as in
            Settles & Craven's information density, ``score * density ** beta``.
        diversity: pick each batch with modAL's ranked batch selection.
        vectors: the sentence vectors of density and diversity: ``"ngrams"``,
            ``"pretrained"`` or ``"both"`` (:mod:`extractor.loop.space_vectors`).
        density_k: 0 = modAL's density over the whole pool; above 0, the mean cosine to
            the ``density_k`` nearest sentences (:func:`knn_density`).
        cold_start: the first batch, before any label: ``"density"`` (the scores are equal,
            so density and diversity decide) or ``"centroids"`` (one sentence nearest each
            k-means centroid of the vectors).
    """

    score: ScoreFn
    density_beta: float = 0.0
    diversity: bool = False
    vectors: str = "ngrams"
    density_k: int = 0
    cold_start: str = "density"


_SPACE_KNN_CENTROIDS = Strategy(
    norm_logprob,
    density_beta=1.0,
    diversity=True,
    vectors="pretrained",
    density_k=20,
    cold_start="centroids",
)
"""The default: MNLP, kNN density and diversity in the pretrained space, centroid start."""

STRATEGIES: dict[str, Strategy] = {
    "least_confidence": Strategy(least_confidence),
    "norm_logprob": Strategy(norm_logprob),
    "total_entropy": Strategy(total_entropy),
    "mean_entropy": Strategy(mean_entropy),
    "link_stance": Strategy(link_stance),
    "sentence": Strategy(sentence_uncertainty, density_beta=1.0, diversity=True),
    "norm_logprob_sentence": Strategy(norm_logprob_and_sentence, density_beta=1.0, diversity=True),
    "combined": Strategy(combined, density_beta=1.0, diversity=True),
    "random": Strategy(random_score),
    # Density and diversity over other sentence vectors (extractor.loop.space_vectors).
    "norm_logprob_ngrams": Strategy(norm_logprob, density_beta=1.0, diversity=True),
    "norm_logprob_space": Strategy(
        norm_logprob, density_beta=1.0, diversity=True, vectors="pretrained"
    ),
    "norm_logprob_space_knn": Strategy(
        norm_logprob, density_beta=1.0, diversity=True, vectors="pretrained", density_k=20
    ),
    "norm_logprob_both": Strategy(norm_logprob, density_beta=1.0, diversity=True, vectors="both"),
    "norm_logprob_space_centroids": Strategy(
        norm_logprob,
        density_beta=1.0,
        diversity=True,
        vectors="pretrained",
        cold_start="centroids",
    ),
    "norm_logprob_space_knn_centroids": _SPACE_KNN_CENTROIDS,
    # Chosen with `traits simulate` (tagger alone, batch 5, seed 0, MAMS train as pool with
    # 500 candidates a round, MAMS test as test; DEVELOPERS.md has the commands and table).
    # MNLP weighted by the k-nearest-neighbour density and spread by ranked batch, both in
    # the pretrained space, first batch nearest the k-means centroids: over 10 repeats, span
    # F1 gain over random, paired by repeat, +5.4 / +4.7 / +2.3 / +1.4 / +0.9 points at
    # 25 / 50 / 100 / 150 / 200 labels (0.665 at 100, 0.680 at 200). The same MNLP with
    # modAL's density and diversity over character n-grams (the default before,
    # "norm_logprob_ngrams"): see DEVELOPERS.md. Earlier, about 20 other scorings and
    # settings (entropy, least confidence, lowest token probability, committees,
    # word-frequency weighting, windows and retraining intervals) did no better at 100
    # labels on MAMS. Adding the sentence-level uncertainty ("norm_logprob_sentence") lost
    # to random on MAMS-ACSA category F1 at 100 labels (tests/bench/acsa_strategy.py).
    # Change this one line when a new simulation says otherwise.
    "default": _SPACE_KNN_CENTROIDS,
}
"""The strategies an annotator can choose with ``--strategy``."""


def get_strategy(name: str) -> Strategy:
    """Return the named strategy.

    Raises:
        InputError: the name is not one of :data:`STRATEGIES`.
    """
    if name not in STRATEGIES:
        raise InputError(
            f"The strategy must be one of {', '.join(sorted(STRATEGIES))}; got {name!r}."
        )
    return STRATEGIES[name]


# --------------------------------------------------------------------------- sentence vectors


def sentence_vectors(texts: Sequence[str], *, dims: int = 128, seed: int = 0) -> np.ndarray:
    """Return dense, unit-length vectors of the sentences for density and diversity.

    Character n-gram TF-IDF (robust to spelling variants, works for any language),
    reduced by a sparse random projection: distances are kept approximately
    (Johnson-Lindenstrauss) at a fraction of the cost of an SVD, so a pool of 5,000
    sentences is vectorised in about a second.
    """
    if not texts:
        return np.zeros((0, 1))
    tfidf = TfidfVectorizer(
        analyzer="char_wb",
        ngram_range=(3, 4),
        max_features=1 << 14,
        sublinear_tf=True,
        lowercase=True,
        dtype=np.float32,
    )
    matrix = tfidf.fit_transform(texts)
    if matrix.shape[1] <= dims:
        return np.asarray(matrix.todense(), dtype=float)
    projection = SparseRandomProjection(n_components=dims, random_state=seed)
    reduced = projection.fit_transform(matrix)
    dense = reduced.toarray() if hasattr(reduced, "toarray") else np.asarray(reduced)
    return np.asarray(normalize(dense), dtype=float)


_DENSE_LIMIT = 2000
_REFERENCE = 1000


def density(vectors: np.ndarray, *, metric: str = "euclidean", seed: int = 0) -> np.ndarray:
    """Return each sentence's information density: mean of ``1 / (1 + distance)`` to the pool.

    Pools up to 2,000 sentences use modAL's :func:`~modAL.density.information_density`
    exactly. Larger pools average over a seeded random reference sample of 1,000
    sentences instead of all of them: an unbiased estimate of the same mean, at a
    fraction of the cost of the full distance matrix (200 MB for 5,000 sentences).
    """
    n = len(vectors)
    if n <= _DENSE_LIMIT:
        # modAL takes about a second to import and `traits run` never chooses sentences.
        from modAL.density import information_density  # noqa: PLC0415

        return np.asarray(information_density(vectors, metric=metric))
    rng = np.random.default_rng(seed)
    reference = vectors[rng.choice(n, size=min(_REFERENCE, n), replace=False)]
    parts = [
        (1.0 / (1.0 + chunk)).mean(axis=1)
        for chunk in pairwise_distances_chunked(vectors, reference, metric=metric)
    ]
    return np.concatenate(parts)


_KNN_LIMIT = 5000


def knn_density(
    vectors: np.ndarray, k: int, *, chunk: int = 512, limit: int = _KNN_LIMIT, seed: int = 0
) -> np.ndarray:
    """Return each row's mean cosine similarity to its ``k`` nearest other rows, at least 0.

    The K-nearest-neighbour density of Zhu, Wang, Yao & Tsou (2008), "Active Learning with
    Sampling by Uncertainty and Density for Word Sense Disambiguation and Text
    Classification" (COLING): a sentence in a tight group of similar sentences is dense
    even when the pool as a whole is spread out. Rows are compared in chunks, so memory
    grows with ``chunk * len(vectors)``. A negative mean (no near sentence) counts as 0, so
    that it can weigh a score.

    Above ``limit`` rows, the neighbours are looked for among a seeded random sample of
    ``limit`` rows, and ``k`` shrinks in proportion (at least 1), so that the cost stays
    linear in the pool's size; at or below it the figure is exact.
    """
    n = len(vectors)
    if n < 2:
        return np.ones(n)
    unit = normalize(np.asarray(vectors, dtype=float))
    reference = np.arange(n)
    if n > limit:
        reference = np.sort(np.random.default_rng(seed).choice(n, size=limit, replace=False))
        k = round(k * limit / n)
    m = len(reference)
    k = max(1, min(k, m - 1))
    slot = np.full(n, -1)
    slot[reference] = np.arange(m)
    out = np.zeros(n)
    for start in range(0, n, chunk):
        sims = unit[start : start + chunk] @ unit[reference].T
        rows = np.arange(len(sims))
        own = slot[start : start + len(sims)]
        sims[rows[own >= 0], own[own >= 0]] = -np.inf  # never one's own neighbour
        top = np.partition(sims, m - k, axis=1)[:, m - k :]
        out[start : start + len(sims)] = top.mean(axis=1)
    return np.maximum(out, 0.0)


def strategy_density(vectors: np.ndarray, strategy: Strategy) -> np.ndarray:
    """Return the density ``strategy`` weighs by: :func:`knn_density` or :func:`density`."""
    if strategy.density_k > 0:
        return knn_density(vectors, strategy.density_k)
    return density(vectors)


def weigh_by_density(scores: np.ndarray, dens: np.ndarray | None, beta: float) -> np.ndarray:
    """Return ``scores * dens ** beta``; with equal scores (cold start), density alone."""
    if dens is None or beta == 0.0 or len(scores) == 0:
        return scores
    weight: np.ndarray = np.power(dens, beta)
    if np.ptp(scores) == 0.0:
        return weight
    weighted: np.ndarray = scores * weight
    return weighted


# --------------------------------------------------------------------------- selection


def _euclidean(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Pairwise Euclidean distances, without building an (n, m, dims) array."""
    squared = (a**2).sum(axis=1)[:, None] + (b**2).sum(axis=1)[None, :] - 2.0 * a @ b.T
    distances: np.ndarray = np.sqrt(np.maximum(squared, 0.0))
    return distances


def ranked_batch_indices(
    unlabeled: np.ndarray,
    uncertainty: np.ndarray,
    labeled: np.ndarray | None,
    n: int,
    *,
    n_unlabeled: int | None = None,
) -> list[int]:
    """Ranked batch-mode selection (Cardoso et al. 2017), as in modAL's ``ranked_batch``.

    Each pick maximises ``alpha * (1 - sim) + (1 - alpha) * uncertainty``, where ``sim``
    is ``1 / (1 + distance)`` to the nearest labeled or already picked sentence and
    ``alpha = |U| / (|U| + |D|)``. With nothing labeled, the first pick is the sentence
    with the smallest mean distance to the others. The same algorithm as modAL's
    (a test checks both agree); it keeps the nearest distances up to date instead of
    recomputing them with one scikit-learn call per pick, which cost 20 ms a pick here.

    ``n_unlabeled`` is the size of the unlabeled pool that ``unlabeled`` was cut from
    (default: ``len(unlabeled)``). :func:`select` passes only the top-scored candidates
    here; ``|U|`` in ``alpha`` must still count the whole pool, as it does when modAL is
    given the pool, or ``alpha`` falls to 50 / (50 + |D|) once |D| passes the candidate
    count and the batch is simply the top scores again.
    """
    n_pool = len(unlabeled)
    n = min(n, n_pool)
    if n <= 0:
        return []
    free = np.ones(n_pool, dtype=bool)
    # Unlabeled sentences outside the candidates, counted in alpha but never picked.
    outside = max((n_unlabeled or n_pool) - n_pool, 0)
    picked: list[int] = []
    if labeled is None or len(labeled) == 0:
        first = int(np.argmin(_euclidean(unlabeled, unlabeled).mean(axis=0)))
        picked.append(first)
        free[first] = False
        nearest = np.linalg.norm(unlabeled - unlabeled[first], axis=1)
        n_labeled = 1
        # modAL still counts the cold-start pick as unlabeled when weighing alpha; we
        # follow it so that both give the same batch.
        extra = 1
    else:
        nearest = _euclidean(unlabeled, labeled).min(axis=1)
        n_labeled = len(labeled)
        extra = 0
    while len(picked) < n:
        n_free = int(free.sum()) + outside + extra
        alpha = n_free / (n_free + n_labeled)
        score = alpha * (1.0 - 1.0 / (1.0 + nearest)) + (1.0 - alpha) * uncertainty
        score[~free] = -np.inf
        best = int(np.argmax(score))
        picked.append(best)
        free[best] = False
        nearest = np.minimum(nearest, np.linalg.norm(unlabeled - unlabeled[best], axis=1))
        n_labeled += 1
    return picked


def select(
    scores: np.ndarray,
    vectors: np.ndarray | None,
    n: int,
    *,
    diversity: bool,
    exclude: set[int] | frozenset[int] = frozenset(),
    labeled_vectors: np.ndarray | None = None,
    candidates: int = 50,
    seed: int | None = 0,
) -> list[int]:
    """Pick up to ``n`` pool indices to ask next, best first.

    Without diversity: the ``n`` highest scores, ties broken in a seeded random order.
    With diversity: the top ``max(candidates, 5n)`` by score are ranked with
    :func:`ranked_batch_indices` (modAL's ranked batch, Cardoso et al. 2017), which trades
    uncertainty against distance to what is labeled or already in the batch, with modAL's
    weight ``alpha = |U| / (|U| + |D|)`` counting every unlabeled (not excluded) item. Scores
    are rescaled to [0, 1] first, because ranked batch adds them to a [0, 1] dissimilarity.

    Args:
        scores: one score per pool item, higher = more informative.
        vectors: sentence vectors (rows match ``scores``); needed for diversity.
        n: batch size.
        diversity: spread the batch out over ``vectors``.
        exclude: pool indices never to pick (labeled, skipped, shown).
        labeled_vectors: vectors of labeled sentences, for diversity.
        candidates: how many top-scored items the diverse selection considers.
        seed: seed of the tie-breaking order (None = unseeded).

    Raises:
        InputError: ``n`` is not positive, or diversity is asked without vectors.
    """
    if n < 1:
        raise InputError(f"The batch size must be at least 1; got {n}.")
    scores = np.asarray(scores, dtype=float)
    if diversity and (vectors is None or len(vectors) != len(scores)):
        raise InputError("Diverse batch selection needs one sentence vector per pool item.")
    allowed = np.array([i for i in range(len(scores)) if i not in exclude], dtype=int)
    if len(allowed) == 0:
        return []
    # A random permutation before a stable sort breaks ties at random but reproducibly.
    order = np.random.default_rng(seed).permutation(allowed)
    ranked = order[np.argsort(-scores[order], kind="stable")]
    if not diversity or vectors is None:
        return [int(i) for i in ranked[:n]]
    pool = ranked[: max(candidates, 5 * n)]
    sub = scores[pool]
    spread = float(np.ptp(sub))
    unit = (sub - sub.min()) / spread if spread > 0 else np.zeros(len(sub))
    labeled = None
    if labeled_vectors is not None and len(labeled_vectors) > 0:
        labeled = np.asarray(labeled_vectors, dtype=float)
    picked = ranked_batch_indices(
        np.asarray(vectors, dtype=float)[pool], unit, labeled, n, n_unlabeled=len(allowed)
    )
    return [int(pool[i]) for i in picked]
