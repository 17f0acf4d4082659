"""Helping the annotator mark spans: find typed words, complete concept names, check spans.

The labeling screen calls these with what the annotator types; nothing here keeps state
or scores sentences. A draft answer is a list whose position is the span's number on
screen; a dropped span leaves ``None`` in its place, so the other numbers never move.
"""

from __future__ import annotations

import re
import sqlite3
from collections.abc import Sequence
from typing import NamedTuple

from extractor.errors import InputError
from extractor.models.bundle import SentencePrediction
from extractor.models.cue_file import packaged_cues
from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import rule_stance
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import STANCES, Implicit, Sentence, Span
from extractor.workspace import store


def find_phrase(text: str, words: str, lang: str) -> list[tuple[int, int]]:
    """Return every ``(start, end)`` where the typed ``words`` occur in ``text`` as tokens.

    Matching ignores case and accents and works on token boundaries, so ``"pot"`` does not
    match inside ``"pots"``; the annotator types words, never counts tokens.
    """
    tokens = tokenize(text, lang)
    wanted = [fold(words[s:e]) for s, e in tokenize(words, lang)]
    if not wanted:
        return []
    folded = [fold(text[s:e]) for s, e in tokens]
    found = []
    for k in range(len(tokens) - len(wanted) + 1):
        if folded[k : k + len(wanted)] == wanted:
            found.append((tokens[k][0], tokens[k + len(wanted) - 1][1]))
    return found


def kept(draft: Sequence[Span | None]) -> tuple[Span, ...]:
    """Return the spans still in a draft (dropped numbers hold None), in text order."""
    return tuple(sorted(span for span in draft if span is not None))


def default_stance(
    sentence: Sentence, prediction: SentencePrediction | None, start: int, end: int
) -> str:
    """Return the stance to offer for newly marked words ``sentence.text[start:end]``.

    The model's stance of the predicted mention that overlaps the words most, when there
    is one; otherwise the cue rules' answer (:func:`~extractor.models.stance_rules.rule_stance`),
    whose last resort is the lean of the question the answer replied to ("What do you
    dislike about it?" leans disliked).
    """
    if prediction is not None:
        overlaps = [
            (min(end, m.end) - max(start, m.start), m.stance)
            for m in prediction.mentions
            if m.stance and m.start < end and start < m.end
        ]
        if overlaps:
            return str(max(overlaps, key=lambda pair: pair[0])[1])
    features = stance_features(sentence, Span(start, end, None, None), packaged_cues())
    return rule_stance(features)[0]


def checked_spans(sentence: Sentence, spans: Sequence[Span]) -> tuple[Span, ...]:
    """Return the spans as plain :class:`Span` values in order, once each fits the sentence.

    Raises:
        InputError: a span does not fit in the sentence, or its stance is not a known one.
    """
    length = len(sentence.text)
    out = []
    for span in spans:
        if not 0 <= span.start < span.end <= length:
            raise InputError(
                f"Span {span.start}-{span.end} does not fit in sentence {sentence.id} "
                f"({length} characters)."
            )
        if span.stance is not None and span.stance not in STANCES:
            raise InputError(
                f"The stance must be one of {', '.join(STANCES)}; got {span.stance!r}."
            )
        out.append(Span(span.start, span.end, span.concept, span.stance))
    return tuple(sorted(out))


def checked_implicit(traits: Sequence[Implicit]) -> tuple[Implicit, ...]:
    """Return implicit traits as plain :class:`Implicit` values once each has a concept.

    Raises:
        InputError: a trait has no concept, or its stance is not a known one.
    """
    out = []
    for trait in traits:
        if not trait.concept:
            raise InputError("A trait without a quote span needs a concept; choose one.")
        if trait.stance is not None and trait.stance not in STANCES:
            raise InputError(
                f"The stance must be one of {', '.join(STANCES)}; got {trait.stance!r}."
            )
        out.append(Implicit(trait.concept, trait.stance))
    return tuple(out)


class ConceptEntry(NamedTuple):
    """One searchable name of a concept: a label or alias in some language."""

    concept: str
    text: str
    lang: str
    preferred: bool


class ConceptMatch(NamedTuple):
    """A ranked completion: the concept, its display label, and the name that matched."""

    concept: str
    label: str
    matched: str
    lang: str


def concept_entries(conn: sqlite3.Connection) -> list[ConceptEntry]:
    """Return every label and alias of the active trait concepts."""
    return [
        ConceptEntry(a.concept_id, a.text, a.lang, a.kind == "preferred")
        for a in store.aliases(conn)
    ]


def _match_rank(query: str, name: str) -> int | None:
    """Rank how well a folded query matches a folded name (lower is better, None = no)."""
    if name == query:
        return 0
    if name.startswith(query):
        return 1
    words = name.replace("-", " ").split()
    parts = query.split()
    if parts and all(any(w.startswith(p) for w in words) for p in parts):
        return 2
    if query in name:
        return 3
    rest = iter(name)
    if all(c in rest for c in query.replace(" ", "")):
        return 4
    return None


def concepts_started(query: str, entries: Sequence[ConceptEntry]) -> set[str]:
    """Return the concepts with a name, or a word of a name, that the letters begin.

    "tast" begins "taste" and "yie" the word "yield" of "grain yield"; letters found only
    inside a name or scattered along it ("tast" in "striga resistance") do not count.
    """
    wanted = fold(query.strip())
    if not wanted:
        return set()
    return {
        e.concept
        for e in entries
        for name in (fold(e.text), fold(e.concept))
        if (rank := _match_rank(wanted, name)) is not None and rank <= 2
    }


MIN_SHARED = 4
"""Shortest word that counts when an alias shares words with the marked ones; shorter words
are mostly articles and prepositions ("de", "en", "the") in the languages of the demo."""


def _words(text: str) -> list[str]:
    return re.findall(r"\w+", fold(text))


def _same_word(alias_word: str, typed_word: str) -> bool:
    """Equal words, or one a prefix of the other when both are long ("fast", "faster")."""
    if alias_word == typed_word:
        return True
    short, long = sorted((alias_word, typed_word), key=len)
    return len(short) >= MIN_SHARED and long.startswith(short)


def _gaps_in_order(alias: Sequence[str], typed: Sequence[str]) -> int | None:
    """Return how many typed words fall between the alias's words, found in order; None if not."""
    if not alias:
        return None
    at, first = 0, None
    for k, word in enumerate(typed):
        if _same_word(alias[at], word):
            first = k if first is None else first
            at += 1
            if at == len(alias):
                return k - (first or 0) + 1 - len(alias)
    return None


def _shared(alias: Sequence[str], typed: Sequence[str]) -> int:
    """Return how many of the alias's words of :data:`MIN_SHARED` letters or more were typed."""
    return sum(1 for a in alias if len(a) >= MIN_SHARED and any(_same_word(a, t) for t in typed))


def _preferred_labels(entries: Sequence[ConceptEntry]) -> dict[str, dict[str, str]]:
    labels: dict[str, dict[str, str]] = {}
    for e in entries:
        if e.preferred:
            labels.setdefault(e.concept, {}).setdefault(e.lang, e.text)
    return labels


def _as_match(e: ConceptEntry, labels: dict[str, dict[str, str]], lang: str) -> ConceptMatch:
    own = labels.get(e.concept, {})
    label = own.get(lang) or own.get("en") or next(iter(own.values()), e.text)
    return ConceptMatch(e.concept, label, e.text, e.lang)


def concepts_for_words(
    words: str, entries: Sequence[ConceptEntry], *, lang: str = "en", limit: int = 9
) -> list[ConceptMatch]:
    """Return the concepts to offer for marked words, best first.

    First the concepts with a label or alias whose words all occur in the marked words,
    in order ("ladha" in "ladha tamu", "aguenta a seca" in "aguenta bem à seca"): longer
    names, then names with fewer words between theirs, first. Then those sharing some
    words of four letters or more ("cuit vite" for "cuit en peu de temps"), most shared
    first. Then the completions of :func:`rank_concepts`. Case and accents are ignored,
    a long word matches its own prefix ("fast" in "faster"), and each concept comes once.
    """
    typed = _words(words)
    best: dict[str, tuple[tuple[int, int, int, int, str], ConceptEntry]] = {}
    for e in entries:
        alias = _words(e.text)
        gaps = _gaps_in_order(alias, typed)
        shared = _shared(alias, typed)
        if gaps is not None:
            key = (0, -len(alias), gaps, len(e.text), e.concept)
        elif shared:
            key = (1, -shared, len(alias) - shared, len(e.text), e.concept)
        else:
            continue
        if e.concept not in best or key < best[e.concept][0]:
            best[e.concept] = (key, e)
    labels = _preferred_labels(entries)
    first = [_as_match(e, labels, lang) for _, e in sorted(best.values(), key=lambda kv: kv[0])]
    rest = [
        m for m in rank_concepts(words, entries, lang=lang, limit=limit) if m.concept not in best
    ]
    return (first + rest)[:limit]


def rank_concepts(
    query: str, entries: Sequence[ConceptEntry], *, lang: str = "en", limit: int = 9
) -> list[ConceptMatch]:
    """Return concepts whose ID, label or any alias (any language) matches ``query``, best first.

    Exact names beat prefixes, word prefixes, substrings and letters-in-order; among
    equals, shorter names and then concept IDs come first. Each concept appears once,
    under its best-matching name, and is shown with its label in ``lang`` when it has one.
    """
    wanted = fold(query.strip())
    if not wanted:
        return []
    labels = _preferred_labels(entries)
    best: dict[str, tuple[tuple[int, int, str], ConceptEntry]] = {}
    for e in entries:
        ranks = [
            r
            for r in (_match_rank(wanted, fold(e.text)), _match_rank(wanted, fold(e.concept)))
            if r is not None
        ]
        if not ranks:
            continue
        key = (min(ranks), len(e.text), e.concept)
        if e.concept not in best or key < best[e.concept][0]:
            best[e.concept] = (key, e)
    ordered = sorted(best.values(), key=lambda kv: kv[0])[:limit]
    return [_as_match(e, labels, lang) for _, e in ordered]
