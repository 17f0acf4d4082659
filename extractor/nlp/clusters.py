"""Word clusters and word vectors learned from the workspace's own unlabeled text.

Interview answers use words no general-purpose resource knows (local variety names,
dialect words for "hardness" or "cooking time"), so the distributional view is learned
from the answers themselves:

1. count co-occurrences of normalised word forms within +/- ``window`` tokens, with
   each relative position a context of its own ("the" on the left differs from "the"
   on the right), which makes clusters closer to parts of speech, what a tagger needs;
2. weight them by positive pointwise mutual information (PPMI), with the context
   counts smoothed to the power 0.75 (common practice; it damps PMI's bias towards
   rare contexts);
3. reduce the PPMI matrix with truncated SVD to ``dims`` dimensions, rows scaled to
   unit length, giving word vectors;
4. cluster the vectors with mini-batch k-means at several granularities.

The tagger uses the cluster IDs as features (a rare trait word shares a cluster with
frequent ones); linking uses :func:`nearest_words`. The model is a plain dict that
JSON can hold; :func:`save_clusters` writes its vectors as ``.npy`` (never pickle).
"""

from __future__ import annotations

import hashlib
import json
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np
from scipy import sparse
from sklearn.cluster import MiniBatchKMeans
from sklearn.decomposition import TruncatedSVD

from extractor.errors import ModelError
from extractor.nlp import pretrained
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize

FORMAT = "trait-extractor/word-clusters"
VERSION = 1
MIN_WORDS = 8
"""Below this many frequent words there is nothing to cluster; the model is then empty."""


def corpus_fingerprint(texts: Iterable[tuple[str, str]]) -> str:
    """Return a fingerprint of a corpus of ``(text, lang)`` pairs that ignores their order.

    Callers compare it with the fingerprint saved in a cluster model and relearn the
    clusters only when the corpus changed.
    """
    digests = sorted(
        hashlib.sha1(f"{lang}\x00{text}".encode(), usedforsecurity=False).digest()
        for text, lang in texts
    )
    whole = hashlib.sha256(b"".join(digests)).hexdigest()[:16]
    return f"{len(digests)}:{whole}"


def _sentences(texts: list[tuple[str, str]]) -> list[list[str]]:
    return [[fold(text[s:e]) for s, e in tokenize(text, lang)] for text, lang in texts]


def _cooccurrence(ids: list[np.ndarray], size: int, window: int) -> sparse.csr_matrix:
    """Return word x positional-context counts of word IDs (-1: out of vocabulary).

    Column ``size * (2 * (off - 1)) + j`` counts word ``j`` at ``+off`` and column
    ``size * (2 * (off - 1) + 1) + j`` counts it at ``-off``.
    """
    rows, cols = [], []
    for seq in ids:
        for off in range(1, window + 1):
            left, right = seq[:-off], seq[off:]
            keep = (left >= 0) & (right >= 0)
            block = size * 2 * (off - 1)
            rows += [left[keep], right[keep]]
            cols += [right[keep] + block, left[keep] + block + size]
    r = np.concatenate(rows) if rows else np.empty(0, dtype=np.int64)
    c = np.concatenate(cols) if cols else np.empty(0, dtype=np.int64)
    data = np.ones(len(r), dtype=np.float64)
    return sparse.coo_matrix((data, (r, c)), shape=(size, size * 2 * window)).tocsr()


def ppmi(counts: sparse.csr_matrix, *, alpha: float = 0.75) -> sparse.csr_matrix:
    """Return the positive PMI of a co-occurrence count matrix, contexts smoothed by ``alpha``."""
    counts = counts.tocoo()
    total = counts.sum()
    if total == 0:
        return counts.tocsr()
    row = np.asarray(counts.sum(axis=1)).ravel()
    col = np.asarray(counts.sum(axis=0)).ravel() ** alpha
    p_ctx = col / col.sum()
    pmi = np.log(counts.data / total) - np.log(row[counts.row] / total) - np.log(p_ctx[counts.col])
    keep = pmi > 0
    return sparse.csr_matrix((pmi[keep], (counts.row[keep], counts.col[keep])), shape=counts.shape)


def learn_clusters(
    texts: Iterable[tuple[str, str]],
    *,
    seed: int = 0,
    window: int = 2,
    min_count: int = 2,
    max_words: int = 30000,
    dims: int = 64,
    granularities: tuple[int, ...] = (32, 128, 512),
    prototypes: int = 2000,
    neighbours: int = 3,
    space: str | None = pretrained.DEFAULT,
    space_granularities: tuple[int, ...] = (32, 128, 512),
    space_axes: int = 16,
) -> dict[str, Any]:
    """Learn word vectors and clusters from unlabeled ``(text, lang)`` pairs.

    Args:
        texts: The corpus, e.g. every sentence of the workspace.
        seed: Random seed of the SVD and k-means, so a corpus gives the same model.
        window: Co-occurrence window on each side of a word.
        min_count: Words seen fewer times get no vector and no cluster.
        max_words: Keep at most this many of the most frequent words.
        dims: Dimensions of the word vectors.
        granularities: Numbers of clusters, coarse to fine (capped at the word count).
        prototypes: The most frequent words that serve as neighbours.
        neighbours: How many nearest prototypes to keep per word.
        space: The pretrained multilingual space (:mod:`extractor.nlp.pretrained`) that
            clusters every word of the corpus (even words seen once) by meaning across
            languages; ``None`` or ``"none"``, or a space whose package is missing, for
            none.
        space_granularities: Numbers of clusters in the pretrained space, coarse to fine.
        space_axes: How many main axes of the pretrained space place each word
            (:func:`~extractor.nlp.pretrained.word_axes`); the tagger reads them while
            labels are few.

    Returns:
        A JSON-serialisable dict: ``format``, ``version``, ``params``, ``fingerprint``,
        ``words`` (vocabulary in vector order), ``clusters`` (word -> one cluster ID per
        granularity), ``neighbours`` (word -> its nearest prototype words) and
        ``vectors`` (one list of floats per word, rounded) and ``pretrained`` (``space``:
        the space's name or ``"none"``; ``clusters``: word -> one cluster ID per
        granularity of ``space_granularities``; ``axes``: word -> its coordinates on the
        ``space_axes`` main axes).
        With fewer than :data:`MIN_WORDS` frequent words, ``clusters`` and ``vectors``
        are empty.
    """
    corpus = list(texts)
    params = {
        "seed": seed, "window": window, "min_count": min_count, "max_words": max_words,
        "dims": dims, "granularities": list(granularities), "alpha": 0.75,
        "prototypes": prototypes, "neighbours": neighbours,
        "space_granularities": list(space_granularities), "space_axes": space_axes,
    }  # fmt: skip
    model: dict[str, Any] = {
        "format": FORMAT, "version": VERSION, "params": params,
        "fingerprint": corpus_fingerprint(corpus), "words": [], "clusters": {}, "neighbours": {},
        "vectors": [], "pretrained": {"space": pretrained.NONE, "clusters": {}},
    }  # fmt: skip
    sentences = _sentences(corpus)
    model["pretrained"] = _pretrained_clusters(corpus, space, space_granularities, seed, space_axes)
    counts = Counter(w for sent in sentences for w in sent)
    vocab = [w for w, c in counts.most_common(max_words) if c >= min_count]
    if len(vocab) < MIN_WORDS:
        return model
    index = {w: i for i, w in enumerate(vocab)}
    ids = [np.array([index.get(w, -1) for w in sent], dtype=np.int64) for sent in sentences]
    vectors = _word_vectors(ppmi(_cooccurrence(ids, len(vocab), window)), dims, seed)
    labels = _cluster_labels(vectors, granularities, seed)
    model["words"] = vocab
    model["clusters"] = {w: [int(lab[i]) for lab in labels] for i, w in enumerate(vocab)}
    model["neighbours"] = _prototype_neighbours(vocab, vectors, prototypes, neighbours)
    model["vectors"] = np.round(vectors, 4).tolist()
    return model


def _pretrained_clusters(
    corpus: list[tuple[str, str]],
    name: str | None,
    granularities: tuple[int, ...],
    seed: int,
    axes: int = 16,
) -> dict[str, Any]:
    """Return the pretrained space's clusters and main-axis places of every word (folded keys).

    Each folded form is embedded in its most frequent lower-cased spelling (accents
    kept: the encoder knows "preço", not "preco") and carries its most frequent language.
    """
    space = pretrained.load_space(name)
    if space is None:
        return {"space": pretrained.NONE, "clusters": {}}
    spellings: dict[str, Counter[str]] = {}
    langs: dict[str, Counter[str]] = {}
    for text, lang in corpus:
        for s, e in tokenize(text, lang):
            word = text[s:e]
            if not any(c.isalpha() for c in word):
                continue
            key = fold(word)
            spellings.setdefault(key, Counter())[word.lower()] += 1
            langs.setdefault(key, Counter())[lang] += 1
    surface = {key: c.most_common(1)[0][0] for key, c in spellings.items()}
    by_surface = {surface[key]: langs[key].most_common(1)[0][0] for key in surface}
    ids = pretrained.word_clusters(space, by_surface, granularities=granularities, seed=seed)
    found = {key: ids[surface[key]] for key in surface if surface[key] in ids}
    places = pretrained.word_axes(space, by_surface, dims=axes)
    placed = {key: places[surface[key]] for key in surface if surface[key] in places}
    return {"space": space.name, "clusters": found, "axes": placed}


def _word_vectors(weights: sparse.csr_matrix, dims: int, seed: int) -> np.ndarray:
    """Reduce the PPMI matrix to unit-length word vectors of at most ``dims`` dimensions."""
    n_dims = max(1, min(dims, weights.shape[0] - 1))
    svd = TruncatedSVD(n_components=n_dims, random_state=seed, algorithm="randomized")
    reduced = svd.fit_transform(weights)
    # U * sqrt(S) rather than U * S: the top dimensions otherwise dominate similarity.
    vectors = reduced / np.sqrt(np.maximum(svd.singular_values_, 1e-12))
    return _unit_rows(vectors).astype(np.float32)


def _cluster_labels(
    vectors: np.ndarray, granularities: Sequence[int], seed: int
) -> list[np.ndarray]:
    """Cluster the word vectors once per granularity (capped at the word count)."""
    labels = []
    for k in granularities:
        k = min(k, len(vectors))
        # One k-means++ start: extra starts cost more than they gain on these vectors.
        km = MiniBatchKMeans(n_clusters=k, random_state=seed, n_init=1, batch_size=1024)
        labels.append(km.fit_predict(vectors))
    return labels


def _prototype_neighbours(
    vocab: list[str], vectors: np.ndarray, prototypes: int, k: int
) -> dict[str, list[str]]:
    """Return each word's ``k`` nearest among the ``prototypes`` most frequent words.

    A rare word then shares a feature with the frequent words it resembles (a
    distributional prototype), which a tagger trained on few sentences can use.
    """
    n = min(prototypes, len(vocab))
    if k <= 0 or n < 2:
        return {}
    sims = vectors @ vectors[:n].T
    np.fill_diagonal(sims[:n], -np.inf)  # a prototype is not its own neighbour
    top = np.argsort(-sims, axis=1)[:, :k]
    return {w: [vocab[j] for j in top[i]] for i, w in enumerate(vocab)}


def _unit_rows(matrix: np.ndarray) -> np.ndarray:
    norms = np.linalg.norm(matrix, axis=1, keepdims=True)
    return matrix / np.maximum(norms, 1e-12)


def nearest_words(model: Mapping[str, Any], word: str, k: int = 10) -> list[tuple[str, float]]:
    """Return the ``k`` words most similar to ``word`` (cosine of the vectors), best first.

    The word is normalised like the corpus (case and accents ignored); an unknown word,
    or a model without vectors, gives ``[]``.
    """
    words = model.get("words") or []
    if not words:
        return []
    index = _word_index(model)
    i = index.get(fold(word))
    if i is None:
        return []
    vectors = np.asarray(model["vectors"], dtype=np.float32)
    sims = np.clip(vectors @ vectors[i], -1.0, 1.0)  # float32 rounding can pass 1
    sims[i] = -np.inf
    top = np.argsort(-sims)[: max(0, k)]
    return [(words[j], float(sims[j])) for j in top if np.isfinite(sims[j])]


def _word_index(model: Mapping[str, Any]) -> dict[str, int]:
    return {w: i for i, w in enumerate(model["words"])}


def save_clusters(model: Mapping[str, Any], folder: str | Path) -> None:
    """Write a cluster model as ``clusters.json`` and ``vectors.npy`` in ``folder``."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    meta = {key: value for key, value in model.items() if key != "vectors"}
    vectors = np.asarray(model.get("vectors", []), dtype=np.float32)
    np.save(folder / "vectors.npy", vectors, allow_pickle=False)
    (folder / "clusters.json").write_text(json.dumps(meta, ensure_ascii=False), encoding="utf-8")


def load_clusters(folder: str | Path) -> dict[str, Any]:
    """Read a cluster model written by :func:`save_clusters`; vectors come back as an array.

    Raises:
        ModelError: When the files are missing, corrupt or not a cluster model.
    """
    folder = Path(folder)
    try:
        meta = json.loads((folder / "clusters.json").read_text(encoding="utf-8"))
        vectors = np.load(folder / "vectors.npy", allow_pickle=False)
    except (OSError, ValueError, EOFError) as exc:
        # numpy's own message about object arrays advises unpickling the file: never relay it
        raise ModelError(
            f"The word clusters of model version {folder.name} ({folder}) cannot be read: "
            "clusters.json or vectors.npy is missing, damaged or not a plain array; train a "
            "new version with `traits train`."
        ) from exc
    if not isinstance(meta, dict) or meta.get("format") != FORMAT:
        raise ModelError(
            f"{folder / 'clusters.json'} is not a {FORMAT} file; "
            "relearn the clusters from the corpus."
        )
    if len(vectors) != len(meta.get("words", [])):
        raise ModelError(
            f"The vectors in {folder} do not match its word list "
            f"({len(vectors)} vectors, {len(meta.get('words', []))} words); relearn the clusters."
        )
    meta["vectors"] = vectors
    return meta
