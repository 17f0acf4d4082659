"""Tests of extractor.models.variety: finding variety names and attributing mentions to them."""

from __future__ import annotations

import pytest

from extractor.models.variety import attribute_variety, find_comparisons, find_varieties
from extractor.nlp.dictionary import build_dictionary
from extractor.types import Sentence, Span

# Invented varieties.
VARIETIES = [
    ("VAR:K", "Kivuli", ""),
    ("VAR:T", "Tembala", ""),
    ("VAR:T", "Tembala Red", "en"),
    ("VAR:O", "Orvane", ""),
]
DICTIONARY = build_dictionary(VARIETIES)


def _answer(texts: list[str], lang: str = "en") -> tuple[list[Sentence], list[list]]:
    sentences = [Sentence(id=i, text=t, lang=lang) for i, t in enumerate(texts)]
    return sentences, [find_varieties(s.text, lang, DICTIONARY) for s in sentences]


def _span(sentence: Sentence, term: str) -> Span:
    start = sentence.text.index(term)
    return Span(start, start + len(term))


def _attribute(
    texts: list[str],
    where: list[tuple[int, str]],
    lang: str = "en",
    answer_variety: str | None = None,
    question_varieties: tuple[str, ...] = (),
) -> list[tuple]:
    sentences, varieties = _answer(texts, lang)
    mentions = [(i, _span(sentences[i], term)) for i, term in where]
    return attribute_variety(
        sentences, mentions, varieties, answer_variety, list(question_varieties)
    )


@pytest.mark.parametrize(
    ("text", "lang", "expected"),
    [
        ("We grow Kivuli and tembala.", "en", ["VAR:K", "VAR:T"]),
        ("Tembala Red cooks fast.", "en", ["VAR:T"]),
        ("On préfère la Kivüli.", "fr", ["VAR:K"]),
        ("Sembramos Orvane.", "es", ["VAR:O"]),
        ("No variety named here.", "en", []),
    ],
    ids=["two-names-any-case", "longest-name", "accent-tolerant", "spanish", "none"],
)
def test_find_varieties_returns_ids(text: str, lang: str, expected: list[str]) -> None:
    assert [v for _, _, v in find_varieties(text, lang, DICTIONARY)] == expected


def test_find_varieties_accepts_alias_triples_and_gives_offsets() -> None:
    text = "Orvane is early."
    ((start, end, vid),) = find_varieties(text, "en", VARIETIES)
    assert (text[start:end], vid) == ("Orvane", "VAR:O")


@pytest.mark.parametrize(
    ("texts", "where", "kwargs", "expected"),
    [
        (["Kivuli cooks fast."], [(0, "cooks fast")], {}, [("VAR:K", None)]),
        (["We grow Kivuli.", "It cooks fast."], [(1, "cooks fast")], {}, [("VAR:K", None)]),
        (
            ["Kivuli is tasty but Tembala cooks fast."],
            [(0, "tasty"), (0, "cooks fast")],
            {},
            [("VAR:K", None), ("VAR:T", None)],
        ),
        (["It cooks fast."], [(0, "cooks fast")], {"answer_variety": "VAR:O"}, [("VAR:O", None)]),
        (
            ["It cooks fast."],
            [(0, "cooks fast")],
            {"question_varieties": ("VAR:T",)},
            [("VAR:T", None)],
        ),
        (
            ["It cooks fast."],
            [(0, "cooks fast")],
            {"answer_variety": "VAR:O", "question_varieties": ("VAR:T",)},
            [("VAR:O", None)],
        ),
        (["It cooks fast."], [(0, "cooks fast")], {}, [(None, None)]),
        (
            ["Tembala is fine.", "The taste of Kivuli is better."],
            [(1, "taste")],
            {},
            [("VAR:K", None)],
        ),
    ],
    ids=[
        "same-sentence",
        "earlier-sentence",
        "nearest-before-wins",
        "answer-column",
        "question",
        "column-before-question",
        "nothing",
        "possessive-of",
    ],
)
def test_attribute_variety_picks_subject(texts, where, kwargs, expected) -> None:
    assert _attribute(texts, where, **kwargs) == expected


@pytest.mark.parametrize(
    ("texts", "term", "lang", "kwargs", "expected"),
    [
        (["Kivuli has bigger grains than Tembala."], "bigger grains", "en", {}, ("VAR:K", "VAR:T")),
        (
            ["Its grains are bigger than the old Tembala."],
            "grains",
            "en",
            {"answer_variety": "VAR:K"},
            ("VAR:K", "VAR:T"),
        ),
        (["Orvane cuit plus vite que Kivuli."], "cuit plus vite", "fr", {}, ("VAR:O", "VAR:K")),
        (["Orvane es más grande que el Kivuli."], "más grande", "es", {}, ("VAR:O", "VAR:K")),
        (
            ["Compared to Tembala, Kivuli cooks faster."],
            "cooks faster",
            "en",
            {},
            ("VAR:K", "VAR:T"),
        ),
        (
            ["Kivuli is bigger than Tembala.", "It also cooks fast."],
            "cooks fast",
            "en",
            {},
            ("VAR:K", None),
        ),
        (["Il faut que Kivuli soit sucré."], "sucré", "fr", {}, ("VAR:K", None)),
        (
            ["It cooks faster than Tembala."],
            "cooks faster",
            "en",
            {"question_varieties": ("VAR:T", "VAR:O")},
            ("VAR:O", "VAR:T"),
        ),
    ],
    ids=[
        "than",
        "than-with-answer-column",
        "plus-que",
        "mas-que-el",
        "compared-to-before",
        "reference-not-carried-over",
        "que-without-comparative",
        "question-skips-reference",
    ],
)
def test_attribute_variety_records_comparison_reference(
    texts, term, lang, kwargs, expected
) -> None:
    index = len(texts) - 1
    assert _attribute(texts, [(index, term)], lang, **kwargs) == [expected]


@pytest.mark.parametrize(
    ("text", "lang", "markers"),
    [
        ("It is bigger than Kivuli.", "en", ["than"]),
        ("Orvane cuit plus vite que Kivuli.", "fr", ["que"]),
        ("Il faut que Kivuli soit sucré.", "fr", []),
        ("Orvane es más grande que el Kivuli.", "es", ["que"]),
    ],
    ids=["en-than", "fr-plus-que", "fr-que-conjunction", "es-mas-que"],
)
def test_find_comparisons_takes_que_only_after_a_comparative(
    text: str, lang: str, markers: list[str]
) -> None:
    # French and Spanish grammar (from memory): "que" introduces the second term of a
    # comparison only after "plus"/"más"; in "il faut que" it is a conjunction.
    assert [text[s:e] for s, e in find_comparisons(text, lang)] == markers
