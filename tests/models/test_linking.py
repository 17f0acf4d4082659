"""Tests of extractor.models.linking: exact, fuzzy and context linking, threshold, persistence."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
import snowballstemmer
from sklearn.base import clone

from extractor.errors import InputError, ModelError, NotFittedError
from extractor.models.link_scoring import Alias, Example, Scorer
from extractor.models.linking import (
    DEFAULT_WEIGHTS,
    PHRASE_THRESHOLD,
    ConceptLinker,
    choose_threshold,
    link_scores,
    linking_quality,
)
from extractor.nlp.dictionary import Dictionary, build_dictionary
from extractor.nlp.neighbours import neighbour_phrases
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span
from tests import maize
from tests.models.toy import ALIASES
from tests.models.toy import mention as _mention


@pytest.fixture(scope="module")
def cold() -> ConceptLinker:
    return ConceptLinker().fit([], ALIASES)


@pytest.mark.parametrize(
    ("text", "term", "lang", "concept"),
    [
        ("The cooking times are long.", "cooking times", "en", "TX:01"),
        ("Le temps de cuisson est court.", "temps de cuisson", "fr", "TX:01"),
        ("El tiempo de coccion es corto.", "tiempo de coccion", "es", "TX:01"),
        ("Seed sizes vary a lot.", "Seed sizes", "en", "TX:02"),
        ("La taille des grains est bonne.", "taille des grains", "fr", "TX:02"),
        ("Buena tolerancia a la sequía.", "tolerancia a la sequía", "es", "TX:03"),
    ],
    ids=["en-inflected", "fr", "es-no-accent", "en-plural", "fr-size", "es-drought"],
)
def test_link_exact_alias_after_normalisation(
    cold: ConceptLinker, text: str, term: str, lang: str, concept: str
) -> None:
    result = cold.link(*_mention(text, term, lang))
    assert result.concept == concept
    assert result.probability >= 0.9


@pytest.mark.parametrize(
    ("text", "term", "lang", "concept"),
    [
        ("The cookin tme is short.", "cookin tme", "en", "TX:01"),
        ("La taile des graines est petite.", "taile des graines", "fr", "TX:02"),
        ("Tiene tolerancia a sequias.", "tolerancia a sequias", "es", "TX:03"),
    ],
    ids=["en-typos", "fr-typos", "es-missing-article"],
)
def test_link_fuzzy_match_in_any_language(
    cold: ConceptLinker, text: str, term: str, lang: str, concept: str
) -> None:
    result = cold.link(*_mention(text, term, lang))
    assert result.concept == concept
    assert cold.threshold <= result.probability < 0.9


def test_link_probability_orders_exact_over_fuzzy_over_unrelated(cold: ConceptLinker) -> None:
    exact = cold.link(*_mention("The cooking time is short.", "cooking time")).probability
    fuzzy = cold.link(*_mention("The cookin tme is short.", "cookin tme")).probability
    unrelated = cold.link(*_mention("The flowers are purple.", "flowers")).probability
    assert exact > fuzzy > unrelated


def test_link_below_threshold_is_unlinked_but_keeps_candidates(cold: ConceptLinker) -> None:
    sentence, span = _mention("The flowers are purple.", "flowers")
    result = cold.link(sentence, span)
    assert result.concept is None
    assert result.candidates and result.probability < cold.threshold
    assert ConceptLinker(threshold=0.0).fit([], ALIASES).link(sentence, span).concept is not None


def test_link_gold_always_wins(cold: ConceptLinker) -> None:
    result = cold.link(*_mention("The cooking time is short.", "cooking time"), gold="TX:03")
    assert result == ("TX:03", 1.0, [("TX:03", 1.0)])


def test_link_many_matches_link_one_by_one(cold: ConceptLinker) -> None:
    items = [
        _mention("The cooking time is short.", "cooking time"),
        _mention("The cookin tme is short.", "cookin tme"),
        _mention("The flowers are purple.", "flowers"),
    ]
    assert cold.link_many(items) == [cold.link(s, sp) for s, sp in items]


def test_link_many_rejects_gold_of_other_length(cold: ConceptLinker) -> None:
    with pytest.raises(InputError, match="one per mention"):
        cold.link_many([_mention("Seed size.", "Seed size")], gold=["TX:01", "TX:02"])


def test_link_unfitted_raises() -> None:
    with pytest.raises(NotFittedError, match="not been fitted"):
        ConceptLinker().link(*_mention("Seed size.", "Seed size"))


@pytest.mark.parametrize(
    ("aliases", "message"),
    [([], "at least one alias"), ([("TX:01", " ", "en")], "missing its concept ID or its text")],
    ids=["nothing", "empty-alias"],
)
def test_fit_rejects_bad_aliases(aliases: list, message: str) -> None:
    with pytest.raises(InputError, match=message):
        ConceptLinker().fit([], aliases)


# ------------------------------------------------------------------ learning from examples

_PHRASES = [
    ("TX:01", "boils quickly", "These beans boils quickly so we save firewood."),
    ("TX:01", "is ready fast", "The pot is ready fast and the children eat early."),
    ("TX:01", "takes forever", "It takes forever on the fire, we burn much firewood."),
    ("TX:02", "big grains", "Buyers ask for big grains at the market."),
    ("TX:02", "fat seeds", "The fat seeds fill the measuring tin quickly."),
    ("TX:02", "tiny beans", "Traders pay less for tiny beans in the tin."),
    ("TX:03", "survives the dry spell", "It survives the dry spell when rains stop."),
    ("TX:03", "stays green without rain", "It stays green without rain for weeks."),
    ("TX:03", "wilts early", "When the rains stop it wilts early in the field."),
]


def _examples(copies: int = 4) -> list[tuple[Sentence, Span, str]]:
    out = []
    for n in range(copies):
        for k, (concept, term, text) in enumerate(_PHRASES):
            sentence, span = _mention(f"{'Yes. ' * n}{text}", term, sid=n * 100 + k)
            out.append((sentence, span, concept))
    return out


def test_fit_learns_phrasings_from_examples() -> None:
    sentence, span = _mention("Mine takes forever, honestly.", "takes forever")
    assert ConceptLinker().fit([], ALIASES).link(sentence, span).concept is None
    trained = ConceptLinker().fit(_examples(1), ALIASES)
    result = trained.link(sentence, span)
    assert result.concept == "TX:01" and result.probability >= 0.9


def test_fit_returns_self_and_fits_combiner_with_enough_examples() -> None:
    linker = ConceptLinker()
    assert linker.fit(_examples(4), ALIASES) is linker
    assert linker.weights_ != list(DEFAULT_WEIGHTS)
    exact = linker.link(*_mention("The cooking time is short.", "cooking time")).probability
    fuzzy = linker.link(*_mention("The cookin tme is short.", "cookin tme")).probability
    assert exact > fuzzy


def test_dictionary_links_alone_never_fit_the_combiner() -> None:
    # Dictionary links are exact alias matches by construction; fitted on them alone
    # the combiner would trust nothing but exact matches (DEVELOPERS.md, "Concept lists
    # in one language": gold French/Spanish spans of the demo linked right 127 -> 175).
    examples = _examples(4)
    assert ConceptLinker().fit(examples, ALIASES, gold_examples=0).weights_ == list(DEFAULT_WEIGHTS)
    assert ConceptLinker().fit(examples, ALIASES, gold_examples=29).weights_ == list(
        DEFAULT_WEIGHTS
    )
    assert ConceptLinker().fit(examples, ALIASES, gold_examples=30).weights_ != list(
        DEFAULT_WEIGHTS
    )
    every = ConceptLinker().fit(examples, ALIASES, gold_examples=len(examples)).weights_
    assert every == ConceptLinker().fit(examples, ALIASES).weights_


def test_choose_threshold_separates_right_links_from_non_concepts(cold: ConceptLinker) -> None:
    held_out = [
        (*_mention("The cooking time is short.", "cooking time"), "TX:01"),
        (*_mention("La taile des graines est petite.", "taile des graines", "fr"), "TX:02"),
        (*_mention("The flowers are purple.", "flowers"), None),
        (*_mention("The seed coat shines.", "seed coat"), None),
    ]
    scores = link_scores(cold, held_out)
    threshold = choose_threshold(cold, held_out, metric="accuracy")
    assert max(p for _, p, g in scores if g is None) < threshold
    assert threshold <= min(p for _, p, g in scores if g is not None)
    assert linking_quality(scores, threshold, "accuracy") == 1.0
    assert cold.threshold == ConceptLinker().threshold  # the linker is left unchanged


def test_choose_threshold_rejects_unknown_metric(cold: ConceptLinker) -> None:
    with pytest.raises(InputError, match="'metric'"):
        choose_threshold(cold, [(*_mention("Seed size.", "Seed size"), "TX:02")], metric="auc")


# ------------------------------------------------------------------ persistence


def test_save_load_round_trip(tmp_path: Path) -> None:
    linker = ConceptLinker(threshold=0.4).fit(_examples(4), ALIASES)
    linker.save(tmp_path / "linker")
    loaded = ConceptLinker.load(tmp_path / "linker")
    items = [(s, sp) for s, sp, _ in _examples(1)] + [_mention("The cookin tme.", "cookin tme")]
    assert loaded.link_many(items) == linker.link_many(items)
    assert loaded.get_params() == linker.get_params()


def test_save_load_cold_linker(tmp_path: Path, cold: ConceptLinker) -> None:
    cold.save(tmp_path / "linker")
    item = _mention("The cookin tme.", "cookin tme")
    assert ConceptLinker.load(tmp_path / "linker").link(*item) == cold.link(*item)


def test_load_missing_raises(tmp_path: Path) -> None:
    with pytest.raises(ModelError, match="No readable concept linker"):
        ConceptLinker.load(tmp_path)


def test_clone_gives_an_unfitted_linker_with_the_same_params(cold: ConceptLinker) -> None:
    # scikit-learn's clone is the outside reference for the estimator contract: it
    # rebuilds an estimator from get_params() alone and checks that __init__ stored them.
    linker = ConceptLinker(
        threshold=0.4, C=2.0, folds=3, seed=7, phrase_threshold=0.3, read_noun_phrase=False
    )
    assert clone(linker).get_params() == {
        "C": 2.0,
        "folds": 3,
        "seed": 7,
        "threshold": 0.4,
        "space": "none",
        "phrase_threshold": 0.3,
        "read_noun_phrase": False,
    }
    assert cold.is_fitted and not clone(cold).is_fitted


_SEEDED_FIT = """
from tests.models.test_linking import ALIASES, _examples, _mention
from extractor.models.linking import ConceptLinker
linker = ConceptLinker().fit(_examples(4), ALIASES)
print(repr(list(linker.weights_)))
print(repr(linker.link(*_mention("The cookin tme is short.", "cookin tme")).probability))
"""


def test_fit_gives_the_same_model_whatever_the_hash_seed() -> None:
    # Python randomises str hashing per process (PYTHONHASHSEED, see the Python docs on
    # object.__hash__): a model must not depend on set iteration order, or two runs of the
    # same study give different probabilities.
    outputs = []
    for seed in ("1", "2"):
        done = subprocess.run(
            [sys.executable, "-c", _SEEDED_FIT],
            capture_output=True,
            text=True,
            check=True,
            env={**os.environ, "PYTHONHASHSEED": seed},
            cwd=Path(__file__).resolve().parents[2],
        )
        outputs.append(done.stdout)
    assert outputs[0] == outputs[1]


def test_verb_of_liking_gets_no_exact_link_but_the_noun_does() -> None:
    # Portuguese "gosto" is "taste" after a determiner and "I like" otherwise.
    scorer = Scorer.build([("C:taste", "gosto", "pt"), ("C:taste", "taste", "en")], None)
    assert scorer.exact(Sentence(1, "Gosto da cor.", "pt"), Span(0, 5)) == set()
    assert scorer.exact(Sentence(2, "O gosto é bom.", "pt"), Span(2, 7)) == {"C:taste"}


def test_dictionary_links_lend_no_words_as_forms_but_the_analysts_do() -> None:
    # Snowball's Spanish stemmer (the snowballstemmer package, a port of the reference
    # algorithms) gives "amarillo" (yellow) and "amarillamiento" (yellowing, a disease
    # sign) one stem, so the dictionary links the colour word to the disease. Were its
    # words a form of the disease, the sentence would meet itself: fuzzy score 1.
    stem = snowballstemmer.stemmer("spanish").stemWord
    assert stem("amarillo") == stem("amarillamiento")
    aliases = [("TX:10", "amarillamiento", "es"), ("TX:11", "color", "es")]
    sentence = Sentence(1, "El grano es amarillo.", "es")
    link = [(sentence, Span(12, 20), "TX:10")]
    from_dictionary = ConceptLinker().fit(link, aliases, gold_examples=0)
    assert from_dictionary.example_forms_ == []
    assert from_dictionary.scorer_.fuzzy(["amarillo"])[0][0] < 1.0
    from_analyst = ConceptLinker().fit(link, aliases, gold_examples=1)
    assert from_analyst.example_forms_ == [("TX:10", "amarillo", "es")]
    assert from_analyst.scorer_.fuzzy(["amarillo"])[0][0] == pytest.approx(1.0)


@pytest.mark.parametrize(
    ("text", "word", "lang", "phrases"),
    [
        ("We eat with sweet potatoes.", "sweet", "en", ["sweet potatoes"]),
        ("Je la cuis avec les feuilles de patate douce.", "douce", "fr", ["patate douce"]),
        ("Lo hago en la olla, le meto sal y ya.", "sal", "es", ["meto sal"]),
        ("Comemos com batata doce.", "doce", "pt", ["batata doce"]),
        ("Tunakula na viazi vitamu.", "vitamu", "sw", ["viazi vitamu"]),
        ("I only sell seed, fertiliser and sprays.", "seed", "en", ["sell seed"]),
        ("The taste is good.", "taste", "en", []),
        ("The cooking time is short.", "cooking time", "en", []),
    ],
    ids=["en-after", "fr-before", "es-verb", "pt-before", "sw-before", "comma", "stop", "two"],
)
def test_neighbour_phrases_take_each_adjacent_content_word(
    text: str, word: str, lang: str, phrases: list[str]
) -> None:
    sentence, span = _mention(text, word, lang)
    assert [text[w.span.start : w.span.end] for w in neighbour_phrases(sentence, span)] == phrases


_PLATE = [
    ("TX:05", "plato", "El grano se ve lindo en el plato.", "es"),
    ("TX:05", "plate", "It looks nice on the plate with rice.", "en"),
    ("TX:04", "taste", "The taste is good when it is fresh.", "en"),
]


def _plate_linker(phrase_threshold: float = PHRASE_THRESHOLD) -> ConceptLinker:
    examples = list(_examples(4))
    for n in range(4):
        for concept, term, text, lang in _PLATE:
            sentence, span = _mention(f"{'Yes. ' * n}{text}", term, lang)
            examples.append((sentence, span, concept))
    aliases = [*ALIASES, ("TX:05", "plato", "es"), ("TX:05", "plate", "en")]
    aliases.append(("TX:04", "taste", "en"))
    return ConceptLinker(phrase_threshold=phrase_threshold).fit(examples, aliases)


def test_one_word_link_that_the_phrase_does_not_keep_is_unlinked() -> None:
    # "plata" (money) meets the alias "plato" (plate) by its spelling alone; read with
    # its neighbour ("perder plata") the phrase is no longer the plate's.
    mention = _mention("El gorgojo me hace perder plata.", "plata", "es")
    unchecked = _plate_linker(phrase_threshold=0.0).link(*mention)
    assert unchecked.concept == "TX:05"
    checked = _plate_linker().link(*mention)
    assert checked.concept is None
    assert checked.probability < 0.5
    assert checked.candidates == unchecked.candidates


def test_phrase_check_leaves_lone_words_gold_and_unseen_concepts() -> None:
    linker = _plate_linker()
    lone = linker.link(*_mention("Se ve lindo en el plato.", "plato", "es"))
    assert lone.concept == "TX:05"  # no content word beside it: nothing to check
    gold = linker.link(*_mention("El gorgojo me hace perder plata.", "plata", "es"), gold="TX:05")
    assert gold.concept == "TX:05"
    # TX:06 has an alias but no linked example: the context classifier cannot read it.
    aliases = [*ALIASES, ("TX:06", "sweet", "en")]
    unseen = ConceptLinker().fit(_examples(4), aliases)
    assert "TX:06" not in unseen.scorer_.context_classes
    assert unseen.link(*_mention("We eat with sweet potatoes.", "sweet")).concept == "TX:06"


def test_phrase_check_does_not_read_a_neighbour_of_the_concept_list() -> None:
    # "taste" is an alias of another concept: beside it, "plata" is not read in a phrase.
    mention = _mention("Es la plata taste.", "plata", "es")
    unchecked = _plate_linker(phrase_threshold=0.0).link(*mention)
    assert unchecked.concept == "TX:05"
    assert _plate_linker().link(*mention) == unchecked
    alone = _mention("El gorgojo me hace perder plata.", "plata", "es")
    assert _plate_linker().link(*alone).concept is None


def _maize_at_zero_labels() -> tuple[
    list[Sentence], list[dict[str, Any]], list[Alias], Dictionary, list[Example]
]:
    """The maize corpus, our labels, its aliases, the dictionary and its links in all answers.

    The links are what a linker is fitted on at 0 labels (tests/maize.py loads the data).
    """
    loaded = maize.load_workspace()
    assert loaded is not None
    corpus, labelled, aliases = loaded
    dictionary = build_dictionary(aliases)
    links = [(s, m, m.concept) for s in corpus for m in dictionary.match(s.text, s.lang)]
    return corpus, labelled, aliases, dictionary, links


def _word_count(sentence: Sentence, start: int, end: int) -> int:
    """How many of the sentence's tokens overlap the characters start..end."""
    return sum(1 for a, b in tokenize(sentence.text, sentence.lang) if a < end and b > start)


@pytest.mark.skipif(maize.load_workspace() is None, reason=maize.SKIP_REASON)
def test_phrase_check_keeps_every_labelled_maize_link() -> None:
    # Real farmer answers (maize concept-testing data, CC BY 4.0; 4,800 English answers)
    # and our labels on 300 of them (tests/maize.py): a linker fitted on the dictionary's
    # links in all answers, as at 0 labels, links the labelled mentions; the phrase
    # readings (the check and the noun phrase) must not take away a right link (111 of
    # the 406 mentions are one word).
    corpus, labelled, aliases, dictionary, links = _maize_at_zero_labels()
    items = [(corpus[g["row"]], Span(**sp)) for g in labelled for sp in g["spans"]]
    gold = [span.concept for _, span in items]
    one_word = [_word_count(s, sp.start, sp.end) == 1 for s, sp in items]
    assert sum(one_word) > 100
    plain = ConceptLinker(phrase_threshold=0.0, read_noun_phrase=False)
    plain.fit(links, aliases, gold_examples=0)
    checked = ConceptLinker().fit(links, aliases, gold_examples=0)
    right_plain = [r.concept == g for r, g in zip(plain.link_many(items), gold, strict=True)]
    right_checked = [r.concept == g for r, g in zip(checked.link_many(items), gold, strict=True)]
    assert sum(right_plain) > 300
    assert right_checked == right_plain


@pytest.mark.skipif(maize.load_workspace() is None, reason=maize.SKIP_REASON)
def test_noun_phrase_reading_relinks_maize_answers_as_labelled() -> None:
    # Real farmer answers (maize concept-testing data, CC BY 4.0) and our labels on 300
    # of them (tests/maize.py). A linker fitted on the dictionary's links in all 4,800
    # answers (as at 0 labels) links every one-word dictionary match of the labelled
    # answers with the noun-phrase reading off and on. Where it changes a link and our
    # labels mark a mention there, the new link is the labelled concept: "market for
    # green maize", "Sell Green Maize" are green maize use, not market demand.
    corpus, labelled, aliases, dictionary, links = _maize_at_zero_labels()
    items, gold = [], []
    for g in labelled:
        sentence, spans = corpus[g["row"]], [Span(**sp) for sp in g["spans"]]
        for m in dictionary.match(sentence.text, sentence.lang):
            if _word_count(sentence, m.start, m.end) == 1:
                items.append((sentence, Span(m.start, m.end)))
                gold.append(
                    next(
                        (sp.concept for sp in spans if sp.start < m.end and sp.end > m.start), None
                    )
                )
    linker = ConceptLinker(read_noun_phrase=False).fit(links, aliases, gold_examples=0)
    off = linker.link_many(items)
    linker.read_noun_phrase = True
    on = linker.link_many(items)
    moved = [
        (a.concept, b.concept, g)
        for a, b, g in zip(off, on, gold, strict=True)
        if a.concept != b.concept
    ]
    labelled_moves = [(a, b, g) for a, b, g in moved if g is not None]
    assert len(items) > 200
    assert len(labelled_moves) >= 3
    assert all(b == g for _, b, g in labelled_moves)
    assert {(a, b) for a, b, _ in labelled_moves} == {("MZT:10", "MZT:14")}
    relinked = [r for r, before in zip(on, off, strict=True) if r.concept != before.concept]
    assert all(r.candidates[0] == (r.concept, r.probability) for r in relinked)
