"""Tests of extractor.models.stance_rules: weak evidence against the question's lean."""

from __future__ import annotations

from collections import Counter

import pytest

from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import cue_evidence, cue_rule, rule_stance
from extractor.types import Sentence, Span
from tests import maize
from tests.models.toy import CUES
from tests.models.toy import features as _features

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
