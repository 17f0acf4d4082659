"""Term suggestions: frequent unlinked mention texts as candidate aliases or concepts.

``traits concepts suggest`` shows them; each names the concepts the linker finds
nearest and, with word vectors, the concepts whose aliases are used most alike.
"""

from __future__ import annotations

import re
from collections import Counter, defaultdict
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from extractor.models.link_scoring import alias_key, language_code
from extractor.models.linking import ConceptLinker
from extractor.nlp.fold import fold
from extractor.types import Sentence, Span


@dataclass(frozen=True)
class TermSuggestion:
    """A frequent unlinked term, offered as a new alias or concept.

    Attributes:
        term: Its most common written form.
        key: The normalised text its mentions share (:func:`alias_key`).
        lang: The most common primary language subtag of its mentions.
        count: How many mentions it has.
        examples: Up to three sentence texts holding it.
        nearest: ``(concept, probability)`` by the linker, best first.
        nearest_by_vectors: ``(concept, cosine)`` by word vectors, best first; empty
            without vectors or known words.
    """

    term: str
    key: str
    lang: str
    count: int
    examples: tuple[str, ...]
    nearest: tuple[tuple[str, float], ...]
    nearest_by_vectors: tuple[tuple[str, float], ...]


def suggest_terms(
    unlinked: Sequence[tuple[Sentence, Span]],
    linker: ConceptLinker,
    vectors: Mapping[str, Any] | None = None,
    *,
    min_count: int = 2,
    k: int = 3,
) -> list[TermSuggestion]:
    """Rank frequent unlinked mention texts as candidate new aliases or concepts.

    Mentions are grouped by their normalised text (:func:`alias_key`). Groups seen at
    least ``min_count`` times are returned, most frequent first, for ``traits concepts
    suggest``.

    Args:
        unlinked: Mentions the linker left unlinked.
        linker: A fitted linker, whose scorer proposes the nearest concepts.
        vectors: A word-cluster model from :func:`extractor.nlp.clusters.learn_clusters`;
            when given, concepts are also ranked by the cosine between the mean word
            vector of the term and that of each concept's aliases.
        min_count: Fewest mentions for a term to be suggested.
        k: Nearest concepts per term, per method.

    Returns:
        One :class:`TermSuggestion` per term.
    """
    groups: dict[str, list[tuple[Sentence, Span]]] = defaultdict(list)
    for sentence, span in unlinked:
        key = alias_key(sentence.text[span.start : span.end], sentence.lang)
        if key:
            groups[key].append((sentence, span))
    frequent = sorted(
        ((key, items) for key, items in groups.items() if len(items) >= min_count),
        key=lambda kv: (-len(kv[1]), kv[0]),
    )
    concept_vecs = _concept_vectors(linker, vectors) if vectors else {}
    fast_vectors = _fast(vectors) if vectors else None
    return [
        _suggestion(key, items, linker, concept_vecs, fast_vectors, k) for key, items in frequent
    ]


def _suggestion(
    key: str,
    items: Sequence[tuple[Sentence, Span]],
    linker: ConceptLinker,
    concept_vecs: Mapping[str, np.ndarray],
    fast_vectors: Mapping[str, Any] | None,
    k: int,
) -> TermSuggestion:
    """Describe one group of unlinked mentions sharing a normalised text."""
    forms = Counter(s.text[sp.start : sp.end] for s, sp in items)
    langs = Counter(language_code(s.lang) for s, _ in items)
    examples: list[str] = []
    for s, _ in items:
        if s.text not in examples:
            examples.append(s.text)
    # Score each occurrence and average: the context differs per sentence.
    totals: dict[str, float] = defaultdict(float)
    for result in linker.link_many(items):
        for concept, prob in result.candidates:
            totals[concept] += prob / len(items)
    nearest = sorted(totals.items(), key=lambda cp: (-cp[1], cp[0]))[:k]
    term = forms.most_common(1)[0][0]
    by_vec: list[tuple[str, float]] = []
    if concept_vecs and fast_vectors is not None:
        vec = _mean_vector(fast_vectors, term)
        if vec is not None:
            sims = {c: float(vec @ v) for c, v in concept_vecs.items()}
            by_vec = sorted(sims.items(), key=lambda cp: (-cp[1], cp[0]))[:k]
    return TermSuggestion(
        term=term,
        key=key,
        lang=langs.most_common(1)[0][0],
        count=len(items),
        examples=tuple(examples[:3]),
        nearest=tuple((c, round(p, 4)) for c, p in nearest),
        nearest_by_vectors=tuple((c, round(s, 4)) for c, s in by_vec),
    )


def _mean_vector(model: Mapping[str, Any], text: str) -> np.ndarray | None:
    """Return the unit mean vector of the words of ``text`` known to the model, or ``None``."""
    index = model.get("_index")
    if index is None:
        index = {w: i for i, w in enumerate(model.get("words") or [])}
    vectors = np.asarray(model.get("vectors", []), dtype=np.float32)
    rows = [index[w] for w in (fold(t) for t in re.findall(r"\w+", text)) if w in index]
    if not rows or vectors.size == 0:
        return None
    mean = vectors[rows].mean(axis=0)
    norm = float(np.linalg.norm(mean))
    return mean / norm if norm > 0 else None


def _fast(model: Mapping[str, Any]) -> dict[str, Any]:
    """Return the model with its word index and vector array built once, not per lookup."""
    return {
        **model,
        "_index": {w: i for i, w in enumerate(model.get("words") or [])},
        "vectors": np.asarray(model.get("vectors", []), dtype=np.float32),
    }


def _concept_vectors(linker: ConceptLinker, model: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """Return each concept's unit mean vector over the words of its aliases."""
    words = model.get("words") or []
    if not words:
        return {}
    fast = _fast(model)
    per_concept: dict[str, list[np.ndarray]] = defaultdict(list)
    for concept, text, _ in linker.aliases_:
        vec = _mean_vector(fast, text)
        if vec is not None:
            per_concept[concept].append(vec)
    out = {}
    for concept, vecs in per_concept.items():
        mean = np.mean(vecs, axis=0)
        norm = float(np.linalg.norm(mean))
        if norm > 0:
            out[concept] = mean / norm
    return out
