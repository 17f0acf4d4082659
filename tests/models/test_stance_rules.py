"""Tests of extractor.models.stance_rules: wishes in the conditional mood, weak evidence."""

from __future__ import annotations

from collections import Counter

import pytest

from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import cue_evidence, cue_rule, rule_stance
from extractor.types import Sentence, Span
from tests import maize
from tests.models.toy import CUES
from tests.models.toy import features as _features

# ------------------------------------------------------------------ conditional mood
# A good word after a conditional copula praises what is hoped for, not what is there.
# Grammar from memory: the English "would" conditional (Quirk et al., A Comprehensive
# Grammar of the English Language, hypothetical conditions), the French conditionnel
# ("ce serait parfait", Grevisse, Le Bon Usage), the Spanish condicional ("sería perfecto",
# RAE, Nueva gramática), the Portuguese futuro do pretérito ("seria perfeito"), Swahili
# -nge- ("ingekuwa nzuri"). Invented sentences about invented varieties.


@pytest.mark.parametrize(
    ("text", "term", "lang"),
    [
        ("If they can make it stand the dry months it would be perfect.", "dry months", "en"),
        ("It would be perfect if it cooked faster.", "cooked faster", "en"),
        ("Ce serait parfait si elle cuisait plus vite.", "cuisait plus vite", "fr"),
        ("Sería perfecto si se cocinara rápido.", "cocinara rápido", "es"),
        ("Seria perfeito se cozinhasse rápido.", "cozinhasse rápido", "pt"),
        ("Ingekuwa nzuri kama ingepika haraka.", "ingepika haraka", "sw"),
    ],
    ids=["en-would-be", "en-would-be-before", "fr-serait", "es-seria", "pt-seria", "sw-nge"],
)
def test_a_good_word_in_the_conditional_is_a_wish(text: str, term: str, lang: str) -> None:
    assert rule_stance(_features(text, term, lang))[0] == "wanted"


@pytest.mark.parametrize(
    ("text", "term", "lang"),
    [
        ("Si elle restait tendre, ce serait parfait.", "restait tendre", "fr"),
        ("Si fuera más grande, sería perfecto.", "grande", "es"),
        ("If it kept longer in the store, it would be great.", "kept longer", "en"),
    ],
    ids=["fr-si", "es-si", "en-if"],
)
def test_a_wish_after_a_condition_is_a_wish_for_what_the_condition_holds(
    text: str, term: str, lang: str
) -> None:
    features = _features(text, term, lang)
    assert features.get("wanted_if")
    assert rule_stance(features)[0] == "wanted"


@pytest.mark.parametrize(
    ("text", "term", "lang", "expected"),
    [
        ("I would recommend it, it cooks fast.", "cooks fast", "en", "liked"),
        ("The yield is also good if rain comes on time.", "yield", "en", "liked"),
        ("It cooks fast, that is perfect.", "cooks fast", "en", "liked"),
    ],
    ids=["en-would-without-copula", "en-if-after-the-span", "en-indicative"],
)
def test_the_indicative_and_a_condition_after_the_span_stay_as_they_were(
    text: str, term: str, lang: str, expected: str
) -> None:
    features = _features(text, term, lang)
    assert not features.get("wanted_if")
    assert rule_stance(features)[0] == expected


@pytest.mark.parametrize(
    ("text", "term", "lang"),
    [
        ("Pourvu qu'elle résiste à la sécheresse.", "sécheresse", "fr"),
        ("Quem me dera um grão maior.", "grão maior", "pt"),
        ("Laiti ingepika haraka.", "ingepika haraka", "sw"),
    ],
    ids=["fr-pourvu-que", "pt-quem-me-dera", "sw-laiti"],
)
def test_optative_words_are_wishes(text: str, term: str, lang: str) -> None:
    # Optative openers, from memory: French "pourvu que" + subjunctive, Portuguese "quem me
    # dera", Swahili "laiti" ("if only").
    assert rule_stance(_features(text, term, lang))[0] == "wanted"


# ------------------------------------------------------------------ weak words, the question's lean

DISLIKES = "What do you not like about it?"
LIKES = "Why do you grow this variety?"


@pytest.mark.parametrize(
    ("text", "term", "lang", "question", "expected"),
    [
        ("At the market they say it is cheap.", "cheap", "en", DISLIKES, "disliked"),
        ("The harvest is small compared to Tolvane.", "harvest", "en", DISLIKES, "disliked"),
        ("Les insectes ne le touchent presque pas.", "insectes", "fr", LIKES, "liked"),
        ("La semilla buena casi no se encuentra.", "semilla buena", "es", DISLIKES, "disliked"),
    ],
    ids=["en-own-word", "en-bare-comparison", "fr-segment", "es-own-word"],
)
def test_weak_words_follow_a_question_that_leans_one_way(
    text: str, term: str, lang: str, question: str, expected: str
) -> None:
    features = _features(text, term, lang, question)
    assert cue_rule(features)[0] != expected  # the words alone say otherwise
    assert rule_stance(features)[0] == expected


@pytest.mark.parametrize(
    ("text", "term", "question", "expected"),
    [
        ("The taste is good.", "taste", DISLIKES, "liked"),
        ("It is cheap.", "cheap", None, "liked"),
        ("It is cheap.", "cheap", "Which new variety would you try, and why?", "wanted"),
    ],
    ids=["clause-word-stays", "no-question", "wish-question"],
)
def test_words_in_the_clause_and_other_questions_keep_their_reading(
    text: str, term: str, question: str | None, expected: str
) -> None:
    assert rule_stance(_features(text, term, "en", question))[0] == expected


def test_weak_words_against_the_question_mostly_follow_it_in_real_maize_answers() -> None:
    # Real farmer answers (maize concept testing, Kenya and Uganda, CC BY 4.0; read in place
    # by tests/maize.py, which says how we labelled 300 of them). Measured: of the labelled
    # mentions whose weak words (the span's own cue word, the contrast segment, a bare
    # comparison) go against the codebook's lean, gold follows the lean for 7 of 8 (before
    # the rule, the rules read 1 of the 8 right: "it uses less fertiliser", asked why it was
    # least preferred, is liked in gold).
    gold = maize.load_maize_gold()
    if gold is None:
        pytest.skip(maize.SKIP_REASON)
    lean_of = {"reason_preferred": "liked", "reason_lesspreferred": "disliked"}
    found: Counter[bool] = Counter()
    for n, g in enumerate(gold):
        sentence = Sentence(n, g["text"], "en", g["question"])
        for s in g["spans"]:
            f = stance_features(sentence, Span(s["start"], s["end"]), CUES, maize.CODEBOOK)
            words, _, weak = cue_evidence(f)
            lean = lean_of[g["question"]]
            if weak and words in ("liked", "disliked") and words != lean:
                if f.get("prefer_other"):
                    continue  # a preference in reply to the question on faults: a wish
                assert rule_stance(f)[0] == lean
                found[s["stance"] == lean] += 1
    assert sum(found.values()) >= 6
    assert found[True] >= 0.8 * sum(found.values())
