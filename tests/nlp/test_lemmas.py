"""Lemmas for words stemming leaves apart from their alias (simplemma's lemma tables)."""

from __future__ import annotations

import pytest

from extractor.nlp import dictionary
from extractor.nlp.dictionary import build_dictionary, lemma_key, stem_word
from extractor.nlp.lemmas import lemma
from extractor.types import Span
from tests import maize

# Regular English comparatives and irregular participles (English grammar, from memory);
# simplemma's tables (built from Wiktionary) are the outside reference for each lemma.
LEMMAS = [
    ("sweeter", "en", "sweet"),
    ("longer", "en", "long"),
    ("healthier", "en", "healthy"),
    ("grown", "en", "grow"),
    ("fed", "en", "feed"),
    ("cuisent", "fr", "cuire"),
    ("cocinan", "es", "cocinar"),
    ("wadudu", "sw", "mdudu"),
]


@pytest.mark.parametrize(("word", "lang", "expected"), LEMMAS)
def test_lemma_reads_the_table_of_the_words_language(word: str, lang: str, expected: str) -> None:
    assert lemma(word, lang) == expected


def test_lemma_is_none_for_the_word_itself_an_unknown_language_or_no_word() -> None:
    assert lemma("sweet", "en") is None
    assert lemma("sweeter", "xx") is None  # no table: no error either
    assert lemma("2019", "en") is None


@pytest.mark.parametrize(
    ("alias", "text", "words"),
    [
        ("sweet", "I would prefer a sweeter one.", "sweeter"),
        ("long season", "It has a longer season.", "longer season"),
        ("grows fast", "It grows faster than the old one.", "grows faster"),
        ("harvested early", "It Can Be Harvested Earlier.", "Harvested Earlier"),
    ],
)
def test_a_word_stemming_leaves_apart_meets_its_alias_by_its_lemma(
    alias: str, text: str, words: str
) -> None:
    (span,) = build_dictionary([("C:1", alias, "en")]).match(text, "en")
    assert text[span.start : span.end] == words


def test_a_word_that_only_looks_inflected_keeps_its_own_key() -> None:
    # "brother" is no comparative of "broth": the lemma table leaves it as it is
    assert build_dictionary([("C:1", "broth", "en")]).match("My brother cooks.", "en") == []


def test_a_function_word_never_takes_its_lemmas_key() -> None:
    # simplemma reads Spanish "muy" as "mucho" and "lo" as "él"; both are stop words
    assert lemma("muy", "es") == "mucho"
    assert lemma_key("muy", "es", "es", frozenset({stem_word("mucho", "es")})) is None


@pytest.mark.skipif(maize.load_workspace() is None, reason=maize.SKIP_REASON)
def test_every_match_lemmas_add_in_our_maize_answers_is_a_labelled_mention_of_its_concept(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # Real farmer answers (maize concept testing, CC BY 4.0; tests/maize.py): the matches
    # the lemma fallback adds in the 300 answers we labelled ("fed", "Grows Faster",
    # "Harvested Earlier") each overlap a gold mention of the same concept.
    loaded = maize.load_workspace()
    assert loaded is not None
    corpus, labelled, aliases = loaded
    gold = [(corpus[g["row"]], [Span(**sp) for sp in g["spans"]]) for g in labelled]
    with_lemmas = build_dictionary(aliases)
    found = [with_lemmas.match(s.text, s.lang) for s, _ in gold]
    monkeypatch.setattr(dictionary, "lemma_key", lambda *args: None)
    without = build_dictionary(aliases)
    added = [
        (m, spans)
        for (s, spans), matches in zip(gold, found, strict=True)
        for m in matches
        if m not in without.match(s.text, s.lang)
    ]
    assert len(added) >= 4
    for m, spans in added:
        assert any(g.concept == m.concept and g.start < m.end and m.start < g.end for g in spans)
