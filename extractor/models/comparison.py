"""Which trait mention a comparison goes to, and the variety it compares with.

A comparison marker ("than", "compared to", "que" after a comparative, "do que",
"kuliko": ``comparison_marker`` in the cue file) with a variety within
:data:`REFERENCE_REACH` tokens after it records that variety as the reference of the
comparison (:func:`comparison_references`). A marker belongs to one trait mention
(:func:`owners`): the nearest one before it in its own clause ("the broth is thick and
the taste is sweeter than Mbegu" compares the taste, not the broth; "sweeter than Mbegu"
when the comparative is itself the trait word), else the nearest before it since the
last contrast word or sentence end ("the taste is good, better than Mbegu"), else the
first after its reference in its clause ("better than Mbegu in taste"). Traits
coordinated before the owner under one comparative share it ("better taste and flavour
than Mbegu"). What follows the clause is not compared ("more yield than Mbegu, and it
matures early"); only a marker that opens its clause ("Compared to Mbegu, it cooks
faster") reaches the traits after it (:func:`fronted_reference`).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import NamedTuple

from extractor.models.cue_file import Cues, packaged_cues
from extractor.models.cues import Parsed, lexicon, parse, segment
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

VarietyMention = tuple[int, int, str]
"""(start, end, variety_id) in character offsets of a sentence."""

REFERENCE_REACH = 4
"""Tokens after a comparison marker within which a variety is its reference."""


class Comparison(NamedTuple):
    """A comparison marker of a sentence and the variety it compares with."""

    start: int
    end: int
    reference: VarietyMention
    fronted: bool
    """Whether the marker opens its clause ("Compared to X, ..."), so it reaches forward."""
    clause: tuple[int, int] = (0, 0)
    """Character range of the marker's clause (clause boundaries excluded)."""
    segment_start: int = 0
    """Where the marker's stretch starts (after the last contrast word or sentence end)."""
    joins: tuple[tuple[int, int], ...] = ()
    """Character ranges of coordinating words and commas in the stretch before the marker."""
    comparatives: tuple[tuple[int, int], ...] = ()
    """Character ranges of comparative words in the stretch before the marker."""


class _Marker(NamedTuple):
    start: int
    end: int
    fronted: bool
    clause: tuple[int, int]
    segment_start: int
    joins: tuple[tuple[int, int], ...]
    comparatives: tuple[tuple[int, int], ...]


def _markers(text: str, lang: str, cues: Cues | None) -> list[_Marker]:
    """Return each comparison marker of ``text`` with its clause and stretch."""
    lex = lexicon(cues if cues is not None else packaged_cues(), lang)
    p = parse(text, lex)
    comparatives = [i for i, _ in p.matches.get("comparative", ())]
    joining = [
        *p.matches.get("coordinator", ()),
        *((i, i + 1) for i, w in enumerate(p.words) if w == ","),
    ]
    out: list[_Marker] = []
    for i, j in sorted(p.matches.get("comparison_marker", ())):
        # "que" compares only after a comparative word, also inside Portuguese "do que".
        if {"que", "qu'"} & set(p.words[i:j]) and not any(c < i for c in comparatives):
            continue
        if out and p.offsets[i][0] < out[-1][1]:
            continue  # "que" inside "que el": keep the first, longest-starting match
        fronted = i == 0 or p.boundary[i - 1]
        # The clause runs back from the marker and on after it to a boundary; the marker
        # itself may be one (Portuguese "que" also ends a clause).
        lo, hi = i, j
        while lo > 0 and not p.boundary[lo - 1]:
            lo -= 1
        while hi < len(p.words) and not p.boundary[hi]:
            hi += 1
        seg = segment(p, i, j)[0]
        out.append(
            _Marker(
                p.offsets[i][0],
                p.offsets[j - 1][1],
                fronted,
                (p.offsets[lo][0], p.offsets[hi - 1][1]),
                p.offsets[seg][0] if seg < i else p.offsets[i][0],
                _ranges(p, joining, seg, i),
                _ranges(p, p.matches.get("comparative", ()), seg, i),
            )
        )
    return out


def _ranges(
    p: Parsed, tokens: Iterable[tuple[int, int]], lo: int, hi: int
) -> tuple[tuple[int, int], ...]:
    """Return the character ranges of token matches ``[a, b)`` lying within ``[lo, hi)``."""
    return tuple(
        sorted((p.offsets[a][0], p.offsets[b - 1][1]) for a, b in tokens if lo <= a and b <= hi)
    )


def find_comparisons(text: str, lang: str, cues: Cues | None = None) -> list[tuple[int, int]]:
    """Return the character offsets of comparison markers ("than", "compared to", "que").

    What follows a marker is the reference of the comparison ("bigger than Kivuli").
    French, Spanish and Portuguese "que" counts only after a comparative word ("plus
    ... que", "más ... que", "mais ... do que"), since it is also a relative pronoun
    and a conjunction.

    Args:
        text: One sentence.
        lang: Its language tag.
        cues: A lexicon from :func:`~extractor.models.cue_file.load_cues` (the packaged one
            when ``None``).

    Returns:
        ``(start, end)`` of each marker, in order.
    """
    return [(m.start, m.end) for m in _markers(text, lang, cues)]


def comparison_references(
    sentence: Sentence, varieties: Sequence[VarietyMention], cues: Cues | None = None
) -> list[Comparison]:
    """Return each comparison marker of the sentence with its reference variety.

    Args:
        sentence: The sentence.
        varieties: Its variety mentions (from :func:`find_varieties`).
        cues: A cue lexicon (the packaged one when ``None``).

    Returns:
        A :class:`Comparison` for each marker that has a variety within
        :data:`REFERENCE_REACH` tokens after it.
    """
    if not varieties:
        return []  # nothing to compare with: skip tokenizing
    tokens = tokenize(sentence.text, sentence.lang or "xx")
    out = []
    for m in _markers(sentence.text, sentence.lang or "xx", cues):
        after = [v for v in varieties if v[0] >= m.end]
        if not after:
            continue
        gap = sum(1 for s, _ in tokens if m.end <= s < after[0][0])
        if gap <= REFERENCE_REACH:
            out.append(
                Comparison(
                    m.start,
                    m.end,
                    after[0],
                    m.fronted,
                    m.clause,
                    m.segment_start,
                    m.joins,
                    m.comparatives,
                )
            )
    return out


def owners(
    sentences: Sequence[Sentence],
    mentions: Sequence[tuple[int, Span]],
    refs: Sequence[Sequence[Comparison]],
) -> dict[int, VarietyMention]:
    """Return mention index -> the reference of the comparison marker it owns.

    A marker that does not open its clause, or that opens it with no trait after it
    ("..., unlike other varieties"), belongs to one mention of its sentence: one that
    holds it ("plus rapide que X" labeled whole), else the nearest ending before it
    within its clause ("the taste is sweeter than X" after "the
    broth is thick and"), else within its stretch up to the last contrast word or
    sentence end ("the taste is good, better than X"), else the first starting after
    its reference within its clause ("better than X in taste"). A mention owning two
    markers keeps the first after it.
    """
    out: dict[int, VarietyMention] = {}
    whole = [(0, len(s.text)) for s in sentences]  # an implicit trait's span: no owner
    for index, comparisons in enumerate(refs):
        here = [(k, sp) for k, (i, sp) in enumerate(mentions) if i == index]
        for c in comparisons:
            if c.fronted and any(sp.start >= c.reference[1] for _, sp in here):
                continue  # it reaches the traits after it (:func:`fronted_reference`)
            holding = [
                k
                for k, sp in here
                if c.clause[0] <= sp.start < c.start < sp.end and (sp.start, sp.end) != whole[index]
            ]
            before = [(k, sp) for k, sp in here if sp.end <= c.start]
            pool = [(k, sp) for k, sp in before if sp.end > c.clause[0]] or [
                (k, sp) for k, sp in before if sp.end > c.segment_start
            ]
            if holding:
                owner = holding[0]
            elif pool:
                owner = max(pool, key=lambda m: (m[1].end, m[1].start))[0]
                for k in _conjuncts(sentences[index].text, owner, here, c):
                    out.setdefault(k, c.reference)
            else:
                later = [
                    (sp.start, k)
                    for k, sp in here
                    if sp.start >= c.reference[1] and sp.end <= c.clause[1]
                ]
                if not later:
                    continue
                owner = min(later)[1]
            out.setdefault(owner, c.reference)
    return out


def _conjuncts(text: str, owner: int, here: Sequence[tuple[int, Span]], c: Comparison) -> list[int]:
    """Return the mentions coordinated with a comparison's owner that share its comparative.

    "better taste and flavour than X", "plus gros et plus rouge que X": mentions before
    the owner joined to it by coordinating words or commas only (comparative words may
    stand between them) are compared too, when a comparative word of the stretch stands
    before them, outside every conjunct. "The broth is thick and sweeter than X"
    compares only what is sweeter: the comparative is the owner. A comparative after the
    coordination ("yield and taste are better than X") is left to the owner alone, since
    without a parse it cannot be told from a clause of its own.
    """
    spans = dict(here)
    chain = [owner]
    while True:
        cur = spans[chain[-1]]
        earlier = [
            (sp.end, k) for k, sp in here if c.segment_start <= sp.start and sp.end <= cur.start
        ]
        if not earlier:
            break
        k = max(earlier)[1]
        if not _only(text, spans[k].end, cur.start, (*c.joins, *c.comparatives), c.joins):
            break
        chain.append(k)
    if len(chain) == 1:
        return []
    # The comparative must stand before the last conjunct, outside every conjunct: after
    # the owner it may be the owner's own predicate ("mchuzi ni mzito na ladha ni tamu
    # zaidi kuliko X": only the taste is compared).
    inside = [(spans[k].start, spans[k].end) for k in chain]
    free = [
        r
        for r in c.comparatives
        if r[1] <= spans[owner].start and not any(a <= r[0] and r[1] <= b for a, b in inside)
    ]
    # Each shares only with a comparative before it: "good yield, better taste and
    # flavour than X" compares the taste and the flavour, "épais et plus sucré" the sugar.
    return [k for k in chain[1:] if any(r[1] <= spans[k].start for r in free)]


def _only(
    text: str,
    a: int,
    b: int,
    allowed: Sequence[tuple[int, int]],
    needed: Sequence[tuple[int, int]],
) -> bool:
    """Return whether ``text[a:b]`` holds only whitespace and the allowed ranges, one needed."""
    if not any(a <= s and e <= b for s, e in needed):
        return False
    rest = list(text[a:b])
    for s, e in allowed:
        if a <= s and e <= b:
            rest[s - a : e - a] = " " * (e - s)
    return not "".join(rest).strip()


def fronted_reference(span: Span, refs: Sequence[Comparison]) -> VarietyMention | None:
    """Return the reference of a clause-opening marker before the span, if any.

    "Compared to X, it cooks faster": the marker and its reference lie before the span.
    """
    before = [
        c.reference
        for c in refs
        if c.fronted and c.end <= span.start and c.reference[1] <= span.start
    ]
    return before[-1] if before else None
