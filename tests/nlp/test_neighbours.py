"""The phrases a one-word mention makes with its neighbours (extractor.nlp.neighbours).

The grammar the noun-phrase reading relies on is that of the five languages' grammars,
from memory: determiners, prepositions (with their contractions: "del", "au", "do") and
quantifiers stand between a noun and the words of its noun phrase; a conjunction joins
two items and a relative pronoun or subordinator opens another clause.
"""

from __future__ import annotations

import pytest

from extractor.nlp.neighbours import MAX_BETWEEN, neighbour_phrases
from extractor.nlp.nontrait import joins_noun_phrase
from tests.models.toy import mention


def _read(text: str, word: str, lang: str, noun_phrase: bool) -> list[str]:
    sentence, span = mention(text, word, lang)
    across = joins_noun_phrase if noun_phrase else None
    return [text[p.span.start : p.span.end] for p in neighbour_phrases(sentence, span, across)]


@pytest.mark.parametrize(
    ("text", "word", "lang", "adjacent", "noun_phrase"),
    [
        # Real answers of the maize concept-testing data (tests/maize.py), as written.
        (
            "There is no good market for green maize in the area.",
            "market",
            "en",
            ["good market"],
            ["good market", "market for green"],
        ),
        (
            "Limited Market For The Green Variety",
            "Market",
            "en",
            ["Limited Market"],
            ["Limited Market", "Market For The Green"],
        ),
        # A conjunction joins two items: "sale" is not read with "consumption".
        ("It is grown for consumption and sale.", "sale", "en", [], []),
        # A subordinator opens another clause.
        ("My grandchildren finish the plate when I cook.", "plate", "en", [], ["finish the plate"]),
        ("Y se tarda en la olla, hay que remojarlo.", "tarda", "es", [], ["tarda en la olla"]),
        (
            "Il y a des grains de toutes les couleurs.",
            "couleurs",
            "fr",
            [],
            ["grains de toutes les couleurs"],
        ),
        # A relative pronoun opens another clause.
        ("Un haricot nain qui produit beaucoup.", "nain", "fr", ["haricot nain"], ["haricot nain"]),
        ("O preço do feijão subiu.", "preço", "pt", [], ["preço do feijão"]),
        # No Swahili stop words: the connective "ya" counts as a word of its own.
        ("Bei ya mahindi ni nzuri.", "Bei", "sw", ["Bei ya"], ["Bei ya"]),
        ("The cooking time is short.", "cooking time", "en", [], []),
    ],
    ids=[
        "en-both",
        "en-title",
        "en-and",
        "en-when",
        "es-prep",
        "fr-quant",
        "fr-qui",
        "pt",
        "sw",
        "two-words",
    ],
)
def test_adjacent_and_noun_phrase_readings(
    text: str, word: str, lang: str, adjacent: list[str], noun_phrase: list[str]
) -> None:
    assert _read(text, word, lang, noun_phrase=False) == adjacent
    assert _read(text, word, lang, noun_phrase=True) == noun_phrase


def test_noun_phrase_reading_crosses_at_most_max_between_words() -> None:
    assert MAX_BETWEEN == 3
    assert _read("Size of all the seed.", "Size", "en", noun_phrase=True) == [
        "Size of all the seed"
    ]
    assert _read("Size of all of the seed.", "Size", "en", noun_phrase=True) == []


@pytest.mark.parametrize(
    ("word", "lang", "joins"),
    [
        ("the", "en", True),
        ("for", "en", True),
        ("and", "en", False),
        ("when", "en", False),
        ("l'", "fr", True),
        ("aux", "fr", True),
        ("qui", "fr", False),
        ("et", "fr", False),
        ("del", "es", True),
        ("todas", "es", True),
        ("y", "es", False),
        ("que", "es", False),
        ("nas", "pt", True),
        ("e", "pt", False),
        ("ya", "sw", False),
    ],
)
def test_words_that_join_a_noun_phrase(word: str, lang: str, joins: bool) -> None:
    # From memory: determiners, prepositions and their contractions, quantifiers join a
    # noun phrase; conjunctions, relative pronouns and subordinators do not.
    assert joins_noun_phrase(word, lang) is joins
