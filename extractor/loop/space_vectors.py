"""Sentence vectors for density and diversity, from the pretrained space or character n-grams.

The query strategies (:mod:`extractor.loop.strategies`) weigh a sentence by how many
others resemble it (information density) and spread each batch over sentences unlike
one another (batch diversity); both need one vector per sentence. Three kinds:

* ``"pretrained"``: a weighted mean of the pretrained space's word vectors
  (:mod:`extractor.nlp.pretrained`), so "too bitter", "trop amer" and "demasiado amargo"
  are near each other although they share no letters. Each word weighs
  ``a / (a + p(w))``, with ``p(w)`` its share of the pool's words and ``a = 1e-3``
  (smooth inverse frequency, Arora, Liang & Ma 2017, "A Simple but Tough-to-Beat Baseline
  for Sentence Embeddings", ICLR), so "the" and "it" hardly count; then each language's
  mean vector is removed (their common-component removal, done by subtracting the mean),
  so the similarity says what a sentence is about, not which language it is in.
* ``"ngrams"``: character n-gram TF-IDF reduced by random projection
  (:func:`extractor.loop.strategies.sentence_vectors`), the workspace's own text alone.
* ``"both"``: the two side by side, each unit length, scaled by ``1/sqrt(2)``, so the
  cosine of two sentences is the mean of the two kinds' cosines.

When the space is ``"none"``, not installed or fails to load, ``"pretrained"`` and
``"both"`` fall back to ``"ngrams"``: active learning then works as without the space.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Sequence

import numpy as np
from sklearn.cluster import KMeans

from extractor.errors import InputError
from extractor.loop.strategies import sentence_vectors
from extractor.nlp import pretrained
from extractor.nlp.text import tokenize

KINDS = ("pretrained", "ngrams", "both")
"""The kinds of sentence vectors a strategy can ask for."""

SIF_A = 1e-3
"""The smooth-inverse-frequency constant ``a`` (Arora et al. 2017 use 1e-3 to 1e-4)."""

MIN_CENTRED = 20
"""The fewest sentences of one language whose own mean vector is removed from them."""


def words_of(text: str, lang: str) -> list[str]:
    """Return the lower-cased tokens of ``text`` that hold a letter (no numbers, no punctuation)."""
    return [
        text[s:e].lower() for s, e in tokenize(text, lang) if any(c.isalpha() for c in text[s:e])
    ]


def space_sentence_vectors(
    space: pretrained.Space, texts: Sequence[str], langs: Sequence[str], *, a: float = SIF_A
) -> np.ndarray:
    """Return one unit-length row per text: SIF-weighted mean word vector, centred by language.

    A text without words gets a zero row (it is then far from everything and near nothing).
    """
    token_lists = [words_of(t, lang) for t, lang in zip(texts, langs, strict=True)]
    counts = Counter(w for tokens in token_lists for w in tokens)
    total = sum(counts.values())
    if not total:
        return np.zeros((len(texts), 1), dtype=np.float32)
    vocab = sorted(counts)
    index = {w: i for i, w in enumerate(vocab)}
    matrix = space.words(vocab)
    weight = np.array([a / (a + counts[w] / total) for w in vocab], dtype=np.float32)
    out = np.zeros((len(texts), matrix.shape[1]), dtype=np.float32)
    for row, tokens in enumerate(token_lists):
        ids = [index[w] for w in tokens]
        if ids:
            out[row] = (weight[ids, None] * matrix[ids]).sum(axis=0) / weight[ids].sum()
    empty = ~out.any(axis=1)
    out = _centred(out, [lang.split("-")[0] for lang in langs])
    out[empty] = 0.0
    return out


def _centred(vectors: np.ndarray, langs: Sequence[str]) -> np.ndarray:
    """Remove each language's mean vector, then make the rows unit length.

    A language needs :data:`MIN_CENTRED` sentences for its own mean (two sentences less
    their mean are exact opposites); the rest lose the mean of the whole pool, and a pool
    smaller than that is left as it is.
    """
    vectors = np.asarray(vectors, dtype=np.float32)
    out = vectors.copy()
    if len(out) >= MIN_CENTRED:
        tags = np.asarray(langs)
        out -= vectors.mean(axis=0)
        for lang in set(langs):
            rows = tags == lang
            if rows.sum() >= MIN_CENTRED:
                out[rows] = vectors[rows] - vectors[rows].mean(axis=0)
    norms = np.linalg.norm(out, axis=1, keepdims=True)
    return out / np.maximum(norms, 1e-12)


def pool_vectors(
    texts: Sequence[str],
    langs: Sequence[str],
    *,
    kind: str = "pretrained",
    space: str | None = pretrained.DEFAULT,
    seed: int = 0,
) -> np.ndarray:
    """Return one vector per sentence for density and diversity (see the module docstring).

    Args:
        texts: The sentences.
        langs: Each sentence's language tag.
        kind: ``"pretrained"``, ``"ngrams"`` or ``"both"``.
        space: The pretrained space's name (``"none"``: no space, n-grams alone).
        seed: Seed of the random projection of the n-gram vectors.

    Raises:
        InputError: ``kind`` is not one of :data:`KINDS`.
    """
    if kind not in KINDS:
        raise InputError(f"The sentence vectors must be one of {', '.join(KINDS)}; got {kind!r}.")
    if not texts:
        return np.zeros((0, 1))
    loaded = None if kind == "ngrams" else pretrained.load_space(space)
    if loaded is None:
        return sentence_vectors(texts, seed=seed)
    dense = space_sentence_vectors(loaded, texts, langs).astype(float)
    if kind == "pretrained":
        return dense
    grams = sentence_vectors(texts, seed=seed)
    return np.hstack([dense, grams]) / math.sqrt(2.0)


def centroid_picks(vectors: np.ndarray, n: int, *, seed: int = 0) -> list[int]:
    """Return ``n`` rows, one nearest each centroid of a k-means with ``k = n``, largest first.

    A first batch that covers what the pool talks about, instead of a random draw that
    may ask the same kind of sentence twice (a common practice for a cold start in active
    learning: cluster the pool and label one representative per cluster). Rows already
    picked for a larger cluster are skipped, so the picks are distinct.
    """
    rows = len(vectors)
    n = min(n, rows)
    if n <= 0:
        return []
    km = KMeans(n_clusters=n, random_state=seed, n_init=1).fit(vectors)
    sizes = np.bincount(km.labels_, minlength=n)
    picked: list[int] = []
    for c in np.argsort(-sizes, kind="stable"):
        distance = np.linalg.norm(vectors - km.cluster_centers_[c], axis=1)
        distance[picked] = np.inf
        picked.append(int(np.argmin(distance)))
    return picked
