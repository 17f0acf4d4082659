"""Which variety a trait mention is about, and the reference variety of a comparison.

Variety names are found with the same alias matcher as trait concepts
(:mod:`extractor.nlp.dictionary`), over the variety list's names and spellings. A trait
mention is attributed to, in order:

1. a variety right after it joined by "of"/"de"/"del"... ("the taste of Kivuli");
2. the nearest variety mentioned before it in the same answer (earlier in its
   sentence, else inside the mention itself, as in an implicit trait's whole sentence,
   else the last one in an earlier sentence), skipping varieties that were only the
   reference of a comparison;
3. the answer's variety column;
4. the first variety named in the question.

A comparison ("bigger than the old Mbegu", "plus rapide que Kivuli") also records the
reference variety, which gets the comparison only (:mod:`extractor.models.comparison`
says which mention a comparison goes to).

A variety spelling counts only where it is written as a name (:func:`written_as_name`):
capitalised ("Clara", "the old Kivuli"), or exactly as the variety list writes it (a
name people write in lower case is listed in lower case), or in a script without letter
case. So a variety called after an ordinary word does not capture the word: "Clara"
is found in "I grow Clara", not in Portuguese "a farinha é mais clara".
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Collection, Iterable, Mapping, Sequence
from typing import Protocol, runtime_checkable

from extractor.models.comparison import (
    VarietyMention,
    comparison_references,
    find_comparisons,
    fronted_reference,
    owners,
)
from extractor.models.cue_file import Cues
from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

__all__ = [
    "Attribution",
    "VarietyMention",
    "attribute_corpus",
    "attribute_variety",
    "find_comparisons",
    "find_varieties",
    "written_as_name",
]

Attribution = tuple[str | None, str | None]
"""(variety_id, reference_variety_id) of one trait mention."""

POSSESSIVE_LINKS = frozenset({"of", "de", "del", "du", "des", "d'", "da", "do", "von"})
"""Words joining a trait to the variety that owns it ("the taste of Kivuli")."""


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
    owned = owners(sentences_of_answer, mentions, refs)
    out = []
    for k, (index, span) in enumerate(mentions):
        sentence = sentences_of_answer[index]
        reference = owned.get(k) or fronted_reference(span, refs[index])
        banned = {reference[2]} if reference else set()
        subject = (
            _owner(sentence, span, variety_mentions_per_sentence[index])
            or _preceding(index, span, variety_mentions_per_sentence, ref_mentions, banned)
            or next((v for v in [answer_variety] if v and v not in banned), None)
            or next((v for v in question_varieties if v not in banned), None)
        )
        out.append((subject, reference[2] if reference else None))
    return out


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
    """Return the nearest variety before the span, skipping mere comparison references.

    Before it in its sentence, else inside it (a span over the whole sentence, as an
    implicit trait has, holds the sentence's own variety: "Tosca Red is bitter, my
    children refuse it"), else the last one of an earlier sentence.
    """
    own = [v for v in per_sentence[index] if v not in ref_mentions[index] and v[2] not in banned]
    same = [v for v in own if v[1] <= span.start]
    if same:
        return same[-1][2]
    inside = [v for v in own if span.start <= v[0] and v[1] <= span.end]
    if inside:
        return inside[0][2]
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
