"""Small value types that flow between modules.

Offsets are always character offsets. A :class:`Span` is relative to the text of the
:class:`Sentence` it belongs to; ``Sentence.offset`` places that sentence inside its
answer, so ``answer[sentence.offset + span.start : sentence.offset + span.end]`` is the
span's text. Mentions are views: they never carry a copy of the text.
"""

from __future__ import annotations

from typing import NamedTuple

STANCES = ("liked", "disliked", "wanted", "neutral")
"""The stances a trait mention can take, in display order."""

TAGS = ("O", "B-TRAIT", "I-TRAIT")
"""The IOB2 tag set of the tagger: one entity type, TRAIT."""


class Sentence(NamedTuple):
    """One sentence of one answer."""

    id: int
    text: str
    lang: str
    question: str | None = None
    respondent: str | None = None
    answer_id: int | None = None
    offset: int = 0


class ConceptEntry(NamedTuple):
    """One concept of a validated concept (or variety) list."""

    id: str
    parent: str | None = None
    definition: str | None = None


class AliasEntry(NamedTuple):
    """One written form of a concept in one language.

    ``kind`` is the SKOS label kind: ``preferred``, ``alternative`` or ``hidden``.
    """

    concept_id: str
    text: str
    lang: str
    kind: str


class Span(NamedTuple):
    """A trait mention: ``[start, end)`` in the sentence text, with optional concept and stance."""

    start: int
    end: int
    concept: str | None = None
    stance: str | None = None
