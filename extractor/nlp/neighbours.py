"""The phrases a one-word mention makes with its neighbouring content words.

A list alias used in another sense, or met by a surface accident, shows it once read with
the word beside it ("perder plata", "palo cuesta"), and a word whose trait is named by its
noun phrase shows that trait once read with the noun it modifies or governs ("market for
green maize", "tarda en la olla", "grains de toutes les couleurs").
:class:`extractor.models.linking.ConceptLinker` links these phrases (DEVELOPERS.md, "Alias
words in another sense" and its ninth round).

Two readings:

* the **adjacent** content word on each side (:func:`neighbour_phrases` with no
  ``across``): a token with a letter that is no stop word or verb of liking
  (:func:`extractor.nlp.nontrait.is_function_word`);
* the **noun phrase**: the nearest content word on each side with only determiners,
  prepositions and quantifiers between (``across=``:func:`extractor.nlp.nontrait.joins_noun_phrase`,
  at most :data:`MAX_BETWEEN` of them): the words that tie a noun to its determiner and to
  the noun phrase it is the complement of, not a conjunction ("consumption and sale":
  two items) nor a pronoun or subordinator that starts another clause ("nain qui
  produit", "plate when I cook").

Punctuation stops both, since punctuation is a token of its own. Both sides are read,
whatever the language's word order: a modifier comes before its noun in English
("sweet potatoes") and after it in French, Spanish, Portuguese and Swahili ("patate douce").
"""

from __future__ import annotations

from collections.abc import Callable
from typing import NamedTuple

from extractor.nlp.nontrait import is_function_word
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

MAX_BETWEEN = 3
"""Function words a noun-phrase reading crosses at most ("de toutes les couleurs": 3)."""


class Phrase(NamedTuple):
    """A one-word mention widened to a neighbouring content word."""

    span: Span
    """From the mention to the neighbour (the words between included)."""
    neighbour: Span
    """The content word itself."""


def neighbour_phrases(
    sentence: Sentence, span: Span, across: Callable[[str, str], bool] | None = None
) -> list[Phrase]:
    """Return the span widened to the nearest content word on each side, when it is one word.

    Args:
        sentence: The mention's sentence.
        span: The mention; a span of more than one token gets no phrase.
        across: Which function words may stand between (called with the word and the
            sentence's language), at most :data:`MAX_BETWEEN`; ``None``: none, the
            adjacent word only.
    """
    tokens = tokenize(sentence.text, sentence.lang or "xx")
    inside = [k for k, (s, e) in enumerate(tokens) if s < span.end and e > span.start]
    if len(inside) != 1:
        return []
    out = []
    for step in (-1, 1):
        j, between = inside[0] + step, 0
        while 0 <= j < len(tokens):
            start, end = tokens[j]
            word = sentence.text[start:end]
            if not any(c.isalpha() for c in word):
                break
            if not is_function_word(word, sentence.lang):
                wide = Span(min(span.start, start), max(span.end, end))
                out.append(Phrase(wide, Span(start, end)))
                break
            if across is None or between >= MAX_BETWEEN or not across(word, sentence.lang):
                break
            between += 1
            j += step
    return out
