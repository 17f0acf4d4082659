"""Small value types that flow between modules.

Offsets are always character offsets. A :class:`Span` is relative to the text of the
:class:`Sentence` it belongs to; ``Sentence.offset`` places that sentence inside its
answer, so ``answer[sentence.offset + span.start : sentence.offset + span.end]`` is the
span's text. Mentions are views: they never carry a copy of the text.
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType
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


class AnswerRow(NamedTuple):
    """One answer read from an interview file, exactly as written, ready for the store.

    Attributes:
        respondent: The respondent's ID (or the focus group's).
        answer: The answer text exactly as in the file.
        lang: BCP 47 tag of the answer.
        lang_origin: Where the tag came from: ``column``, ``detected`` or ``default``.
        question: The question it answers, if known.
        variety: The variety it is about, if the file says.
        metadata: Other columns (or transcript header lines) of the respondent.
        sheet: The workbook sheet it came from.
        row: The spreadsheet row (header = 1) or the transcript line it starts on.
        is_group: Whether the respondent is a focus group.
        speaker: The transcript speaker label of the turn.
    """

    respondent: str
    answer: str
    lang: str
    lang_origin: str
    question: str | None = None
    variety: str | None = None
    metadata: Mapping[str, str] = MappingProxyType({})
    sheet: str | None = None
    row: int | None = None
    is_group: bool = False
    speaker: str | None = None


class ConceptEntry(NamedTuple):
    """One concept of a validated concept (or variety) list.

    ``parent`` is its first parent and ``more_parents`` the others (an OBO term may have
    several ``is_a`` parents, a SKOS concept several ``broader`` ones); ``iri`` is the
    concept's IRI when the list is SKOS.
    """

    id: str
    parent: str | None = None
    definition: str | None = None
    more_parents: tuple[str, ...] = ()
    iri: str | None = None

    @property
    def parents(self) -> tuple[str, ...]:
        """Every parent, the first one first."""
        return ((self.parent,) if self.parent else ()) + self.more_parents


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


class Implicit(NamedTuple):
    """A trait a sentence states without a phrase naming it: a concept and its stance.

    "My children finish the plate" states taste, liked, with no span to mark. It belongs
    to the whole sentence, so it has no offsets; ``stance`` is ``None`` when not given.
    """

    concept: str
    stance: str | None = None


DIRECTIONS = ("likes", "dislikes", "wishes", "open")
"""What a question asks for, as a codebook gives it: evidence for stance, never the answer."""


class QuestionCode(NamedTuple):
    """One question of a question codebook: its wording and the direction it asks for.

    Attributes:
        key: The question as stored with the answers (a survey field name such as
            ``q5_dislike``, or the question's text).
        text: The question's wording, when known (read for its cue words).
        direction: One of :data:`DIRECTIONS`, or ``None`` when only the text is given.
    """

    key: str
    text: str | None = None
    direction: str | None = None
