"""Marking helpers: typed words found as whole tokens, concept completion, span checks."""

from __future__ import annotations

import sqlite3

import pytest

from extractor.errors import InputError
from extractor.loop.marking import (
    ConceptEntry,
    checked_spans,
    concept_entries,
    concepts_for_words,
    default_stance,
    find_phrase,
    rank_concepts,
)
from extractor.types import Sentence, Span
from tests.fake_model import ALIASES, FakeModel  # noqa: E402


@pytest.mark.parametrize(
    ("words", "expected"),
    [
        ("cooks fast", [(3, 13), (26, 36)]),
        ("COOKS   Fast", [(3, 13), (26, 36)]),
        ("bitter", [(41, 47)]),
        ("fas", []),
        ("", []),
    ],
    ids=["two-occurrences", "case-and-spaces", "one", "partial-word", "empty"],
)
def test_find_phrase_matches_whole_tokens(words: str, expected: list[tuple[int, int]]) -> None:
    text = "It cooks fast. We said it cooks fast but bitter."
    assert find_phrase(text, words, "en") == expected


def test_find_phrase_ignores_accents() -> None:
    assert find_phrase("Les grains sont très amers.", "tres amers", "fr") == [(16, 26)]


ENTRIES = [ConceptEntry(c, t, lang, kind == "preferred") for c, t, lang, kind in ALIASES]


@pytest.mark.parametrize(
    ("query", "first"),
    [
        ("bitt", "BTX:0007"),
        ("amer", "BTX:0007"),
        ("rend", "BTX:0015"),
        ("harv", "BTX:0015"),
        ("ck tm", "BTX:0002"),
        ("0020", "BTX:0020"),
        ("gros", "BTX:0011"),
    ],
    ids=[
        "label-prefix",
        "french-label",
        "french-yield",
        "alias",
        "letters-in-order",
        "concept-id",
        "french-alias",
    ],
)
def test_rank_concepts_finds_any_name_in_any_language(query: str, first: str) -> None:
    assert rank_concepts(query, ENTRIES)[0].concept == first


def test_rank_concepts_lists_each_concept_once_with_its_label() -> None:
    found = rank_concepts("t", ENTRIES)
    assert len({m.concept for m in found}) == len(found)
    harvest = rank_concepts("harvest", ENTRIES)[0]
    assert (harvest.label, harvest.matched) == ("yield", "harvest")


def test_rank_concepts_shows_label_in_sentence_language() -> None:
    assert rank_concepts("bitter", ENTRIES, lang="fr")[0].label == "amertume"


def test_rank_concepts_returns_nothing_for_blank_or_unknown() -> None:
    assert rank_concepts("  ", ENTRIES) == []
    assert rank_concepts("zzqx", ENTRIES) == []


def test_concept_entries_are_the_stored_labels_and_aliases(conn: sqlite3.Connection) -> None:
    found = {(e.concept, e.text, e.lang, e.preferred) for e in concept_entries(conn)}
    assert found == {(c, t, lang, kind == "preferred") for c, t, lang, kind in ALIASES}


SENTENCE = Sentence(7, "It cooks fast.", "en")


def test_checked_spans_are_plain_spans_in_order() -> None:
    spans = [Span(9, 13, None, "liked"), Span(3, 8, "BTX:0002", None)]
    assert checked_spans(SENTENCE, spans) == (Span(3, 8, "BTX:0002", None), spans[0])


@pytest.mark.parametrize(
    ("span", "message"),
    [
        (Span(3, 40), "Span 3-40 does not fit in sentence 7 \\(14 characters\\)"),
        (Span(5, 5), "Span 5-5 does not fit"),
        (Span(3, 8, None, "happy"), "stance must be one of liked, disliked, wanted, neutral"),
    ],
    ids=["past-the-end", "empty", "unknown-stance"],
)
def test_checked_spans_refuse_what_does_not_fit(span: Span, message: str) -> None:
    with pytest.raises(InputError, match=message):
        checked_spans(SENTENCE, [span])


def test_concepts_for_words_puts_aliases_inside_the_words_first() -> None:
    entries = [*ENTRIES, ConceptEntry("BTX:0020", "aguenta a seca", "pt", False)]
    # "à" and "a" meet after NFKD decomposition (Unicode Standard Annex #15)
    found = concepts_for_words("aguenta bem à seca", entries, lang="pt")
    assert found[0].concept == "BTX:0020"
    assert rank_concepts("aguenta bem à seca", entries) == []  # completion alone finds none


def test_concepts_for_words_prefers_the_longer_alias_inside() -> None:
    entries = [
        ConceptEntry("BTX:0007", "ladha", "sw", False),
        ConceptEntry("BTX:0002", "ladha tamu", "sw", False),
    ]
    assert [m.concept for m in concepts_for_words("ladha tamu sana", entries)] == [
        "BTX:0002",
        "BTX:0007",
    ]


def test_default_stance_is_the_overlapping_mention_stance() -> None:
    sentence = Sentence(1, "It cooks fast but it is bitter.", "en", "Why do you grow it?")
    prediction = FakeModel().predict(sentence)  # "bitter" disliked, "cooks fast" liked
    start = sentence.text.index("is bitter")
    assert default_stance(sentence, prediction, start, start + 9) == "disliked"


@pytest.mark.parametrize(
    ("question", "stance"),
    [
        ("What do you dislike about this bean?", "disliked"),
        ("What would you like breeders to improve?", "wanted"),
        ("Why do you grow this bean?", "liked"),
        (None, "neutral"),
    ],
    ids=["dislike", "improve", "why-grow", "no-question"],
)
def test_default_stance_without_a_model_leans_on_the_question(
    question: str | None, stance: str
) -> None:
    # question words as in Hu & Liu's (2004) opinion lexicon ("dislike" negative, from
    # memory) and the wish wording of the packaged cue lexicon's question_wanted category
    sentence = Sentence(1, "The soup turns dark.", "en", question)
    assert default_stance(sentence, None, 4, 19) == stance


@pytest.mark.parametrize(
    ("words", "first"),
    [("cooks faster", "BTX:0002"), ("it cooks slowly", "BTX:0002"), ("grain", "BTX:0011")],
    ids=["longer-form-of-alias-word", "shares-a-word", "completion"],
)
def test_concepts_for_words_tolerates_longer_forms_and_shared_words(words: str, first: str) -> None:
    assert rank_concepts("cooks faster", ENTRIES) == []  # completion alone finds none
    assert concepts_for_words(words, ENTRIES)[0].concept == first
