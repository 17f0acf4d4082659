"""Sentence vectors from the pretrained space, k-nearest-neighbour density, centroid cold start.

Sources: the K-nearest-neighbour density of Zhu, Wang, Yao & Tsou (2008), "Active
Learning with Sampling by Uncertainty and Density" (COLING), the mean cosine similarity
to a sentence's K nearest neighbours (formula from memory), recomputed here with
scikit-learn's ``cosine_similarity``; the smooth inverse frequency weight ``a / (a + p(w))``
of Arora, Liang & Ma (2017), "A Simple but Tough-to-Beat Baseline for Sentence
Embeddings" (ICLR), formula from memory; scikit-learn's ``KMeans`` for the centroids.
"""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.cluster import KMeans
from sklearn.metrics.pairwise import cosine_similarity

from extractor.errors import InputError
from extractor.loop import strategies as active
from extractor.loop.space_vectors import (
    KINDS,
    MIN_CENTRED,
    centroid_picks,
    pool_vectors,
    space_sentence_vectors,
    words_of,
)
from extractor.loop.strategies import STRATEGIES, knn_density, select, strategy_density
from extractor.nlp import pretrained

TEXTS = [
    "The cassava from Lomari market is too bitter to eat.",
    "Too bitter, the children refuse it.",
    "It cooks fast and the flour is white.",
    "Le prix au marché de Lomari est trop élevé.",
]
LANGS = ["en", "en", "en", "fr"]


def _blobs(seed: int = 0) -> tuple[np.ndarray, np.ndarray]:
    """Three tight, well-apart groups of 20 points in 8 dimensions, and each point's group."""
    rng = np.random.default_rng(seed)
    centres = np.eye(8)[:3] * 5.0
    groups = np.repeat(np.arange(3), 20)
    return centres[groups] + rng.normal(scale=0.1, size=(60, 8)), groups


@pytest.mark.parametrize("k", [1, 3, 10])
def test_knn_density_is_mean_cosine_to_the_k_nearest_by_scikit_learn(k: int) -> None:
    # Zhu et al. (2008): density(x) = mean over the K most similar x' != x of cos(x, x').
    rng = np.random.default_rng(k)
    x = rng.normal(size=(40, 6)) + 1.0  # offset so that every mean is positive
    sims = cosine_similarity(x)
    np.fill_diagonal(sims, -np.inf)
    expected = np.sort(sims, axis=1)[:, -k:].mean(axis=1)
    assert np.allclose(knn_density(x, k, chunk=7), expected)


def test_knn_density_of_a_large_pool_looks_among_a_sample() -> None:
    rng = np.random.default_rng(5)
    x = rng.normal(size=(300, 6)) + 1.0
    sampled = knn_density(x, 10, limit=100, seed=2)
    reference = np.sort(np.random.default_rng(2).choice(300, size=100, replace=False))
    sims = cosine_similarity(x, x[reference])  # scikit-learn, as above
    for j, row in enumerate(reference):
        sims[row, j] = -np.inf
    k = round(10 * 100 / 300)
    assert np.allclose(sampled, np.sort(sims, axis=1)[:, -k:].mean(axis=1))
    # an estimate of the exact figure: same order of sentences, by and large
    assert np.corrcoef(sampled, knn_density(x, 10))[0, 1] > 0.8


def test_knn_density_is_highest_in_the_tight_group() -> None:
    x, groups = _blobs()
    x[groups == 2] += np.random.default_rng(1).normal(scale=2.0, size=(20, 8))  # spread out
    dens = knn_density(x, 5)
    assert dens[groups == 0].min() > dens[groups == 2].max()


def test_knn_density_never_negative() -> None:
    # Two opposite points: their only neighbour has cosine -1, counted as 0.
    assert knn_density(np.array([[1.0, 0.0], [-1.0, 0.0]]), 1).tolist() == [0.0, 0.0]


def test_strategy_density_follows_density_k() -> None:
    x, _ = _blobs()
    knn = STRATEGIES["norm_logprob_space_knn"]
    assert np.allclose(strategy_density(x, knn), knn_density(x, knn.density_k))
    assert np.allclose(strategy_density(x, STRATEGIES["norm_logprob_ngrams"]), active.density(x))


def test_centroid_picks_take_one_sentence_from_each_group() -> None:
    x, groups = _blobs()
    picks = centroid_picks(x, 3, seed=0)
    assert sorted(groups[picks].tolist()) == [0, 1, 2]
    # each pick is the member nearest its k-means centroid (scikit-learn's KMeans)
    km = KMeans(n_clusters=3, random_state=0, n_init=1).fit(x)
    for p in picks:
        centre = km.cluster_centers_[km.labels_[p]]
        members = np.flatnonzero(km.labels_ == km.labels_[p])
        nearest = members[np.argmin(np.linalg.norm(x[members] - centre, axis=1))]
        assert p == nearest


def test_centroid_picks_are_distinct_and_capped() -> None:
    x = np.arange(12.0).reshape(4, 3)  # four points, ten clusters asked: every row once
    assert sorted(centroid_picks(x, 10)) == [0, 1, 2, 3]
    assert centroid_picks(x, 0) == []


def test_diverse_batch_covers_every_group_even_when_one_group_scores_highest() -> None:
    x, groups = _blobs()
    scores = np.where(groups == 0, 1.0, 0.2)  # uncertainty alone would take group 0 thrice
    picked = select(scores, x, 3, diversity=True, candidates=60)
    assert sorted(groups[picked].tolist()) == [0, 1, 2]
    plain = select(scores, x, 3, diversity=False)
    assert groups[plain].tolist() == [0, 0, 0]


def test_words_of_keeps_words_not_numbers_or_punctuation() -> None:
    assert words_of("Too bitter, 18 months!", "en") == ["too", "bitter", "months"]


class _FakeSpace(pretrained.Space):
    """A space whose word vectors are fixed rows, to check the weighting by hand."""


def test_space_sentence_vectors_are_sif_weighted_means_centred_by_language() -> None:
    table = {"a": [1.0, 0.0, 0.0], "b": [0.0, 1.0, 0.0], "c": [0.0, 0.0, 1.0]}
    space = _FakeSpace("fake", lambda words: np.array([table[w] for w in words]))
    texts, langs = ["a a b", "c", "b c"], ["en", "en", "en"]
    got = space_sentence_vectors(space, texts, langs, a=0.1)
    # Arora et al. (2017): weight a / (a + p(w)); p(a) = 2/6, p(b) = 2/6, p(c) = 2/6 here
    # so all words weigh the same; a pool this small is not centred, only made unit length.
    means = np.array([[2 / 3, 1 / 3, 0.0], [0.0, 0.0, 1.0], [0.0, 0.5, 0.5]])
    expected = means / np.linalg.norm(means, axis=1, keepdims=True)
    assert np.allclose(got, expected, atol=1e-6)


def test_space_sentence_vectors_remove_each_large_languages_mean() -> None:
    table = {"x": [1.0, 0.0, 0.2], "y": [0.0, 1.0, 0.2], "z": [0.3, 0.3, 1.0]}
    space = _FakeSpace("fake", lambda words: np.array([table[w] for w in words]))
    rng = np.random.default_rng(0)
    texts = [" ".join(rng.choice(["x", "y"], size=3)) for _ in range(MIN_CENTRED)]
    texts += ["z x", "z y", "z"]  # a language with too few sentences for its own mean
    langs = ["en"] * MIN_CENTRED + ["sw"] * 3
    got = space_sentence_vectors(space, texts, langs)
    raw = space_sentence_vectors(space, texts[:MIN_CENTRED] + texts[MIN_CENTRED:], ["en"] * 23)
    assert not np.allclose(got, raw)
    # The English rows point along (row - English mean); the Swahili rows along
    # (row - pool mean): recover the uncentred SIF means and compare directions.
    counts = {"x": 0, "y": 0, "z": 0}
    for t in texts:
        for w in t.split():
            counts[w] += 1
    total = sum(counts.values())
    weight = {w: 1e-3 / (1e-3 + c / total) for w, c in counts.items()}
    unit = {w: np.array(v) / np.linalg.norm(v) for w, v in table.items()}  # the space's rows
    means = np.array(
        [
            sum(weight[w] * unit[w] for w in t.split()) / sum(weight[w] for w in t.split())
            for t in texts
        ]
    )
    english = means[:MIN_CENTRED] - means[:MIN_CENTRED].mean(axis=0)
    swahili = means[MIN_CENTRED:] - means.mean(axis=0)
    expected = np.vstack([english, swahili])
    expected /= np.linalg.norm(expected, axis=1, keepdims=True)
    assert np.allclose(got, expected, atol=1e-5)


def test_space_sentence_vectors_weigh_frequent_words_less() -> None:
    table = {"x": [1.0, 0.0], "y": [0.0, 1.0]}
    space = _FakeSpace("fake", lambda words: np.array([table[w] for w in words]))
    texts = ["x y"] + ["x"] * 8 + ["y y y y y y y y y y y y"]  # p(x) = 9/22, p(y) = 13/22
    raw_a = 1e-3
    wx, wy = raw_a / (raw_a + 9 / 22), raw_a / (raw_a + 13 / 22)
    # Before centring, "x y" is the SIF mean (wx * x + wy * y) / (wx + wy): x weighs more.
    got = space_sentence_vectors(space, texts, ["en"] * len(texts))
    first = np.array([wx, wy]) / np.linalg.norm([wx, wy])
    assert wx > wy
    assert np.allclose(got[0], first, atol=1e-5)


def test_pool_vectors_fall_back_to_ngrams_without_a_space() -> None:
    ngrams = active.sentence_vectors(TEXTS, seed=0)
    for kind in ("pretrained", "both", "ngrams"):
        assert np.array_equal(pool_vectors(TEXTS, LANGS, kind=kind, space="none"), ngrams)


def test_pool_vectors_reject_an_unknown_kind() -> None:
    with pytest.raises(InputError, match="one of pretrained, ngrams, both"):
        pool_vectors(TEXTS, LANGS, kind="bert")


@pytest.mark.skipif(not pretrained.installed(), reason="the pretrained space is not installed")
def test_pretrained_vectors_put_a_translation_nearer_than_another_topic() -> None:
    texts = [
        "the cassava is too bitter",
        "la yuca es demasiado amarga",
        "the market price went up",
        "le prix au marché a augmenté",
        "the roots rot in the field",
        "las raíces se pudren en el campo",
    ]
    langs = ["en", "es", "en", "fr", "en", "es"]
    vectors = pool_vectors(texts, langs, kind="pretrained")
    sims = vectors @ vectors.T
    for i in (0, 2, 4):
        others = [j for j in range(6) if j not in (i, i + 1)]
        assert sims[i, i + 1] > sims[i, others].max()
    grams = pool_vectors(texts, langs, kind="ngrams")
    assert (grams @ grams.T)[0, 1] < (grams @ grams.T)[0, 2]  # n-grams alone miss it
    both = pool_vectors(texts, langs, kind="both")
    assert np.allclose(np.linalg.norm(both, axis=1), 1.0, atol=1e-5)
    # side by side, each half unit length: the cosine is the mean of the two cosines
    assert np.allclose(both @ both.T, (sims + grams @ grams.T) / 2.0, atol=1e-5)


def test_every_strategy_names_known_vectors_and_cold_start() -> None:
    for name, spec in STRATEGIES.items():
        assert spec.vectors in KINDS, name
        assert spec.cold_start in ("density", "centroids"), name
        assert spec.density_k >= 0, name
