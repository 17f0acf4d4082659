"""Helping the annotator mark spans: find typed words, complete concept names, check spans.

The labeling screen calls these with what the annotator types; nothing here keeps state
or scores sentences.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Sequence
from typing import NamedTuple

from extractor.errors import InputError
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import STANCES, Sentence, Span
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
    labels: dict[str, dict[str, str]] = {}
    for e in entries:
        if e.preferred:
            labels.setdefault(e.concept, {}).setdefault(e.lang, e.text)
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
    out = []
    for _, e in ordered:
        own = labels.get(e.concept, {})
        label = own.get(lang) or own.get("en") or next(iter(own.values()), e.text)
        out.append(ConceptMatch(e.concept, label, e.text, e.lang))
    return out
