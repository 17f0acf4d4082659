"""Sentence-level trait detection: which concepts a sentence states, with or without a span.

"My children finish the plate" states taste without a phrase naming it, so the tagger
cannot find it. :class:`SentenceTraits` is a multi-label classifier over whole sentences:
one logistic regression per concept (one-vs-rest) gives a probability per concept per
sentence, and a concept is predicted when its probability reaches ``threshold`` (below
it the model abstains). It learns from both kinds of labels: the concepts of a sentence's
mentions and its implicit traits.

Features of a sentence (all from the workspace's own material, nothing downloaded):

* its folded words and word pairs (TF-IDF, sublinear counts);
* the concepts the dictionary matches in it (``dict=<concept>``), so a listed synonym
  counts from the first label on;
* the word clusters of its words (the coarsest granularity), so a rare word borrows
  from frequent words of its cluster;
* the words of the question asked (``q=<word>``): "what do you dislike" changes what a
  short answer is about;
* the mean of its word vectors (the clusters' vectors, or a pretrained representation
  given as ``embed``), scaled to weigh like the sparse part.

The stance of a detected concept comes from the stance model over the sentence, anchored
on the words that speak for the concept (:func:`anchor_span`): the dictionary's match of
the concept if there is one, else the word whose features weigh most for it. In a
sentence with two traits of opposite stance, each gets the stance of its own words.
"""

from __future__ import annotations

from collections.abc import Callable, Collection, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np
import skops.io
from scipy import sparse
from sklearn.base import BaseEstimator
from sklearn.feature_extraction.text import TfidfVectorizer
from sklearn.linear_model import LogisticRegression

from extractor.errors import NotFittedError
from extractor.models.persist import load_trusted_skops, read_meta, write_meta
from extractor.nlp.dictionary import Dictionary
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

Embed = Callable[[Sequence[Sentence]], np.ndarray]
"""A sentence representation: one dense row per sentence."""

_FORMAT = "trait-extractor/sentence-traits"
_JSON_FILE = "sentence_traits.json"
_SKOPS_FILE = "sentence_traits.skops"


def _vectorizer(vocabulary: dict[str, int] | None = None) -> TfidfVectorizer:
    """The TF-IDF over feature tokens (already folded, space-separated)."""
    return TfidfVectorizer(
        token_pattern=r"\S+", lowercase=False, sublinear_tf=True, vocabulary=vocabulary
    )


def _words(sentence: Sentence) -> list[tuple[int, int, str]]:
    return [(s, e, fold(sentence.text[s:e])) for s, e in tokenize(sentence.text, sentence.lang)]


def sentence_tokens(
    sentence: Sentence,
    dictionary: Dictionary | None = None,
    clusters: Mapping[str, Any] | None = None,
) -> list[str]:
    """Return the sparse features of a sentence as tokens (see the module docs)."""
    words = [w for _, _, w in _words(sentence) if any(ch.isalnum() for ch in w)]
    out = [f"w={w}" for w in words]
    out += [f"b={a}_{b}" for a, b in zip(words, words[1:], strict=False)]
    if dictionary is not None:
        out += [f"dict={m.concept}" for m in dictionary.match(sentence.text, sentence.lang)]
    table = (clusters or {}).get("clusters") or {}
    out += [f"cl={table[w][0]}" for w in words if w in table]
    if sentence.question:
        question = Sentence(-1, sentence.question, sentence.lang)
        out += [f"q={w}" for _, _, w in _words(question) if any(ch.isalnum() for ch in w)]
    return out


def _word_table(clusters: Mapping[str, Any] | None) -> tuple[dict[str, int], np.ndarray]:
    """Return word -> row and the unit word vectors (saved models hold them as an array)."""
    words: list[str] = list((clusters or {}).get("words") or [])
    found = (clusters or {}).get("vectors")
    vectors = np.asarray([] if found is None else found, dtype=float)
    if not words or vectors.size == 0:
        return {}, np.zeros((0, 0))
    norms = np.linalg.norm(vectors, axis=1, keepdims=True)
    return {w: i for i, w in enumerate(words)}, vectors / np.where(norms > 0, norms, 1.0)


def mean_vectors(sentences: Sequence[Sentence], clusters: Mapping[str, Any] | None) -> np.ndarray:
    """Return the mean unit word vector of each sentence (zeros where no word has one)."""
    index, vectors = _word_table(clusters)
    if not index:
        return np.zeros((len(sentences), 0))
    out = np.zeros((len(sentences), vectors.shape[1]))
    for row, sentence in enumerate(sentences):
        found = [index[w] for _, _, w in _words(sentence) if w in index]
        if found:
            mean = vectors[found].mean(axis=0)
            norm = float(np.linalg.norm(mean))
            out[row] = mean / norm if norm else mean
    return out


def concept_similarity(
    sentences: Sequence[Sentence],
    dictionary: Dictionary | None,
    clusters: Mapping[str, Any] | None,
) -> np.ndarray:
    """Return, per sentence and concept of the dictionary, how close its words come to the concept.

    A concept's prototype is the mean word vector of its aliases' words; a sentence's
    score is the highest cosine of one of its words with it. Columns follow the sorted
    concept IDs. A word no alias lists still scores when its vector is near the aliases'
    ("waited" near "slow" and "service"), which is what the dictionary alone cannot do.
    """
    index, unit = _word_table(clusters)
    if dictionary is None or not index:
        return np.zeros((len(sentences), 0))
    by_concept: dict[str, list[int]] = {}
    for concept, alias, lang in dictionary.aliases:
        found = [index[w] for _, _, w in _words(Sentence(-1, alias, lang)) if w in index]
        by_concept.setdefault(concept, []).extend(found)
    concepts = sorted(by_concept)
    protos = np.zeros((len(concepts), unit.shape[1]))
    for row, concept in enumerate(concepts):
        if by_concept[concept]:
            mean = unit[by_concept[concept]].mean(axis=0)
            protos[row] = mean / (np.linalg.norm(mean) or 1.0)
    out = np.zeros((len(sentences), len(concepts)))
    for row, sentence in enumerate(sentences):
        found = [index[w] for _, _, w in _words(sentence) if w in index]
        if found:
            out[row] = np.clip((unit[found] @ protos.T).max(axis=0), 0.0, None)
    return out


class SentenceTraits(BaseEstimator):
    """Multi-label concept detection per sentence; see the module docs.

    Args:
        C: Inverse regularisation of each concept's logistic regression.
        threshold: Probability at which a concept is predicted; below it the model abstains.
        dense_weight: Scale of the mean word vector against the sparse features.
        similarity_weight: Scale of the concept similarities (:func:`concept_similarity`).
        min_positive: Concepts with fewer labeled sentences get no classifier.
    """

    def __init__(
        self,
        *,
        C: float = 10.0,
        threshold: float = 0.4,
        dense_weight: float = 0.0,
        similarity_weight: float = 1.0,
        min_positive: int = 1,
    ) -> None:
        self.C = C
        self.threshold = threshold
        self.dense_weight = dense_weight
        self.similarity_weight = similarity_weight
        self.min_positive = min_positive

    # ------------------------------------------------------------------ features

    def _matrix(
        self,
        sentences: Sequence[Sentence],
        dictionary: Dictionary | None,
        clusters: Mapping[str, Any] | None,
        embed: Embed | None,
        *,
        fit: bool,
    ) -> sparse.csr_matrix:
        docs = [" ".join(sentence_tokens(s, dictionary, clusters)) for s in sentences]
        if fit:
            self.vectorizer_ = _vectorizer()
            sparse_part = self.vectorizer_.fit_transform(docs)
        else:
            sparse_part = self.vectorizer_.transform(docs)
        dense = [mean_vectors(sentences, clusters) * self.dense_weight]
        dense.append(concept_similarity(sentences, dictionary, clusters) * self.similarity_weight)
        if embed is not None:
            dense.append(np.asarray(embed(sentences), dtype=float) * self.dense_weight)
        stacked = np.hstack(dense) if dense else np.zeros((len(sentences), 0))
        if fit:
            self.dense_dims_ = int(stacked.shape[1])
        if stacked.shape[1] != self.dense_dims_:
            stacked = np.zeros((len(sentences), self.dense_dims_))
        parts = [sparse_part, sparse.csr_matrix(stacked)]
        return sparse.hstack(parts, format="csr")

    # ------------------------------------------------------------------ training

    def fit(
        self,
        sentences: Sequence[Sentence],
        concepts: Sequence[Collection[str]],
        *,
        dictionary: Dictionary | None = None,
        clusters: Mapping[str, Any] | None = None,
        embed: Embed | None = None,
    ) -> SentenceTraits:
        """Learn one classifier per concept from labeled sentences.

        Args:
            sentences: Labeled sentences (those labeled "no trait here" included: they are
                the negatives).
            concepts: Per sentence, the concepts it states (mentions and implicit traits).
            dictionary: The concept list's dictionary, for ``dict=`` features.
            clusters: Word clusters and vectors of the workspace.
            embed: A pretrained sentence representation, if any.
        """
        X = self._matrix(sentences, dictionary, clusters, embed, fit=True)
        counts: dict[str, int] = {}
        for found in concepts:
            for concept in set(found):
                counts[concept] = counts.get(concept, 0) + 1
        self.classes_ = sorted(c for c, n in counts.items() if n >= self.min_positive)
        self.models_: dict[str, LogisticRegression | float] = {}
        for concept in self.classes_:
            y = np.array([concept in found for found in concepts], dtype=int)
            if y.min() == y.max():  # every sentence (or none) states it: a constant
                self.models_[concept] = float(y[0])
                continue
            model = LogisticRegression(
                C=self.C, class_weight="balanced", max_iter=2000, solver="liblinear"
            )
            self.models_[concept] = model.fit(X, y)
        return self

    @property
    def is_fitted(self) -> bool:
        """Whether :meth:`fit` (or :meth:`load`) has run."""
        return hasattr(self, "models_")

    def _check(self) -> None:
        if not self.is_fitted:
            raise NotFittedError("The sentence trait model is not trained yet; call fit() first.")

    # ------------------------------------------------------------------ prediction

    def predict_proba(
        self,
        sentences: Sequence[Sentence],
        *,
        dictionary: Dictionary | None = None,
        clusters: Mapping[str, Any] | None = None,
        embed: Embed | None = None,
    ) -> np.ndarray:
        """Return an ``(n sentences, n concepts)`` array, columns in :attr:`classes_` order."""
        self._check()
        if not sentences or not self.classes_:
            return np.zeros((len(sentences), len(self.classes_)))
        X = self._matrix(sentences, dictionary, clusters, embed, fit=False)
        columns = []
        for concept in self.classes_:
            model = self.models_[concept]
            if isinstance(model, float):
                columns.append(np.full(len(sentences), model))
            else:
                columns.append(model.predict_proba(X)[:, 1])
        return np.column_stack(columns)

    def detected(self, proba: np.ndarray) -> list[list[tuple[str, float]]]:
        """Return per sentence the concepts at or above the threshold, most probable first."""
        out = []
        for row in proba:
            found = [(c, float(p)) for c, p in zip(self.classes_, row, strict=True)]
            kept = [cp for cp in found if cp[1] >= self.threshold]
            out.append(sorted(kept, key=lambda cp: -cp[1]))
        return out

    def word_weights(self, concept: str) -> dict[str, float]:
        """Return the learned weight of each word feature for a concept (empty if none)."""
        self._check()
        model = self.models_.get(concept)
        if not isinstance(model, LogisticRegression):
            return {}
        names = self.vectorizer_.get_feature_names_out()
        coef = model.coef_[0][: len(names)]
        return {str(n)[2:]: float(w) for n, w in zip(names, coef, strict=True) if n[:2] == "w="}

    # ------------------------------------------------------------------ persistence

    def save(self, directory: str | Path) -> None:
        """Write ``sentence_traits.json`` and, if fitted, ``sentence_traits.skops``.

        The vectorizer's vocabulary and IDF weights go to the JSON file; the skops file
        holds only logistic regressions (and constants), types the loader trusts.
        """
        folder = Path(directory)
        folder.mkdir(parents=True, exist_ok=True)
        meta: dict[str, Any] = {"format": _FORMAT, "params": self.get_params()}
        if self.is_fitted:
            skops.io.dump(self.models_, folder / _SKOPS_FILE)
            meta |= {
                "classes": self.classes_,
                "dense_dims": self.dense_dims_,
                "vocabulary": {str(k): int(v) for k, v in self.vectorizer_.vocabulary_.items()},
                "idf": [float(x) for x in self.vectorizer_.idf_],
            }
        write_meta(folder / _JSON_FILE, meta)

    @classmethod
    def load(cls, directory: str | Path) -> SentenceTraits:
        """Read a model written by :meth:`save` (unfitted if it was saved unfitted)."""
        folder = Path(directory)
        meta = read_meta(folder / _JSON_FILE, _FORMAT, "sentence trait model")
        model = cls(**meta["params"])
        if "classes" not in meta:
            return model
        model.models_ = dict(load_trusted_skops(folder / _SKOPS_FILE, dict))
        model.vectorizer_ = _vectorizer(vocabulary=dict(meta["vocabulary"]))
        model.vectorizer_.idf_ = np.asarray(meta["idf"], dtype=float)
        model.classes_ = list(meta["classes"])
        model.dense_dims_ = int(meta["dense_dims"])
        return model


def anchor_span(
    sentence: Sentence,
    concept: str,
    weights: Mapping[str, float],
    dictionary: Dictionary | None = None,
) -> Span:
    """Return the words that speak for ``concept`` in a sentence, for its stance.

    The dictionary's match of the concept if there is one; else the word whose learned
    weight for the concept is highest; else the whole sentence.
    """
    if dictionary is not None:
        for match in dictionary.match(sentence.text, sentence.lang):
            if match.concept == concept:
                return Span(match.start, match.end, concept)
    best: tuple[float, int, int] | None = None
    for start, end, word in _words(sentence):
        weight = weights.get(word)
        if weight is not None and weight > 0 and (best is None or weight > best[0]):
            best = (weight, start, end)
    if best is None:
        return Span(0, len(sentence.text), concept)
    return Span(best[1], best[2], concept)
