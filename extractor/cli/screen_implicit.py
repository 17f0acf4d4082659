"""Traits without a quote span on the labeling screen: the ``+`` and ``-`` commands, their line.

``+ letters [key]`` adds a trait the sentence states without words to mark (an implicit
trait): the concept by a few letters of any of its names, the stance by one key;
``- N`` drops implicit trait N. The screen lists them under the sentence, the model's
suggestions among them, beside the span suggestions (:func:`screen_draw.implicit_text`).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Protocol

from extractor.cli.screen_draw import concept_label
from extractor.loop.items import Item
from extractor.loop.marking import ConceptEntry, concepts_started, rank_concepts
from extractor.nlp.fold import fold
from extractor.types import Implicit, Span

STANCE_KEYS = {"l": "liked", "d": "disliked", "w": "wanted", "n": "neutral"}
"""One key per stance (the same keys as for spans)."""


class _Screen(Protocol):
    implicit: list[Implicit]
    entries: list[ConceptEntry]

    def say(self, message: str) -> None: ...
    def choose_stance(self, current: str | None, subject: str = "") -> str: ...
    def choose_concept(
        self, words: str, current: str | None, lang: str, query: str | None = None
    ) -> str | None: ...


def start(screen: _Screen, item: Item) -> list[Span | None]:
    """Begin a sentence: the implicit suggestions become the screen's; return the span draft."""
    screen.implicit = list(item.implicit_suggestion)
    return list(item.suggestion)


def command(screen: _Screen, lang: str, line: str) -> bool:
    """Apply a ``+`` or ``- N`` line to the screen's implicit traits; False for other lines."""
    rest = line[1:].strip()
    if line.startswith("-") and (rest.isdigit() or not rest):
        screen.say(drop(screen.implicit, rest) or "")
        return True
    if not line.startswith("+"):
        return False
    query, stance = split_command(rest)
    concept = clear_concept(query, screen.entries, lang) or screen.choose_concept(
        "", None, lang, query=query
    )
    if concept is None:
        screen.say("A trait without a quote span needs a concept; nothing was added.")
        return True
    stance = stance or screen.choose_stance(None, concept_label(screen.entries, concept, lang))
    screen.implicit[:] = [t for t in screen.implicit if t.concept != concept]
    screen.implicit.append(Implicit(concept, stance))
    return True


def split_command(rest: str) -> tuple[str, str | None]:
    """Return the letters and the stance of ``+ letters [key]`` (None: not given)."""
    words = rest.split()
    if len(words) > 1 and words[-1].lower() in STANCE_KEYS:
        return " ".join(words[:-1]), STANCE_KEYS[words[-1].lower()]
    return " ".join(words), None


def clear_concept(query: str, entries: Sequence[ConceptEntry], lang: str) -> str | None:
    """Return the one concept the letters name, else None.

    The letters name one concept when they match one concept only, are one concept's
    whole name, or (two letters or more) begin a name or a word of a name of one concept
    only: "tast" is taste even when its letters also occur, in order, in "striga resistance".
    """
    if not query:
        return None
    matches = rank_concepts(query, entries, lang=lang)
    exact = [m for m in matches if fold(query) in (fold(m.matched), fold(m.concept))]
    if len(matches) == 1 or len({m.concept for m in exact}) == 1:
        return (exact or matches)[0].concept
    started = concepts_started(query, entries) if len(fold(query.strip())) > 1 else set()
    if not exact and len(started) == 1:
        return started.pop()
    return None


def drop(traits: list[Implicit], arg: str) -> str | None:
    """Drop trait number ``arg`` (or the only one); return what to tell the annotator if not."""
    if arg == "" and len(traits) == 1:
        arg = "1"
    if not arg.isdigit() or not 1 <= int(arg) <= len(traits):
        return f"Give the number of a trait without quote span: 1 to {len(traits)}."
    del traits[int(arg) - 1]
    return None
