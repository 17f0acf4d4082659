"""Which variety a trait mention is about, and the reference variety of a comparison.

Variety names are found with the same alias matcher as trait concepts
(:mod:`extractor.nlp.dictionary`), over the variety list's names and spellings. A trait
mention is attributed to, in order:

1. a variety right after it joined by "of"/"de"/"del"... ("the taste of Kivuli");
2. the nearest variety mentioned before it in the same answer (earlier in its
   sentence, else the last one in an earlier sentence), skipping varieties that were
   only the reference of a comparison;
3. the answer's variety column;
4. the first variety named in the question.

A comparison ("bigger than the old Mbegu", "plus rapide que Kivuli", "más grande que
el Mbegu", "compared to Mbegu, ...") also records the reference variety: the one
right after the comparison marker (:func:`find_comparisons`). The reference gets the
comparison only. A marker belongs to one trait mention (:func:`_owners`): the nearest
one before it in its own clause ("the broth is thick and the taste is sweeter than
Mbegu" compares the taste, not the broth; "sweeter than Mbegu" when the comparative
is itself the trait word), else the nearest before it since the last contrast word or
sentence end ("the taste is good, better than Mbegu"), else the first after its
reference in its clause ("better than Mbegu in taste"). What follows the clause is
not compared ("more yield than Mbegu, and it matures early"); only a marker that opens
its clause ("Compared to Mbegu, it cooks faster") reaches the traits after it.

A variety spelling counts only where it is written as a name (:func:`written_as_name`):
capitalised ("Clara", "the old Kivuli"), or exactly as the variety list writes it (a
name people write in lower case is listed in lower case), or in a script without letter
case. So a variety called after an ordinary word does not capture the word: "Clara"
is found in "I grow Clara", not in Portuguese "a farinha é mais clara".
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Collection, Iterable, Mapping, Sequence
from typing import NamedTuple, Protocol, runtime_checkable

from extractor.models.cue_file import Cues, packaged_cues
from extractor.models.cues import Parsed, lexicon, parse, segment
from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

VarietyMention = tuple[int, int, str]
"""(start, end, variety_id) in character offsets of a sentence."""

Attribution = tuple[str | None, str | None]
"""(variety_id, reference_variety_id) of one trait mention."""

POSSESSIVE_LINKS = frozenset({"of", "de", "del", "du", "des", "d'", "da", "do", "von"})
"""Words joining a trait to the variety that owns it ("the taste of Kivuli")."""

REFERENCE_REACH = 4
"""Tokens after a comparison marker within which a variety is its reference."""


@runtime_checkable
class _Matcher(Protocol):
    aliases: tuple[tuple[str, str, str], ...]

    def match(self, text: str, lang: str) -> list[Span]: ...


def written_as_name(found: str, listed: Collection[str]) -> bool:
    """Return whether matched text is written as a name, not as an ordinary word.

    It is when a word of it starts with a capital ("Clara", "old Kivuli"; a capital at
    the start of a sentence counts too), when it is written exactly as a listed
    spelling (case included: a list that writes "ksq 12" in lower case says so), or
    when it has no letter with case at all (Devanagari, Ethiopic, Arabic... scripts).

    Args:
        found: The text the alias matched in the sentence.
        listed: The variety list's spellings, as written there.
    """
    if found in listed:
        return True
    cased = [c for c in found if c.lower() != c.upper()]
    if not cased:
        return True
    for word in found.split():
        first = next((c for c in word if c.lower() != c.upper()), "")
        if first.isupper():
            return True
    return False


def find_varieties(
    text: str,
    lang: str,
    variety_dictionary: _Matcher | Iterable[tuple[str, str, str]],
    *,
    names_only: bool = True,
) -> list[VarietyMention]:
    """Return the variety names in ``text`` as ``(start, end, variety_id)``.

    Args:
        text: One sentence.
        lang: Its language tag.
        variety_dictionary: A :class:`extractor.nlp.dictionary.Dictionary` built from the
            variety list (fast; build it once), or the ``(variety_id, name, lang)``
            triples themselves.
        names_only: Keep only matches written as names (:func:`written_as_name`); off
            for a variety column, which holds variety names whatever their case.

    Returns:
        Non-overlapping matches in order.
    """
    matcher = (
        variety_dictionary
        if isinstance(variety_dictionary, _Matcher)
        else build_dictionary(variety_dictionary)
    )
    listed = {name for _, name, _ in matcher.aliases}
    return [
        (s.start, s.end, str(s.concept))
        for s in matcher.match(text, lang)
        if s.concept and (not names_only or written_as_name(text[s.start : s.end], listed))
    ]


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


def attribute_variety(
    sentences_of_answer: Sequence[Sentence],
    mentions: Sequence[tuple[int, Span]],
    variety_mentions_per_sentence: Sequence[Sequence[VarietyMention]],
    answer_variety: str | None,
    question_varieties: Sequence[str],
    *,
    cues: Cues | None = None,
) -> list[tuple[str | None, str | None]]:
    """Return the subject variety and the reference variety of each trait mention.

    Args:
        sentences_of_answer: The sentences of one answer, in order.
        mentions: ``(sentence_index, span)`` of each trait mention.
        variety_mentions_per_sentence: Variety mentions of each sentence, in order.
        answer_variety: The variety column of the answer's row, if any.
        question_varieties: Varieties named in the question, in order.
        cues: A cue lexicon for comparison markers (the packaged one when ``None``).

    Returns:
        ``(variety_id or None, reference_variety_id or None)`` per mention; the
        reference is set only when the mention's sentence compares it.
    """
    refs = [
        comparison_references(s, v, cues)
        for s, v in zip(sentences_of_answer, variety_mentions_per_sentence, strict=True)
    ]
    ref_mentions = [{c.reference for c in sentence_refs} for sentence_refs in refs]
    owned = _owners(sentences_of_answer, mentions, refs)
    out = []
    for k, (index, span) in enumerate(mentions):
        sentence = sentences_of_answer[index]
        reference = owned.get(k) or _fronted_reference(span, refs[index])
        banned = {reference[2]} if reference else set()
        subject = (
            _owner(sentence, span, variety_mentions_per_sentence[index])
            or _preceding(index, span, variety_mentions_per_sentence, ref_mentions, banned)
            or next((v for v in [answer_variety] if v and v not in banned), None)
            or next((v for v in question_varieties if v not in banned), None)
        )
        out.append((subject, reference[2] if reference else None))
    return out


def _owners(
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
                continue  # it reaches the traits after it (:func:`_fronted_reference`)
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


def _fronted_reference(span: Span, refs: Sequence[Comparison]) -> VarietyMention | None:
    """Return the reference of a clause-opening marker before the span, if any.

    "Compared to X, it cooks faster": the marker and its reference lie before the span.
    """
    before = [
        c.reference
        for c in refs
        if c.fronted and c.end <= span.start and c.reference[1] <= span.start
    ]
    return before[-1] if before else None


def _owner(sentence: Sentence, span: Span, varieties: Sequence[VarietyMention]) -> str | None:
    """Return a variety joined to the span by a possessive word ("taste of Kivuli")."""
    following = [v for v in varieties if v[0] >= span.end]
    if not following:
        return None
    between = sentence.text[span.end : following[0][0]]
    words = [fold(between[s:e]) for s, e in tokenize(between, sentence.lang or "xx")]
    # Allow an article after the link: "the taste of the Kivuli", "le goût de la Kivuli".
    if 1 <= len(words) <= 2 and words[0] in POSSESSIVE_LINKS:
        return following[0][2]
    return None


def _preceding(
    index: int,
    span: Span,
    per_sentence: Sequence[Sequence[VarietyMention]],
    ref_mentions: Sequence[set[VarietyMention]],
    banned: set[str],
) -> str | None:
    """Return the nearest variety before the span, skipping mere comparison references."""
    same = [
        v
        for v in per_sentence[index]
        if v[1] <= span.start and v not in ref_mentions[index] and v[2] not in banned
    ]
    if same:
        return same[-1][2]
    for k in range(index - 1, -1, -1):
        earlier = [v for v in per_sentence[k] if v not in ref_mentions[k] and v[2] not in banned]
        if earlier:
            return earlier[-1][2]
    return None


def attribute_corpus(
    corpus: Sequence[Sentence],
    spans: Mapping[int, Sequence[Span]],
    variety_names: Sequence[tuple[str, str, str]],
    written_varieties: Mapping[int, str | None],
    *,
    cues: Cues | None = None,
) -> dict[int, list[Attribution]]:
    """Return the subject and reference variety of every trait span, by sentence ID.

    The one way variety attribution is applied, to predicted mentions and to spans a
    person labeled alike: each answer holding a span is read whole (earlier sentences
    may name the variety), with :func:`attribute_variety`.

    Args:
        corpus: Sentences in answer order (at least every sentence of the answers that
            hold a span).
        spans: Sentence ID -> its trait spans, in order.
        variety_names: The variety list's ``(variety_id, name, lang)`` triples.
        written_varieties: Answer ID -> the answer's variety column, if any.
        cues: A cue lexicon for comparison markers (the packaged one when ``None``).

    Returns:
        Sentence ID -> one ``(variety_id, reference_variety_id)`` per span, in the
        order of ``spans``.
    """
    matcher = build_dictionary(variety_names) if variety_names else None
    by_answer: dict[int, list[Sentence]] = defaultdict(list)
    for sentence in corpus:
        by_answer[sentence.answer_id or 0].append(sentence)
    out: dict[int, list[Attribution]] = {}
    for answer_id, sentences in by_answer.items():
        mentions = [(i, sp) for i, s in enumerate(sentences) for sp in spans.get(s.id, ())]
        if not mentions:
            continue
        found = _attribute_answer(
            sentences, mentions, matcher, written_varieties.get(answer_id), cues
        )
        for (i, _), pair in zip(mentions, found, strict=True):
            out.setdefault(sentences[i].id, []).append(pair)
    return out


def _attribute_answer(
    sentences: Sequence[Sentence],
    mentions: Sequence[tuple[int, Span]],
    matcher: _Matcher | None,
    written: str | None,
    cues: Cues | None,
) -> list[Attribution]:
    """Attribute the mentions of one answer, reading its variety column and question."""
    lang = sentences[0].lang

    def ids_in(text: str | None) -> list[str]:
        if not text or matcher is None:
            return []
        return [v for _, _, v in find_varieties(text, lang, matcher)]

    column = find_varieties(written, lang, matcher, names_only=False) if written and matcher else []
    answer_variety = column[0][2] if column else written or None
    return attribute_variety(
        sentences,
        mentions,
        [find_varieties(s.text, s.lang, matcher) if matcher else [] for s in sentences],
        answer_variety,
        ids_in(sentences[0].question),
        cues=cues,
    )
