"""Candidate synonyms of concepts in the workspace's languages, from the pretrained space.

A concept list is often English only while the answers are in French, Spanish or
Portuguese. Every phrase of one to :data:`MAX_WORDS` words of the answers is encoded
whole by the pretrained multilingual encoder (:mod:`extractor.nlp.pretrained`, trained
for cross-lingual phrase and sentence similarity), and its cosine with every alias of
every concept is taken; a phrase whose best concept is close enough becomes a
*candidate synonym* of it, in the phrase's own language ("cuit vite" for "cooks fast").
Candidates are shown to a curator (``traits concepts suggest``), who accepts them as
aliases; they are never written into the imported list. The confident ones
(:func:`silver_aliases`) are weak evidence for the tagger's dictionary bootstrap.

A phrase that starts or ends with a function word or a verb of liking
(:mod:`extractor.nlp.nontrait`) is not proposed, nor one already listed. The number of
phrases encoded is bounded (:data:`MAX_PHRASES`, most frequent first) and the encoder
caches each text per process, so a second call costs no encoding.

Two rules shape the silver aliases (:func:`confident_synonyms`) so that the spans they
teach the tagger are those an analyst marks:

* *shortest phrase*: a phrase of several words is dropped when one of its own shorter
  phrases is at least as close to the same concept, since the extra words add nothing
  to the match ("precio depende", "femmes du marché" for "price", "market");
* *pronominal verbs*: a reflexive pronoun standing before a phrase in at least half of
  its occurrences joins it ("se vend bien", "se cocina rápido"), as it belongs to the
  verb (:data:`extractor.nlp.nontrait.REFLEXIVE_CLITICS`).
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable, Sequence
from typing import NamedTuple

import numpy as np

from extractor.nlp.fold import fold
from extractor.nlp.nontrait import is_function_word, is_reflexive_clitic
from extractor.nlp.pretrained import Space, load_space
from extractor.nlp.text import tokenize

MIN_SIMILARITY = 0.55
"""Cosine below which a phrase is no candidate (set by looking at the demo's candidates)."""

MAX_WORDS = 3
"""Longest phrase considered, in words."""

MAX_PHRASES = 3000
"""Most phrases encoded per call, the most frequent first: bounds the encoder's time
(about 700-1,000 phrases a second on one core; ``tests/bench/bench_english_list.py``)."""

SILVER_SIMILARITY = 0.7
"""Cosine from which a candidate is weak silver evidence for the tagger and linker.

Measured on the demo with its English rows only (``tests/bench/bench_english_list.py``):
see DEVELOPERS.md, "Concept lists in one language".
"""

SILVER_WORD_SIMILARITY = 0.8
"""Cosine from which a one-word candidate is silver: single words are more often
ambiguous ("vends", "temps", "saison") than phrases, so they need to be closer."""

SILVER_MARGIN = 0.05
"""Least cosine lead of a silver candidate's concept over the next concept."""


class Candidate(NamedTuple):
    """A phrase of the answers that may name a concept, and why."""

    concept_id: str
    text: str
    lang: str
    similarity: float
    nearest_alias: str
    occurrences: int
    margin: float = 0.0  # cosine lead over the best alias of another concept


def _excluded(key: str, code: str) -> bool:
    return len(key) < 3 or is_function_word(key, code)


def phrases(
    corpus: Iterable[tuple[str, str]],
    *,
    max_words: int = MAX_WORDS,
    skip: frozenset[str] = frozenset(),
) -> Counter[tuple[str, str]]:
    """Count the phrases of the answers that could name a trait, keyed ``(text, language)``.

    A phrase is one to ``max_words`` words, all of them with a letter, the first and
    the last no function word; its text is the answer's own, lower-cased.

    Args:
        corpus: ``(text, lang)`` of the answers.
        max_words: Longest phrase, in words.
        skip: Folded phrases not to count (those already listed).
    """
    counts: Counter[tuple[str, str]] = Counter()
    for text, lang in corpus:
        code = lang.split("-")[0]
        tokens = tokenize(text, lang)
        words = [text[s:e] for s, e in tokens]
        usable = [any(c.isalpha() for c in w) for w in words]
        edge = [u and not _excluded(fold(w), code) for u, w in zip(usable, words, strict=True)]
        for i in range(len(tokens)):
            if not edge[i]:
                continue
            for j in range(i, min(len(tokens), i + max_words)):
                if not usable[j]:
                    break
                if edge[j]:
                    phrase = text[tokens[i][0] : tokens[j][1]].lower()
                    if fold(phrase) not in skip:
                        counts[(phrase, code)] += 1
    return counts


def propose(
    space: Space,
    aliases: Iterable[tuple[str, str, str]],
    corpus: Iterable[tuple[str, str]],
    *,
    per_concept: int = 5,
    min_similarity: float = MIN_SIMILARITY,
    max_words: int = MAX_WORDS,
    max_phrases: int = MAX_PHRASES,
) -> list[Candidate]:
    """Return candidate synonyms: per concept and language, the closest phrases of the corpus.

    Args:
        space: The loaded pretrained space.
        aliases: ``(concept_id, text, lang)`` of the concept list.
        corpus: ``(text, lang)`` of the answers.
        per_concept: At most this many candidates per concept and language (0: no limit).
        min_similarity: Lowest cosine with the concept's nearest alias.
        max_words: Longest phrase, in words.
        max_phrases: Most phrases encoded, the most frequent first.

    Returns:
        Candidates, most similar first.
    """
    alias_list = [(c, t, lang) for c, t, lang in aliases if t.strip()]
    listed = frozenset(fold(t) for _, t, _ in alias_list)
    counts = phrases(corpus, max_words=max_words, skip=listed)
    if not alias_list or not counts:
        return []
    # most frequent first, then shorter, so the bound drops rare long phrases first
    keys = sorted(counts, key=lambda k: (-counts[k], k[0].count(" "), k))[:max_phrases]
    sims = space.words([k[0] for k in keys]) @ space.words([t for _, t, _ in alias_list]).T
    concepts = sorted({c for c, _, _ in alias_list})
    column = {c: j for j, c in enumerate(concepts)}
    per_concept_best = np.full((len(keys), len(concepts)), -1.0, dtype=np.float32)
    for a, (concept, _, _) in enumerate(alias_list):
        j = column[concept]
        per_concept_best[:, j] = np.maximum(per_concept_best[:, j], sims[:, a])
    second = np.sort(per_concept_best, axis=1)[:, -2] if len(concepts) > 1 else np.zeros(len(keys))
    best = np.argmax(sims, axis=1)
    found: list[Candidate] = []
    for i, (phrase, code) in enumerate(keys):
        j = int(best[i])
        concept, alias, _ = alias_list[j]
        # a word of the nearest alias itself ("long" of "keeps long") is no synonym
        if sims[i, j] >= min_similarity and fold(phrase) not in fold(alias).split():
            margin = float(sims[i, j] - second[i])
            found.append(
                Candidate(
                    concept, phrase, code, float(sims[i, j]), alias, counts[(phrase, code)], margin
                )
            )
    found.sort(key=lambda c: (-c.similarity, c.concept_id, c.text))
    if not per_concept:
        return found
    kept: list[Candidate] = []
    per: Counter[tuple[str, str]] = Counter()
    for cand in found:
        if per[(cand.concept_id, cand.lang)] < per_concept:
            per[(cand.concept_id, cand.lang)] += 1
            kept.append(cand)
    return kept


def silver_aliases(
    candidates: Iterable[Candidate],
    *,
    min_similarity: float = SILVER_SIMILARITY,
    min_word_similarity: float = SILVER_WORD_SIMILARITY,
    min_margin: float = SILVER_MARGIN,
) -> list[tuple[str, str, str]]:
    """Return the confident candidates as ``(concept_id, text, lang)`` silver aliases."""
    return [
        (c.concept_id, c.text, c.lang)
        for c in candidates
        if c.margin >= min_margin
        and c.similarity >= (min_similarity if " " in c.text else min_word_similarity)
    ]


def by_language(candidates: Sequence[Candidate]) -> dict[str, list[Candidate]]:
    """Group candidates by language, each group most similar first."""
    out: dict[str, list[Candidate]] = {}
    for cand in candidates:
        out.setdefault(cand.lang, []).append(cand)
    return out


def confident_synonyms(
    space_name: str, aliases: Sequence[tuple[str, str, str]], corpus: Iterable[tuple[str, str]]
) -> list[tuple[str, str, str]]:
    """Return the silver aliases (:func:`silver_aliases`) of a corpus in the space named.

    Only where the list is silent: a concept gets silver aliases in a language in which
    it has no alias of its own (the curator's words for it there are the list's), so a
    list complete in every language of the answers costs no encoding and changes nothing.
    Empty without aliases, or when the space is ``"none"`` or its package is missing.
    """
    space = load_space(space_name) if aliases else None
    if space is None:
        return []
    covered = {(c, lang.split("-")[0]) for c, _, lang in aliases}
    concepts = {c for c, _, _ in aliases}
    texts = list(corpus)
    silent = {
        code
        for code in {lang.split("-")[0] for _, lang in texts}
        if any((c, code) not in covered for c in concepts)
    }
    answers = [t for t in texts if t[1].split("-")[0] in silent]
    found = propose(space, aliases, answers, per_concept=0)
    silver = [a for a in silver_aliases(found) if (a[0], a[2]) not in covered]
    return with_clitics(shortest(space, silver, aliases), answers)


def _inner_phrases(text: str, code: str) -> list[str]:
    """Return the shorter phrases of ``text`` with no function word at either end."""
    tokens = tokenize(text, code)
    edge = [not _excluded(fold(text[s:e]), code) for s, e in tokens]
    n = len(tokens)
    return [
        text[tokens[i][0] : tokens[j][1]]
        for i in range(n)
        for j in range(i, n)
        if (i, j) != (0, n - 1) and edge[i] and edge[j]
    ]


def shortest(
    space: Space,
    silver: Sequence[tuple[str, str, str]],
    aliases: Sequence[tuple[str, str, str]],
) -> list[tuple[str, str, str]]:
    """Drop each silver alias one of whose shorter phrases is as close to its concept.

    Closeness is the best cosine with the concept's aliases, as in :func:`propose`.

    Args:
        space: The loaded pretrained space.
        silver: ``(concept_id, text, lang)`` silver aliases.
        aliases: ``(concept_id, text, lang)`` of the concept list.
    """
    forms: dict[str, list[str]] = {}
    for concept, text, _ in aliases:
        if text.strip():
            forms.setdefault(concept, []).append(text)
    kept = []
    for concept, text, code in silver:
        inner = _inner_phrases(text, code)
        if inner and concept in forms:
            vectors = space.words(forms[concept])
            whole = float((space.words([text]) @ vectors.T).max())
            if float((space.words(inner) @ vectors.T).max()) >= whole:
                continue
        kept.append((concept, text, code))
    return kept


def with_clitics(
    silver: Sequence[tuple[str, str, str]], corpus: Iterable[tuple[str, str]]
) -> list[tuple[str, str, str]]:
    """Prefix each silver alias with the reflexive pronoun that usually stands before it.

    The pronoun joins when it is the word right before the phrase in at least half of
    the phrase's occurrences in the answers of its language.

    Args:
        silver: ``(concept_id, text, lang)`` silver aliases.
        corpus: ``(text, lang)`` of the answers.
    """
    by_code: dict[str, list[tuple[str, list[tuple[int, int]], list[str]]]] = {}
    for text, lang in corpus:
        tokens = tokenize(text, lang)
        folded = [fold(text[s:e]) for s, e in tokens]
        by_code.setdefault(lang.split("-")[0], []).append((text, tokens, folded))
    out = []
    for concept, alias, code in silver:
        key = [fold(alias[s:e]) for s, e in tokenize(alias, code)]
        before: Counter[str] = Counter()
        seen = 0
        for text, tokens, folded in by_code.get(code, []):
            for i in range(len(folded) - len(key) + 1):
                if folded[i : i + len(key)] == key:
                    seen += 1
                    if i > 0 and is_reflexive_clitic(folded[i - 1], code):
                        s, e = tokens[i - 1]
                        before[text[s:e].lower() + text[e : tokens[i][0]]] += 1
        if before:
            clitic, count = before.most_common(1)[0]
            if 2 * count >= seen:
                alias = clitic + alias
        out.append((concept, alias, code))
    return out
