"""Candidate synonyms of concepts in the workspace's languages, from the pretrained space.

A concept list is often English only while the answers are in French, Spanish or
Portuguese. For each word of the answers, the pretrained multilingual space
(:mod:`extractor.nlp.pretrained`) gives its cosine with every alias of every concept;
a word whose best concept is close enough becomes a *candidate synonym* of it, in the
word's own language. Candidates are shown to a curator (``traits concepts suggest``),
who accepts them as aliases; they are never written into the imported list.

Words that never name a trait alone (stop words of the language, verbs of liking,
see :mod:`extractor.nlp.nontrait`) and words already listed are not proposed.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable, Sequence
from functools import cache
from typing import NamedTuple

import numpy as np
import spacy.util

from extractor.nlp.fold import fold
from extractor.nlp.nontrait import LIKING_VERBS
from extractor.nlp.pretrained import Space
from extractor.nlp.text import tokenize

MIN_SIMILARITY = 0.55
"""Cosine below which a word is no candidate (set by looking at the demo's candidates)."""


class Candidate(NamedTuple):
    """A word of the answers that may name a concept, and why."""

    concept_id: str
    text: str
    lang: str
    similarity: float
    nearest_alias: str
    occurrences: int


@cache
def _stop_words(code: str) -> frozenset[str]:
    """SpaCy's stop words of a language, folded; empty where spaCy has none."""
    try:
        words = spacy.util.get_lang_class(code).Defaults.stop_words
    except (ImportError, KeyError):
        return frozenset()
    return frozenset(fold(w) for w in words)


def _excluded(key: str, code: str) -> bool:
    return len(key) < 3 or key in _stop_words(code) or key in LIKING_VERBS.get(code, frozenset())


def propose(
    space: Space,
    aliases: Iterable[tuple[str, str, str]],
    corpus: Iterable[tuple[str, str]],
    *,
    per_concept: int = 5,
    min_similarity: float = MIN_SIMILARITY,
) -> list[Candidate]:
    """Return candidate synonyms: per concept and language, the closest words of the corpus.

    Args:
        space: The loaded pretrained space.
        aliases: ``(concept_id, text, lang)`` of the concept list.
        corpus: ``(text, lang)`` of the answers.
        per_concept: At most this many candidates per concept and language.
        min_similarity: Lowest cosine with the concept's nearest alias.

    Returns:
        Candidates, most similar first.
    """
    alias_list = [(c, t, lang) for c, t, lang in aliases if t.strip()]
    listed = {fold(t) for _, t, _ in alias_list}
    counts: Counter[tuple[str, str]] = Counter()
    spelling: dict[tuple[str, str], str] = {}
    for text, lang in corpus:
        code = lang.split("-")[0]
        for s, e in tokenize(text, lang):
            word = text[s:e]
            key = fold(word)
            if not word.isalpha() or key in listed or _excluded(key, code):
                continue
            counts[(key, code)] += 1
            spelling.setdefault((key, code), word.lower())
    if not alias_list or not counts:
        return []
    words = sorted(counts)
    word_vecs = space.words([spelling[w] for w in words])
    alias_vecs = space.words([t for _, t, _ in alias_list])
    sims = word_vecs @ alias_vecs.T
    best = np.argmax(sims, axis=1)
    found: list[Candidate] = []
    for i, (key, code) in enumerate(words):
        j = int(best[i])
        concept, alias, _ = alias_list[j]
        # a word of the nearest alias itself ("long" of "keeps long") is no synonym
        if sims[i, j] >= min_similarity and key not in fold(alias).split():
            found.append(
                Candidate(
                    concept,
                    spelling[(key, code)],
                    code,
                    float(sims[i, j]),
                    alias,
                    counts[(key, code)],
                )
            )
    found.sort(key=lambda c: (-c.similarity, c.concept_id, c.text))
    kept: list[Candidate] = []
    per: Counter[tuple[str, str]] = Counter()
    for cand in found:
        if per[(cand.concept_id, cand.lang)] < per_concept:
            per[(cand.concept_id, cand.lang)] += 1
            kept.append(cand)
    return kept


def by_language(candidates: Sequence[Candidate]) -> dict[str, list[Candidate]]:
    """Group candidates by language, each group most similar first."""
    out: dict[str, list[Candidate]] = {}
    for cand in candidates:
        out.setdefault(cand.lang, []).append(cand)
    return out
