"""Tests of extractor.models.variety: finding variety names and attributing mentions to them."""

from __future__ import annotations

import pytest

from extractor.models.variety import (
    attribute_corpus,
    attribute_variety,
    find_varieties,
)
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
        # "tembala" in lower case is not written as a name, and the list writes it "Tembala".
        ("We grow Kivuli and tembala.", "en", ["VAR:K"]),
        ("Tembala Red cooks fast.", "en", ["VAR:T"]),
        ("On préfère la Kivüli.", "fr", ["VAR:K"]),
        ("Sembramos Orvane.", "es", ["VAR:O"]),
        ("No variety named here.", "en", []),
    ],
    ids=["lower-case-is-no-name", "longest-name", "accent-tolerant", "spanish", "none"],
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
        (
            ["It gives more yield than Tembala, and it matures early."],
            [(0, "more yield"), (0, "matures early")],
            {"answer_variety": "VAR:K"},
            [("VAR:K", "VAR:T"), ("VAR:K", None)],
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
        "than-clause-ends-at-and",
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


# Varieties whose names are also ordinary words, all invented: "Clara" (Portuguese
# "clara", light-coloured), "Alvorina", "Zimbo" and "Nyota Tamu" (Swahili "nyota", star),
# and a breeder's code people write in lower case, listed that way.
ORDINARY = [
    ("VAR:A", "Alvorina", "pt"),
    ("VAR:C", "Clara", "pt"),
    ("VAR:Z", "Zimbo", "sw"),
    ("VAR:N", "Nyota Tamu", "sw"),
    ("VAR:Q", "ksq 12", ""),
    ("VAR:H", "सोनाली", "hi"),
]
ORDINARY_DICTIONARY = build_dictionary(ORDINARY)


@pytest.mark.parametrize(
    ("text", "lang", "expected"),
    [
        ("A farinha fica mais clara.", "pt", []),
        ("Planto a Clara há anos.", "pt", ["VAR:C"]),
        ("Clara dá farinha boa.", "pt", ["VAR:C"]),
        ("plantamos alvorina.", "pt", []),
        ("Tunapanda ksq 12 na KSQ 12.", "sw", ["VAR:Q", "VAR:Q"]),
        ("Tunapanda nyota tamu.", "sw", []),
        ("हम सोनाली उगाते हैं।", "hi", ["VAR:H"]),
    ],
    ids=[
        "ordinary-adjective",
        "capitalised-name",
        "sentence-start",
        "listed-capitalised-written-lower",
        "listed-lower-written-as-listed",
        "two-ordinary-words",
        "script-without-case",
    ],
)
def test_find_varieties_takes_only_what_is_written_as_a_name(
    text: str, lang: str, expected: list[str]
) -> None:
    # A proper name is capitalised in languages written with letter case (Portuguese,
    # Swahili, English orthography; from memory); Devanagari has no letter case, so
    # capitals cannot be asked for there.
    assert [v for _, _, v in find_varieties(text, lang, ORDINARY_DICTIONARY)] == expected


def _attribute_corpus(texts: list[str], lang: str, where: list[tuple[int, str]], written: str):
    sentences = [Sentence(id=i + 1, text=t, lang=lang, answer_id=7) for i, t in enumerate(texts)]
    spans: dict[int, list[Span]] = {}
    for index, term in where:
        spans.setdefault(index + 1, []).append(_span(sentences[index], term))
    found = attribute_corpus(sentences, spans, ORDINARY, {7: written})
    return [pair for sid in sorted(found) for pair in found[sid]]


@pytest.mark.parametrize(
    ("texts", "lang", "where", "written", "expected"),
    [
        (
            ["Mavuno mengi kuliko Zimbo, na inakomaa mapema."],
            "sw",
            [(0, "Mavuno mengi"), (0, "inakomaa mapema")],
            "Nyota Tamu",
            [("VAR:N", "VAR:Z"), ("VAR:N", None)],
        ),
        (
            ["A Alvorina dá mais raiz do que a Clara, e aguenta bem a seca."],
            "pt",
            [(0, "mais raiz"), (0, "aguenta bem a seca")],
            "",
            [("VAR:A", "VAR:C"), ("VAR:A", None)],
        ),
        (
            ["Gosto do que a Alvorina dá.", "A farinha é mais clara."],
            "pt",
            [(1, "farinha")],
            "",
            [("VAR:A", None)],
        ),
    ],
    ids=["sw-kuliko", "pt-do-que", "pt-do-que-without-comparative"],
)
def test_attribute_corpus_gives_the_compared_variety_the_comparison_only(
    texts, lang, where, written, expected
) -> None:
    # Swahili "kuliko" ("than") and Portuguese "(do) que" after "mais" ("more ... than")
    # introduce the variety compared against (from memory); what follows "and" ("na",
    # "e") is a new clause about the answer's own variety.
    assert _attribute_corpus(texts, lang, where, written) == expected


@pytest.mark.parametrize(
    ("texts", "lang", "where", "written", "expected"),
    [
        (
            ["The broth is thick and the taste is sweeter than Zimbo."],
            "en",
            [(0, "broth is thick"), (0, "taste")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            ["The broth is thick and sweeter than Zimbo."],
            "en",
            [(0, "broth is thick"), (0, "sweeter")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            ["It cooks fast, the grains are bigger than Zimbo."],
            "en",
            [(0, "cooks fast"), (0, "grains")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            ["The taste is good, better than Zimbo."],
            "en",
            [(0, "taste")],
            "Alvorina",
            [("VAR:A", "VAR:Z")],
        ),
        (
            ["It is better than Zimbo in taste, and it cooks fast."],
            "en",
            [(0, "taste"), (0, "cooks fast")],
            "Alvorina",
            [("VAR:A", "VAR:Z"), ("VAR:A", None)],
        ),
        (
            ["Le bouillon est épais et le goût est plus sucré que Zimbo."],
            "fr",
            [(0, "bouillon est épais"), (0, "goût")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            ["El caldo es espeso y el sabor es más dulce que el Zimbo."],
            "es",
            [(0, "caldo es espeso"), (0, "sabor")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            ["O caldo é grosso e o sabor é mais doce do que a Clara."],
            "pt",
            [(0, "caldo é grosso"), (0, "sabor")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:C")],
        ),
        (
            ["Mchuzi ni mzito na ladha ni tamu zaidi kuliko Zimbo."],
            "sw",
            [(0, "Mchuzi ni mzito"), (0, "ladha")],
            "Alvorina",
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
    ],
    ids=[
        "en-other-clause",
        "en-comparative-is-trait",
        "en-comma-clause",
        "en-after-comma",
        "en-trait-after-reference",
        "fr-plus-que",
        "es-mas-que",
        "pt-do-que",
        "sw-kuliko",
    ],
)
def test_comparison_goes_to_the_mention_of_its_clause(
    texts, lang, where, written, expected
) -> None:
    # The second term of a comparison ("than", "que", "do que", "kuliko") completes the
    # comparative of its own clause (English, French, Spanish, Portuguese and Swahili
    # grammar, from memory): in "the broth is thick and the taste is sweeter than X"
    # only the taste is compared; a trait after the reference in the same clause
    # ("better than X in taste") is what is compared.
    assert _attribute_corpus(texts, lang, where, written) == expected


def test_clause_opening_comparison_at_the_end_goes_to_the_trait_before_it() -> None:
    # "unlike X" after a comma closes the sentence: it compares what came before it
    # (English grammar, from memory); a real maize answer has this shape (tests/bench/
    # comparison_attach.py): "Reduces crop population and hence yield is reduced Only
    # does well when intercropped, unlike other varieties".
    texts = ["Yield is low, it does well when intercropped, unlike Zimbo."]
    where = [(0, "Yield is low"), (0, "intercropped")]
    assert _attribute_corpus(texts, "en", where, "Alvorina") == [
        ("VAR:A", None),
        ("VAR:A", "VAR:Z"),
    ]


def test_a_mention_holding_the_comparison_owns_it_and_an_implicit_one_does_not() -> None:
    # A labeled span may hold the whole comparison ("plus rapide que X", French grammar:
    # "plus ... que" is one comparative, from memory); a span over the whole sentence is
    # an implicit trait, which never took a comparison.
    texts = ["Elle est précoce, c'est plus rapide que Zimbo."]
    where = [(0, "précoce"), (0, "plus rapide que Zimbo")]
    assert _attribute_corpus(texts, "fr", where, "Alvorina") == [
        ("VAR:A", None),
        ("VAR:A", "VAR:Z"),
    ]
    assert _attribute_corpus(texts, "fr", [(0, texts[0])], "Alvorina") == [("VAR:A", None)]


def test_an_implicit_trait_takes_the_variety_its_sentence_names() -> None:
    # A new user's check: "+ tast d" on this sentence left the trait with no variety (the
    # whole-sentence span starts where the name does, so no variety stood before it),
    # and an earlier sentence's variety must not win over the sentence's own.
    texts = ["We grow Zimbo too.", "Alvorina is bitter, my children refuse it."]
    assert _attribute_corpus(texts, "en", [(1, texts[1])], "") == [("VAR:A", None)]
    # a comparison's reference inside the sentence is still no subject
    texts = ["Elle est précoce, c'est plus rapide que Zimbo."]
    assert _attribute_corpus(texts, "fr", [(0, texts[0])], "") == [(None, None)]


@pytest.mark.parametrize(
    ("text", "lang", "where", "expected"),
    [
        (
            "It has better taste and flavour than Zimbo.",
            "en",
            ["taste", "flavour"],
            [("VAR:A", "VAR:Z"), ("VAR:A", "VAR:Z")],
        ),
        (
            "Better yield, colour and taste than Zimbo.",
            "en",
            ["yield", "colour", "taste"],
            [("VAR:A", "VAR:Z")] * 3,
        ),
        (
            "Des grains plus gros et plus rouges que Zimbo.",
            "fr",
            ["gros", "rouges"],
            [("VAR:A", "VAR:Z"), ("VAR:A", "VAR:Z")],
        ),
        (
            "Tiene mejor sabor y color que el Zimbo.",
            "es",
            ["sabor", "color"],
            [("VAR:A", "VAR:Z"), ("VAR:A", "VAR:Z")],
        ),
        (
            "Tem mais raiz e mais folha do que a Clara.",
            "pt",
            ["raiz", "folha"],
            [("VAR:A", "VAR:C"), ("VAR:A", "VAR:C")],
        ),
        (
            "Ladha na harufu ni bora kuliko Zimbo.",
            "sw",
            ["Ladha", "harufu"],
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            "The broth is thick and sweeter than Zimbo.",
            "en",
            ["broth is thick", "sweeter"],
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            "The broth is thick and the taste is better than Zimbo.",
            "en",
            ["broth", "taste"],
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
        (
            "Good yield, better taste and flavour than Zimbo.",
            "en",
            ["yield", "taste", "flavour"],
            [("VAR:A", None), ("VAR:A", "VAR:Z"), ("VAR:A", "VAR:Z")],
        ),
        (
            "Le bouillon est épais et plus sucré que Zimbo.",
            "fr",
            ["bouillon est épais", "sucré"],
            [("VAR:A", None), ("VAR:A", "VAR:Z")],
        ),
    ],
    ids=[
        "en-and",
        "en-comma-list",
        "fr-plus-et-plus",
        "es-y",
        "pt-e-mais",
        "sw-comparative-after-left-to-the-owner",
        "en-comparative-is-the-second-trait",
        "en-clause-with-its-own-subject",
        "en-list-before-the-comparative",
        "fr-comparative-in-second-conjunct",
    ],
)
def test_coordinated_traits_share_one_comparison(text, lang, where, expected) -> None:
    # A comparative governs the whole coordination it stands before: "better [taste and
    # flavour] than X", "plus gros et plus rouges que X" (English, French, Spanish and
    # Portuguese grammar, from memory). When the comparative word is the last conjunct
    # itself ("thick and sweeter than X"), the second conjunct is a clause with its own
    # subject ("the taste is better than X"), or the comparative follows the coordination
    # (Swahili "ladha na harufu ni bora kuliko X", which without a parse reads like
    # "mchuzi ni mzito na ladha ni tamu zaidi kuliko X", two clauses), only the last
    # trait is compared: the rule's known miss is the first of these Swahili sentences.
    assert _attribute_corpus([text], lang, [(0, w) for w in where], "Alvorina") == expected
