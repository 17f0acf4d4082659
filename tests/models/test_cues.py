"""Tests of extractor.models.cues: cue matching and the cold-start rules over its features."""

from __future__ import annotations

import pytest

from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import rule_stance
from tests.models.toy import CUES
from tests.models.toy import features as _features
from tests.models.toy import mention as _mention

# ------------------------------------------------------------------ cue lexicon


@pytest.mark.parametrize(
    ("text", "term", "lang", "expected"),
    [
        ("The sacks were full of weevils.", "sacks", "en", "disliked"),
        ("Asi no le entra el gorgojo.", "gorgojo", "es", "liked"),
        ("Les charançons mangent tout.", "mangent", "fr", "disliked"),
    ],
    ids=["en-weevil*", "es-negated-gorgojo*", "fr-charancon*"],
)
def test_wildcard_cue_matches_words_starting_with_its_prefix(
    text: str, term: str, lang: str, expected: str
) -> None:
    # The lexicon's "weevil*", "gorgojo*", "charançon*" end in a wildcard that the
    # tokenizer splits off; they must still match "weevils", "gorgojo", "charançons".
    features = stance_features(*_mention(text, term, lang), CUES)
    assert rule_stance(features)[0] == expected


# ------------------------------------------------------------------ cold-start rules


@pytest.mark.parametrize(
    ("text", "term", "lang", "question", "expected"),
    [
        ("It does not rot in the store.", "rot", "en", None, "liked"),
        ("The seeds are too small.", "small", "en", None, "disliked"),
        ("Les grains sont trop petits.", "petits", "fr", None, "disliked"),
        ("Los granos son demasiado pequeños.", "pequeños", "es", None, "disliked"),
        ("I wish the pods were longer.", "pods", "en", None, "wanted"),
        ("J'aimerais une cuisson plus rapide.", "cuisson", "fr", None, "wanted"),
        ("Il faudrait des grains plus gros.", "grains", "fr", None, "wanted"),
        ("Ojalá el grano fuera más grande.", "grano", "es", None, "wanted"),
        ("Quisiera un sabor más dulce.", "sabor", "es", None, "wanted"),
        ("The taste is good but the pods split.", "taste", "en", None, "liked"),
        ("The taste is good but the pods split.", "pods", "en", None, "disliked"),
        ("Le goût est bon mais la cuisson est lente.", "cuisson", "fr", None, "disliked"),
        (
            "El sabor es bueno pero tarda en cocinarse.",
            "tarda en cocinarse",
            "es",
            None,
            "disliked",
        ),
        ("Its taste is not good.", "taste", "en", None, "disliked"),
        ("Its seeds are bigger than those of Kivuli.", "seeds", "en", None, "liked"),
        ("Small seeds.", "seeds", "en", "What do you dislike about Ruvaro?", "disliked"),
        ("Small seeds.", "seeds", "en", "What would you change in Ruvaro?", "wanted"),
        ("Small seeds.", "seeds", "en", "Why do you grow Ruvaro?", "liked"),
        ("Small seeds.", "seeds", "en", None, "neutral"),
        ("Des grains rouges.", "grains", "fr", "Qu'est-ce que vous n'aimez pas ?", "disliked"),
        ("Whatever is cheap.", "cheap", "en", "Which new variety would you try?", "wanted"),
        ("Whatever is cheap.", "cheap", "en", "Why do you buy Ruvaro?", "liked"),
        ("One that does not rot.", "rot", "en", "Which new variety would you try?", "wanted"),
        ("The grains are too small.", "small", "en", "What would you change?", "disliked"),
    ],
    ids=[
        "negated-fault",
        "excess-en",
        "excess-fr",
        "excess-es",
        "wish-en",
        "wish-fr",
        "il-faudrait",
        "ojala",
        "quisiera",
        "contrast-first-side",
        "contrast-second-side",
        "contrast-fr",
        "contrast-es",
        "negated-cue",
        "comparison",
        "question-dislike",
        "question-change",
        "question-why-grow",
        "no-cue",
        "question-fr-negated-like",
        "praise-in-reply-to-wish",
        "praise-in-reply-to-why",
        "negated-fault-in-reply-to-wish",
        "excess-in-reply-to-wish",
    ],
)
def test_rule_stance_reads_cues(
    text: str, term: str, lang: str, question: str | None, expected: str
) -> None:
    stance, confidence = rule_stance(_features(text, term, lang, question))
    assert stance == expected
    assert 0.0 < confidence < 1.0


def test_rule_stance_is_more_confident_with_a_cue_than_from_the_question_alone() -> None:
    cue = rule_stance(_features("The seeds are too small.", "seeds"))[1]
    question = rule_stance(_features("Small seeds.", "seeds", question="What do you dislike?"))[1]
    assert cue > question
